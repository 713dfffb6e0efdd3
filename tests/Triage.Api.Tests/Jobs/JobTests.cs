using System.Text.Json;
using Dapper;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Jobs;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;
using Triage.Storage.Jobs;

namespace Triage.Api.Tests.Jobs;

/// <summary>A host with two test job kinds: one that counts with progress, one that refuses its input.</summary>
public sealed class JobsFactory : TriageApiFactory
{
    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.UseSetting("Triage:Jobs:PollInterval", "00:00:00.100");
        builder.ConfigureTestServices(s =>
        {
            s.AddSingleton<IJobHandler, CountingHandler>();
            s.AddSingleton<IJobHandler, RefusingHandler>();
        });
    }

    private sealed class CountingHandler : IJobHandler
    {
        public string Kind => "test-count";

        public async Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct)
        {
            var n = JsonDocument.Parse(run.InputJson).RootElement.GetProperty("upTo").GetInt32();
            var sum = 0;
            for (var i = 1; i <= n; i++)
            {
                sum += i;
                progress.Report(new JobProgress((double)i / n, $"added {i}"));
                await Task.Delay(10, ct);
            }
            return JsonSerializer.Serialize(new { sum });
        }
    }

    private sealed class RefusingHandler : IJobHandler
    {
        public string Kind => "test-refuse";

        public Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct) =>
            throw new JobInputException("the library folder holds no spectra");
    }
}

public sealed class JobTests(JobsFactory api) : IClassFixture<JobsFactory>
{
    private async Task<JsonElement> WaitForEndAsync(HttpClient client, Guid id)
    {
        for (var i = 0; i < 300; i++)
        {
            var job = JsonDocument.Parse(await client.GetStringAsync($"/api/jobs/{id}")).RootElement;
            var status = job.GetProperty("status").GetString();
            if (status is "succeeded" or "failed")
            {
                return job;
            }
            await Task.Delay(100);
        }
        throw new TimeoutException($"job {id} did not finish");
    }

    [Fact]
    public async Task QueuedJob_RunsToSuccess_WithResultAndFullProgress()
    {
        var store = api.Services.GetRequiredService<JobStore>();
        var id = await store.EnqueueAsync("test-count", """{"upTo": 20}""", null, DateTimeOffset.UtcNow);
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));

        var job = await WaitForEndAsync(client, id);

        Assert.Equal("succeeded", job.GetProperty("status").GetString());
        Assert.Equal(100, job.GetProperty("percentDone").GetDouble());
        Assert.StartsWith("finished: succeeded", job.GetProperty("step").GetString(), StringComparison.Ordinal);
        Assert.Equal(JsonValueKind.Null, job.GetProperty("etaSeconds").ValueKind);
        Assert.Equal(210, job.GetProperty("result").GetProperty("sum").GetInt32());
        Assert.Equal(1, job.GetProperty("attempts").GetInt32());
    }

    [Fact]
    public async Task JobWithUnusableInput_FailsWithItsMessage()
    {
        var store = api.Services.GetRequiredService<JobStore>();
        var id = await store.EnqueueAsync("test-refuse", "{}", null, DateTimeOffset.UtcNow);
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));

        var job = await WaitForEndAsync(client, id);

        Assert.Equal("failed", job.GetProperty("status").GetString());
        Assert.Equal("the library folder holds no spectra", job.GetProperty("error").GetString());
    }

    [Fact]
    public async Task RunningJob_WhoseWorkerDied_IsRequeuedOnceThenFailed_NeverLeftRunning()
    {
        var store = api.Services.GetRequiredService<JobStore>();
        // A kind no worker runs, so the test alone moves it.
        var id = await store.EnqueueAsync("test-orphan", "{}", null, DateTimeOffset.UtcNow);
        await using var conn = await api.DataSource.OpenConnectionAsync();
        const string orphan = "UPDATE jobs SET status = 'running', attempts = @attempts, heartbeat_at = now() - interval '2 hours' WHERE id = @id";

        await conn.ExecuteAsync(orphan, new { id, attempts = 1 });
        await store.RecoverInterruptedAsync(TimeSpan.FromMinutes(10), DateTimeOffset.UtcNow);
        Assert.Equal(JobStatus.Queued, (await store.GetAsync(id))!.Status);

        await conn.ExecuteAsync(orphan, new { id, attempts = JobStore.MaxAttempts });
        await store.RecoverInterruptedAsync(TimeSpan.FromMinutes(10), DateTimeOffset.UtcNow);
        var failed = (await store.GetAsync(id))!;
        Assert.Equal(JobStatus.Failed, failed.Status);
        Assert.Contains("interrupted by a restart", failed.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task UnknownJob_Is404Problem_AndBadLimitIs400()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        await Bodies.AssertProblemNamingAsync(await client.GetAsync($"/api/jobs/{Guid.NewGuid()}"), 404, "id");
        await Bodies.AssertProblemNamingAsync(await client.GetAsync("/api/jobs?limit=0"), 400, "limit");
    }
}
