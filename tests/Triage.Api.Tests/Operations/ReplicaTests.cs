using System.Collections.Concurrent;
using System.Diagnostics;
using System.Net;
using Dapper;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using System.Text.Json;
using System.Threading.Channels;
using Triage.Api.Events;
using Triage.Api.Jobs;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;
using Triage.Storage.Jobs;

namespace Triage.Api.Tests.Operations;

/// <summary>A job kind only the replica tests queue: records which replica ran which job.</summary>
public sealed class ProbeHandler(string replica, ConcurrentQueue<(Guid Job, string Replica)> runs) : IJobHandler
{
    public const string JobKind = "replica-probe";

    public string Kind => JobKind;

    public async Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct)
    {
        var job = System.Text.Json.JsonDocument.Parse(run.InputJson).RootElement.GetProperty("probe").GetGuid();
        runs.Enqueue((job, replica));
        // Long enough that both replicas find work while the other is busy.
        await Task.Delay(100, ct);
        return $$"""{"replica":"{{replica}}"}""";
    }
}

/// <summary>Replica A: its own database; keys cached for a minute so only a notification can refuse a revoked key in time.</summary>
public class ReplicaAFactory : IsolatedDatabaseFactory
{
    public ConcurrentQueue<(Guid Job, string Replica)> Runs { get; } = new();

    protected virtual string Replica => "A";

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.UseSetting("Triage:Access:KeyCacheSeconds", "60");
        builder.UseSetting("Triage:Jobs:PollInterval", "00:00:05");
        // The event relay reads the outbox every 5 min by itself: only a notification brings a version sooner.
        builder.UseSetting("Triage:Events:PollInterval", "00:05:00");
        builder.UseSetting("Triage:Jobs:WorkerName", "replica-" + Replica);
        builder.ConfigureTestServices(s => s.AddSingleton<IJobHandler>(new ProbeHandler(Replica, Runs)));
    }
}

/// <summary>Replica B: a second host on replica A's database.</summary>
public sealed class ReplicaBFactory(ReplicaAFactory first) : TriageApiFactory
{
    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.UseSetting("ConnectionStrings:Triage", first.IsolatedConnectionString);
        builder.UseSetting("Triage:Access:KeyCacheSeconds", "60");
        builder.UseSetting("Triage:Jobs:PollInterval", "00:00:05");
        builder.UseSetting("Triage:Events:PollInterval", "00:05:00");
        builder.UseSetting("Triage:Jobs:WorkerName", "replica-B");
        builder.ConfigureTestServices(s => s.AddSingleton<IJobHandler>(new ProbeHandler("B", first.Runs)));
    }
}

/// <summary>Two in-process hosts on one database, as two replicas behind a proxy would be.</summary>
public sealed class ReplicaPair : IDisposable
{
    public ReplicaAFactory A { get; } = new();

    public ReplicaBFactory B { get; }

    public ReplicaPair()
    {
        B = new ReplicaBFactory(A);
        _ = A.Server;
        _ = B.Server;
    }

    public void Dispose()
    {
        B.Dispose();
        A.Dispose();
    }
}

