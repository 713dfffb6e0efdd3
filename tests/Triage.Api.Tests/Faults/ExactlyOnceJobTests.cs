using System.Net;
using System.Text.Json;
using Dapper;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Jobs;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;
using Triage.Storage.Jobs;

namespace Triage.Api.Tests.Faults;

/// <summary>A proxied host with one more job kind that takes its time and reports progress.</summary>
public sealed class ProxiedJobsFactory : ProxiedDatabaseFactory
{
    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.ConfigureTestServices(s => s.AddSingleton<IJobHandler, SlowHandler>());
    }

    private sealed class SlowHandler : IJobHandler
    {
        public string Kind => "test-slow";

        public async Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct)
        {
            var ms = JsonDocument.Parse(run.InputJson).RootElement.GetProperty("ms").GetInt32();
            for (var i = 1; i <= 20; i++)
            {
                await Task.Delay(ms / 20, ct);
                progress.Report(new JobProgress(i / 20.0, $"step {i}"));
            }
            return JsonSerializer.Serialize(new { slept = ms });
        }
    }
}

/// <summary>
/// A job's result commits once: a heartbeat that cannot be written never fails or strands a
/// finished job; the database vanishing under a plan job ends in exactly one version; a job
/// that runs again after its completion was lost (a kill between commit and completion) finds
/// its version instead of adding a second; plans and calibrations carry their job's id.
/// </summary>
public sealed class ExactlyOnceJobTests(ProxiedJobsFactory api) : IClassFixture<ProxiedJobsFactory>
{
    private async Task<(string Status, double Progress, int Attempts)> JobStateAsync(Guid id)
    {
        await using var conn = await api.Direct.OpenConnectionAsync();
        return await conn.QuerySingleAsync<(string, double, int)>("SELECT status, progress, attempts FROM jobs WHERE id = @id", new { id });
    }

    /// <summary>
    /// As after a kill -9 between the result's commit and the job's completion (old code): still "running", heartbeat stale.
    /// The worker's own run of the job must be over first (a kill leaves no runner behind): it runs jobs one at a time, so a
    /// short job queued after it and seen finished means the first run has returned, and its closing write cannot land on
    /// the state staged here.
    /// </summary>
    private async Task LoseCompletionAsync(Guid jobId)
    {
        var store = api.Services.GetRequiredService<JobStore>();
        var marker = await store.EnqueueAsync("test-slow", """{"ms": 20}""", null, DateTimeOffset.UtcNow);
        await WaitForAsync(marker, s => s.Status == "succeeded");
        await using var conn = await api.Direct.OpenConnectionAsync();
        await conn.ExecuteAsync("""
            UPDATE jobs SET status = 'running', result = NULL, finished_at = NULL, attempts = 1, heartbeat_at = now() - interval '2 hours'
            WHERE id = @jobId
            """, new { jobId });
    }

    private async Task WaitForAsync(Guid id, Func<(string Status, double Progress, int Attempts), bool> condition, int seconds = 60)
    {
        for (var i = 0; i < seconds * 20; i++)
        {
            if (condition(await JobStateAsync(id)))
            {
                return;
            }
            await Task.Delay(50);
        }
        throw new TimeoutException($"job {id} never reached the awaited state; last {await JobStateAsync(id)}");
    }

    [Fact]
    public async Task HeartbeatWritesFailing_MidJob_NeverFailOrStrandTheFinishedJob()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var store = api.Services.GetRequiredService<JobStore>();
        var id = await store.EnqueueAsync("test-slow", """{"ms": 4000}""", null, DateTimeOffset.UtcNow);
        await WaitForAsync(id, s => s is { Status: "running", Progress: > 0.1 });

        // Two to three heartbeats fail while the database is away; the work itself goes on.
        api.Proxy.Cut();
        await Task.Delay(2500);
        api.Proxy.Restore();