/// <summary>
/// Several replicas on one database: a key revoked through one is refused by the other within a
/// second although both cache keys for a minute (LISTEN/NOTIFY), and jobs queued once are each
/// run exactly once, by both replicas between them (claims with FOR UPDATE SKIP LOCKED; idle
/// workers woken by the notification, not by their 5 s poll), and a plan version made through one
/// reaches a stream client of the other at once although the relays poll only every 5 minutes. A
/// calibration's parts (one per R) are run by both replicas, and the last part stores exactly one
/// calibration, the same document one whole run gives.
/// </summary>
public sealed class ReplicaTests(ReplicaPair pair) : IClassFixture<ReplicaPair>
{
    [Fact]
    public async Task RevokeOnOneReplica_OtherReplicaRefusesTheKeyWithinOneSecond()
    {
        var keys = pair.A.Services.GetRequiredService<KeyStore>();
        var admin = pair.A.ClientWith(await pair.A.KeyAsync(Scope.Admin));
        var issued = await keys.IssueAsync("replica test broker", [Scope.Broker], null, DateTimeOffset.UtcNow);
        var onB = pair.B.ClientWith(issued.Secret);
        var onA = pair.A.ClientWith(issued.Secret);
        // Both replicas have the key in their caches.
        Assert.Equal(HttpStatusCode.OK, (await onB.GetAsync("/api/plans/2026-12-02/versions")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await onA.GetAsync("/api/plans/2026-12-02/versions")).StatusCode);

        var revoked = await admin.DeleteAsync($"/api/keys/{issued.Key.Id}");
        Assert.True(revoked.IsSuccessStatusCode, await revoked.Content.ReadAsStringAsync());
        var clock = Stopwatch.StartNew();
        HttpStatusCode status;
        do
        {
            status = (await onB.GetAsync("/api/plans/2026-12-02/versions")).StatusCode;
        }
        while (status == HttpStatusCode.OK && clock.Elapsed < TimeSpan.FromSeconds(5));

        Assert.Equal(HttpStatusCode.Unauthorized, status);
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(1), $"replica B still accepted the key {clock.ElapsedMilliseconds} ms after the revocation");
    }

    [Fact]
    public async Task JobsQueuedOnce_AreEachRunExactlyOnce_ByBothReplicas()
    {
        const int count = 24;
        var jobs = pair.A.Services.GetRequiredService<JobStore>();
        var probes = new List<Guid>();
        for (var i = 0; i < count; i++)
        {
            var probe = Guid.NewGuid();
            probes.Add(probe);
            await jobs.EnqueueAsync(ProbeHandler.JobKind, $$"""{"probe":"{{probe}}"}""", null, DateTimeOffset.UtcNow);
        }

        await using var conn = await pair.A.DataSource.OpenConnectionAsync();
        var clock = Stopwatch.StartNew();
        while (await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM jobs WHERE kind = @k AND status = 'succeeded'", new { k = ProbeHandler.JobKind }) < count)
        {
            Assert.True(clock.Elapsed < TimeSpan.FromSeconds(60), "the probes did not all finish within 60 s");
            await Task.Delay(100);
        }

        var runs = pair.A.Runs.Where(r => probes.Contains(r.Job)).ToList();
        Assert.Equal(probes.Order(), runs.Select(r => r.Job).Order());
        Assert.Contains(runs, r => r.Replica == "A");
        Assert.Contains(runs, r => r.Replica == "B");
        Assert.Equal(0, await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM jobs WHERE kind = @k AND attempts <> 1", new { k = ProbeHandler.JobKind }));
        // 24 probes of 100 ms on two workers woken by the notification: far less than one 5 s poll per job.
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(30), $"took {clock.Elapsed.TotalSeconds:F1} s");
    }

    [Fact]
    public async Task PlanVersionPostedOnOneReplica_ReachesAStreamClientOfTheOther()
    {
        var (scheduler, _) = await DemoNetwork.ArrangeAsync(pair.A, 40);
        const string night = "2026-12-05";
        using var cancel = new CancellationTokenSource(TimeSpan.FromMinutes(4));
        var events = Channel.CreateUnbounded<(string Id, string Event, string Data)>();
        var onB = pair.B.ClientWith(await pair.B.KeyAsync(Scope.Scheduler));
        var hub = pair.B.Services.GetRequiredService<PlanEventHub>();
        var before = hub.SubscriberCount;
        var stream = ServerSentEvents.ReadAsync(onB, $"/api/plans/{night}/events", events.Writer, cancel.Token);
        while (hub.SubscriberCount == before)
        {
            Assert.False(stream.IsCompleted, "the stream on replica B ended before subscribing");
            await Task.Delay(50);
        }

        var posted = Stopwatch.StartNew();
        var accepted = await scheduler.PostAsync("/api/plans", Bodies.Raw($$"""{"night":"{{night}}","timeLimitSeconds":3}"""));
        var result = await DemoNetwork.RunJobAsync(scheduler, accepted);
        var received = await ServerSentEvents.ReadUntilAsync(events.Reader, e => e.Event == "plan-version", TimeSpan.FromMinutes(2));

        var data = JsonDocument.Parse(received.Data).RootElement;
        Assert.Equal(night, data.GetProperty("night").GetString());
        Assert.Equal(result.GetProperty("version").GetInt32(), data.GetProperty("version").GetInt32());
        // Far below the relays' 5 min poll: B's relay was woken by the outbox's notification.
        Assert.True(posted.Elapsed < TimeSpan.FromMinutes(2), $"the event reached replica B {posted.Elapsed.TotalSeconds:F1} s after the post");
        await cancel.CancelAsync();
        await stream;
    }

    [Fact]
    public async Task CalibrationParts_AreSpreadOverBothReplicas_AndTheLastStoresOneResult()
    {
        var admin = pair.A.ClientWith(await pair.A.KeyAsync(Scope.Admin));
        double[] grid = [8, 20, 60, 150, 400, 1000];
        var body = new { library = "synthetic", objects = 30, seed = 4, resolutions = grid.Reverse(), snr = new double?[] { 10, null }, folds = 2 };
        var accepted = await admin.PostAsync("/api/calibrations", Bodies.Raw(JsonSerializer.Serialize(body)));
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString()!;
        var jobId = Guid.Parse(jobUrl.Split('/').Last());

        // Progress comes from parts done: every percent read while it runs (on either replica) is k/6.
        var onB = pair.B.ClientWith(await pair.B.KeyAsync(Scope.Admin));
        var seen = new List<(double Percent, string? Step)>();
        var clock = Stopwatch.StartNew();
        JsonElement job;
        for (var poll = 0; ; poll++)
        {
            job = JsonDocument.Parse(await (poll % 2 == 0 ? admin : onB).GetStringAsync(jobUrl)).RootElement;
            var status = job.GetProperty("status").GetString();
            Assert.True(status != "failed", job.GetProperty("error").GetString());
            if (status == "succeeded")
            {
                break;
            }
            if (status == "running" && job.GetProperty("step").GetString() is { } step && step.Contains("parts", StringComparison.Ordinal))
            {
                seen.Add((job.GetProperty("percentDone").GetDouble(), step));
            }
            Assert.True(clock.Elapsed < TimeSpan.FromMinutes(5), "the calibration did not finish within 5 minutes");
            await Task.Delay(100);
        }
        var allowed = Enumerable.Range(0, grid.Length).Select(k => Math.Round(100.0 * k / grid.Length, 1)).ToHashSet();
        Assert.All(seen, s => Assert.Contains(s.Percent, allowed));
        Assert.Contains(seen, s => s.Percent > 0);

        await using var conn = await pair.A.DataSource.OpenConnectionAsync();
        var parts = (await conn.QueryAsync<(int Part, double Resolution, string Worker, Guid JobId)>(
            "SELECT part, resolution, worker, job_id FROM calibration_parts WHERE parent_job_id = @jobId ORDER BY part", new { jobId })).ToList();
        Assert.Equal(grid, parts.Select(p => p.Resolution));
        Assert.Equal(Enumerable.Range(0, grid.Length), parts.Select(p => p.Part));
        // Both replicas ran parts, and each part job ran once, on the worker its row names.
        Assert.Equal(["replica-A", "replica-B"], parts.Select(p => p.Worker).Distinct().Order());
        var partJobs = (await conn.QueryAsync<(Guid Id, string Status, int Attempts, string Result)>(
            "SELECT id, status, attempts, result::text FROM jobs WHERE parent_id = @jobId", new { jobId })).ToList();
        Assert.Equal(grid.Length, partJobs.Count);
        Assert.All(partJobs, j => Assert.Equal(("succeeded", 1), (j.Status, j.Attempts)));
        foreach (var p in parts)
        {
            var result = JsonDocument.Parse(partJobs.Single(j => j.Id == p.JobId).Result).RootElement;
            Assert.Equal(p.Worker, result.GetProperty("worker").GetString());
        }

        // One calibration, under the calibration job's id, named by its result.
        var stored = (await conn.QueryAsync<(Guid Id, string Document)>("SELECT id, document::text FROM calibrations WHERE job_id = @jobId", new { jobId })).ToList();
        Assert.Single(stored);
        Assert.Equal(stored[0].Id.ToString(), job.GetProperty("result").GetProperty("calibrationId").GetString());
        Assert.Equal(1, job.GetProperty("attempts").GetInt32());
        Assert.Equal(100, job.GetProperty("percentDone").GetDouble());

        // The assembled document is the one a whole run of the same input in one process gives.
        var library = Triage.Core.Spectra.Synthetic.SyntheticLibrary.Generate(new Triage.Core.Spectra.Synthetic.SynthOptions { Objects = 30, Seed = 4 }).Library;
        var whole = Triage.Learning.CalibrationPipeline.Run(library, Triage.Core.Spectra.Taxonomy.Default,
            new Triage.Core.Calibration.CalibrationSettings { Resolutions = grid.Reverse().ToArray(), SnrLevels = [10, null], Folds = 2, Seed = 4 },
            Triage.Learning.CalibrationJson.Deserialize(stored[0].Document).Provenance!.CodeVersion);
        Assert.Equal(Triage.Learning.CalibrationJson.Serialize(whole),
            Triage.Learning.CalibrationJson.Serialize(Triage.Learning.CalibrationJson.Deserialize(stored[0].Document)));
    }
}