        var job = await DemoNetwork.WaitForJobAsync(client, $"/api/jobs/{id}", seconds: 60);
        Assert.Equal(4000, job.GetProperty("result").GetProperty("slept").GetInt32());
        Assert.Equal(1, job.GetProperty("attempts").GetInt32());
    }

    [Fact]
    public async Task PlanJob_DatabaseCutWhileItRuns_EndsWithExactlyOneVersion_CarryingItsJobId()
    {
        var (scheduler, _) = await DemoNetwork.ArrangeAsync(api, 60);
        var accepted = await scheduler.PostAsync("/api/plans", Bodies.Raw("""{"night":"2026-12-05","timeLimitSeconds":2}"""));
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobId = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobId").GetGuid();
        await WaitForAsync(jobId, s => s.Status == "running");

        api.Proxy.Cut();
        await Task.Delay(2000);
        api.Proxy.Restore();

        var job = await DemoNetwork.WaitForJobAsync(scheduler, $"/api/jobs/{jobId}", seconds: 120);
        Assert.Equal(1, job.GetProperty("result").GetProperty("version").GetInt32());
        var versions = JsonDocument.Parse(await scheduler.GetStringAsync("/api/plans/2026-12-05/versions")).RootElement;
        var only = Assert.Single(versions.EnumerateArray());
        Assert.Equal(jobId, only.GetProperty("jobId").GetGuid());
        await AssertScheduledArePlannedAsync(scheduler, "2026-12-05");
    }

    [Fact]
    public async Task PlanJob_RunAgainAfterItsCompletionWasLost_FindsItsVersion_NoSecondVersion()
    {
        var (scheduler, _) = await DemoNetwork.ArrangeAsync(api, 40);
        var accepted = await scheduler.PostAsync("/api/plans", Bodies.Raw("""{"night":"2026-12-06","timeLimitSeconds":1}"""));
        var jobId = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobId").GetGuid();
        await DemoNetwork.WaitForJobAsync(scheduler, $"/api/jobs/{jobId}");

        await LoseCompletionAsync(jobId);
        await WaitForAsync(jobId, s => s is { Status: "succeeded", Attempts: 2 });

        var versions = JsonDocument.Parse(await scheduler.GetStringAsync("/api/plans/2026-12-06/versions")).RootElement;
        Assert.Equal(jobId, Assert.Single(versions.EnumerateArray()).GetProperty("jobId").GetGuid());
        var job = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/jobs/{jobId}")).RootElement;
        Assert.Equal(1, job.GetProperty("result").GetProperty("version").GetInt32());
    }

    [Fact]
    public async Task CalibrationJob_CarriesItsJobId_AndARerunAddsNoSecondCalibration()
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var accepted = await admin.PostAsync("/api/calibrations", Bodies.Raw(
            """{"library":"synthetic","objects":30,"folds":2,"resolutions":[600],"snr":[20],"seed":3}"""));
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobId = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobId").GetGuid();
        var job = await DemoNetwork.WaitForJobAsync(admin, $"/api/jobs/{jobId}", seconds: 300);
        var calibrationId = job.GetProperty("result").GetProperty("calibrationId").GetGuid();
        var calibration = JsonDocument.Parse(await admin.GetStringAsync($"/api/calibrations/{calibrationId}")).RootElement;
        Assert.Equal(jobId, calibration.GetProperty("calibration").GetProperty("jobId").GetGuid());

        await LoseCompletionAsync(jobId);
        await WaitForAsync(jobId, s => s is { Status: "succeeded", Attempts: 2 });
        await using (var conn = await api.Direct.OpenConnectionAsync())
        {
            Assert.Equal(1, await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM calibrations WHERE job_id = @jobId", new { jobId }));
        }
        var again = JsonDocument.Parse(await admin.GetStringAsync($"/api/jobs/{jobId}")).RootElement;
        Assert.Equal(calibrationId, again.GetProperty("result").GetProperty("calibrationId").GetGuid());
    }

    private static async Task AssertScheduledArePlannedAsync(HttpClient client, string night)
    {
        var plan = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night}")).RootElement.GetProperty("plan");
        var ids = plan.GetProperty("spectrographs").EnumerateArray()
            .SelectMany(q => q.GetProperty("queue").EnumerateArray().Select(e => e.GetProperty("candidateId").GetString()!)).ToList();
        Assert.NotEmpty(ids);
        foreach (var id in ids.Take(10))
        {
            var detail = JsonDocument.Parse(await client.GetStringAsync($"/api/candidates/{id}")).RootElement;
            Assert.Equal("planned", detail.GetProperty("candidate").GetProperty("state").GetString());
        }
    }
}
