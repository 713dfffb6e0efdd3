using System.Collections.Concurrent;
using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text;
using System.Text.Json;
using Dapper;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Candidates;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;
using Xunit.Abstractions;

namespace Triage.Api.Tests.Faults;

/// <summary>A fact that runs only when <c>TRIAGE_FAULTS_LONG=1</c> (the long form of the fault harness).</summary>
public sealed class LongFaultFactAttribute : FactAttribute
{
    public LongFaultFactAttribute()
    {
        if (Environment.GetEnvironmentVariable("TRIAGE_FAULTS_LONG") != "1")
        {
            Skip = "long form of the fault harness: set TRIAGE_FAULTS_LONG=1 (docs/operations.md)";
        }
    }
}

/// <summary>
/// The long form of the fault harness: sustained intake through repeated database outages (one
/// of 16 s), plan and calibration jobs through outages, a table lock held for 30 s under load,
/// and <c>kill -9</c> of a separate service process during a job and during intake. Counts every
/// answer and checks the invariants: no 500, nothing partial, nothing duplicated, one result per
/// job. Writes its table to <c>TRIAGE_FAULTS_REPORT</c> (default: the test output folder).
/// </summary>
public sealed class LongFaultRun(ProxiedDatabaseFactory api, ITestOutputHelper output) : IClassFixture<ProxiedDatabaseFactory>
{
    private const int PerBatch = 50, Points = 10;
    private readonly ConcurrentDictionary<string, int> _answers = new();
    private readonly List<string> _rows = [];

    private static int Seconds => int.TryParse(Environment.GetEnvironmentVariable("TRIAGE_FAULTS_SECONDS"), out var s) ? s : 60;

    [LongFaultFact]
    public async Task LongForm_AllInvariantsHold()
    {
        var prefix = Unique.Name("long");
        await IntakeThroughOutagesAsync(prefix + "-a");
        await JobsThroughOutagesAsync();
        await HeldLockUnderLoadAsync(prefix + "-l");
        await KillDuringJobAndIntakeAsync(prefix + "-k");

        var report = new StringBuilder()
            .AppendLine($"Long fault run {DateTimeOffset.UtcNow:yyyy-MM-dd HH:mm} UTC, {Seconds} s per phase, load average {File.ReadAllText("/proc/loadavg").Split(' ')[0]} at the end")
            .AppendLine()
            .AppendLine("| Phase | Requests | 2xx | 503 | other 5xx | partial batches | duplicates | results per job |")
            .AppendLine("|---|---|---|---|---|---|---|---|");
        foreach (var row in _rows)
        {
            report.AppendLine(row);
        }
        var path = Environment.GetEnvironmentVariable("TRIAGE_FAULTS_REPORT") ?? Path.Combine(AppContext.BaseDirectory, "fault-run.md");
        await File.WriteAllTextAsync(path, report.ToString());
        output.WriteLine(report.ToString());
    }

    private static string BatchBody(string prefix, int batch) =>
        CandidateBodies.Batch(Enumerable.Range(0, PerBatch).Select(i => CandidateBodies.Candidate($"{prefix}-{batch:D5}-{i:D2}", Points)).ToArray()).ToJsonString();

    /// <summary>Posts until stored, counting every answer; a 5xx other than 503 fails the run.</summary>
    private async Task<(int Requests, int Ok, int Busy, int Other)> PostUntilStoredAsync(HttpClient broker, string body, ConcurrentDictionary<string, int> counts)
    {
        while (true)
        {
            HttpResponseMessage answer;
            try
            {
                answer = await broker.PostAsync("/api/candidates/batches", Bodies.Raw(body));
            }
            catch (HttpRequestException)
            {
                counts.AddOrUpdate("refused", 1, (_, n) => n + 1);
                await Task.Delay(250);
                continue;
            }
            var status = (int)answer.StatusCode;
            counts.AddOrUpdate(status.ToString(System.Globalization.CultureInfo.InvariantCulture), 1, (_, n) => n + 1);
            if (status == 200)
            {
                return default;
            }
            Assert.True(status == 503, $"batch answered {status}: {await answer.Content.ReadAsStringAsync()}");
            await Task.Delay(250);
        }
    }

    private async Task<(long Partial, long Duplicates, long Batches)> CheckBatchesAsync(Npgsql.NpgsqlDataSource data, string prefix)
    {
        await using var conn = await data.OpenConnectionAsync();
        var perBatch = (await conn.QueryAsync<(string Batch, long Candidates, long Rows, long Points)>("""
            SELECT substring(c.broker_candidate_id from '^(.*)-[0-9]+$'), count(DISTINCT c.id), count(DISTINCT c.broker_candidate_id), count(p.*)
            FROM candidates c LEFT JOIN candidate_photometry p ON p.candidate_id = c.id
            WHERE c.broker_candidate_id LIKE @like GROUP BY 1
            """, new { like = prefix + "-%" }, commandTimeout: 300)).ToList();
        var partial = perBatch.Count(b => b.Candidates != PerBatch || b.Points != PerBatch * Points);
        var duplicates = await conn.ExecuteScalarAsync<long>("""
            SELECT (SELECT count(*) FROM candidates WHERE broker_candidate_id LIKE @like)
                 - (SELECT count(DISTINCT (broker, broker_candidate_id)) FROM candidates WHERE broker_candidate_id LIKE @like)
            """, new { like = prefix + "-%" }, commandTimeout: 300);
        return (partial, duplicates, perBatch.Count);
    }

    private string Row(string phase, ConcurrentDictionary<string, int> counts, long partial, long duplicates, string perJob)
    {
        int Get(string k) => counts.TryGetValue(k, out var n) ? n : 0;
        var ok = counts.Where(kv => kv.Key.StartsWith('2')).Sum(kv => kv.Value);
        var other = counts.Where(kv => kv.Key.StartsWith('5') && kv.Key != "503").Sum(kv => kv.Value);
        var row = $"| {phase} | {counts.Values.Sum()} | {ok} | {Get("503")} | {other} | {partial} | {duplicates} | {perJob} |";
        _rows.Add(row);
        Assert.Equal(0, other);
        Assert.Equal(0, partial);
        Assert.Equal(0, duplicates);
        return row;
    }

    private async Task IntakeThroughOutagesAsync(string prefix)
    {
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var counts = new ConcurrentDictionary<string, int>();
        var until = DateTimeOffset.UtcNow.AddSeconds(Seconds);
        var next = -1;
        var posters = Enumerable.Range(0, 8).Select(_ => Task.Run(async () =>
        {
            while (DateTimeOffset.UtcNow < until)
            {
                await PostUntilStoredAsync(broker, BatchBody(prefix, Interlocked.Increment(ref next)), counts);
            }
        })).ToList();
        // Outages: 16 s once, then 3 s every 10 s.
        await Task.Delay(3000);
        await OutageAsync(16_000);
        while (DateTimeOffset.UtcNow < until.AddSeconds(-8))
        {
            await Task.Delay(7000);
            await OutageAsync(3000);
        }
        await Task.WhenAll(posters);
        var (partial, duplicates, batches) = await CheckBatchesAsync(api.Direct, prefix);
        Assert.Equal(next + 1, batches);
        output.WriteLine(Row($"intake, 8 brokers, outages of 16 s and 3 s ({batches} batches of {PerBatch}×{Points})", counts, partial, duplicates, "–"));
    }

    private async Task OutageAsync(int ms)
    {
        api.Proxy.Cut();
        try
        {
            await Task.Delay(ms);
        }
        finally
        {
            api.Proxy.Restore();
        }
    }

    private async Task JobsThroughOutagesAsync()
    {
        var (scheduler, _) = await DemoNetwork.ArrangeAsync(api, 120);
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var counts = new ConcurrentDictionary<string, int>();
        var jobs = new List<string>();
        for (var n = 0; n < 3; n++)
        {
            var accepted = await scheduler.PostAsync("/api/plans", Bodies.Raw($$"""{"night":"2026-12-{{10 + n:D2}}","timeLimitSeconds":5}"""));
            counts.AddOrUpdate(((int)accepted.StatusCode).ToString(System.Globalization.CultureInfo.InvariantCulture), 1, (_, c) => c + 1);
            jobs.Add(JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString()!);
        }
        var calibration = await admin.PostAsync("/api/calibrations", Bodies.Raw("""{"library":"synthetic","objects":60,"folds":2,"resolutions":[400,1200],"snr":[10],"seed":5}"""));
        jobs.Add(JsonDocument.Parse(await calibration.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString()!);
        for (var i = 0; i < 6; i++)
        {
            await Task.Delay(2500);
            await OutageAsync(2500);
        }
        foreach (var job in jobs)
        {
            await DemoNetwork.WaitForJobAsync(admin, job, seconds: 900);
        }
        await using var conn = await api.Direct.OpenConnectionAsync();
        var perJob = (await conn.QueryAsync<long>("""
            SELECT count(*) FROM (SELECT job_id FROM plans WHERE job_id IS NOT NULL UNION ALL SELECT job_id FROM calibrations WHERE job_id IS NOT NULL) r GROUP BY job_id
            """)).ToList();
        Assert.All(perJob, n => Assert.Equal(1, n));
        // The calibration ran as one part per R: one stored outcome per part, never two.
        var perPart = (await conn.QueryAsync<long>("SELECT count(*) FROM calibration_parts GROUP BY parent_job_id, part")).ToList();
        Assert.Equal(2, perPart.Count);
        Assert.All(perPart, n => Assert.Equal(1, n));
        output.WriteLine(Row("3 plan jobs and 1 calibration (2 parts), six 2.5 s outages", counts, 0, 0, $"{perJob.Count} jobs, each 1; {perPart.Count} parts, each 1"));
    }

    private async Task HeldLockUnderLoadAsync(string prefix)
    {
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var counts = new ConcurrentDictionary<string, int>();
        var liveFailures = 0;
        await using var holder = await api.Direct.OpenConnectionAsync();
        await using var tx = await holder.BeginTransactionAsync();
        await holder.ExecuteAsync("LOCK TABLE candidates IN ACCESS EXCLUSIVE MODE", transaction: tx);
        var until = DateTimeOffset.UtcNow.AddSeconds(30);
        var next = -1;
        var load = Enumerable.Range(0, 50).Select(_ => Task.Run(async () =>
        {
            while (DateTimeOffset.UtcNow < until)
            {
                var body = BatchBody(prefix, Interlocked.Increment(ref next));
                var answer = await broker.PostAsync("/api/candidates/batches", Bodies.Raw(body));
                counts.AddOrUpdate(((int)answer.StatusCode).ToString(System.Globalization.CultureInfo.InvariantCulture), 1, (_, n) => n + 1);
                Assert.True((int)answer.StatusCode is 200 or 503, $"{(int)answer.StatusCode}");
                await Task.Delay(1000);
            }
        })).ToList();
        var probes = Task.Run(async () =>
        {
            while (DateTimeOffset.UtcNow < until)
            {
                var live = await api.CreateClient().GetAsync("/health/live");
                var sites = await reader.GetAsync("/api/sites");
                if (live.StatusCode != HttpStatusCode.OK || sites.StatusCode != HttpStatusCode.OK)
                {
                    Interlocked.Increment(ref liveFailures);
                }
                await Task.Delay(500);
            }
        });
        await Task.WhenAll(load);
        await probes;
        await tx.RollbackAsync();
        Assert.Equal(0, liveFailures);
        var (partial, duplicates, _) = await CheckBatchesAsync(api.Direct, prefix);
        output.WriteLine(Row("ACCESS EXCLUSIVE lock on candidates for 30 s, 50 brokers posting once a second; /health/live and /api/sites probed every 0.5 s: all 200", counts, partial, duplicates, "–"));
    }

    private async Task KillDuringJobAndIntakeAsync(string prefix)
    {
        var counts = new ConcurrentDictionary<string, int>();
        var keys = api.Services.GetRequiredService<KeyStore>();
        var scheduler = (await keys.IssueAsync("long scheduler", [Scope.Scheduler], null, DateTimeOffset.UtcNow)).Secret;
        var brokerKey = (await keys.IssueAsync("long broker", [Scope.Broker], null, DateTimeOffset.UtcNow)).Secret;
        var planJobs = new List<Guid>();
        var killed = 0;
        for (var round = 0; round < 3; round++)
        {
            await using var service = await ServiceProcess.StartAsync(api.IsolatedConnectionString);
            using var client = new HttpClient { BaseAddress = service.Address };
            client.DefaultRequestHeaders.Authorization = new System.Net.Http.Headers.AuthenticationHeaderValue("Bearer", scheduler);
            using var broker = new HttpClient { BaseAddress = service.Address };
            broker.DefaultRequestHeaders.Authorization = new System.Net.Http.Headers.AuthenticationHeaderValue("Bearer", brokerKey);
            // The previous round's job is finished by this process first, so each job is killed once
            // (a job killed on two attempts is failed on purpose: JobStore.MaxAttempts).
            foreach (var job in planJobs)
            {
                await DemoNetwork.WaitForJobAsync(client, $"/api/jobs/{job}", seconds: 600);
            }

            var accepted = await client.PostAsync("/api/plans", Bodies.Raw($$"""{"night":"2026-12-{{20 + round:D2}}","timeLimitSeconds":20}"""));
            planJobs.Add(JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobId").GetGuid());
            // Intake runs while the job runs; the kill lands in both.
            var next = round * 10_000 - 1;
            using var stop = new CancellationTokenSource();
            var posting = Task.Run(async () =>
            {
                while (!stop.IsCancellationRequested)
                {
                    try
                    {
                        var answer = await broker.PostAsync("/api/candidates/batches", Bodies.Raw(BatchBody(prefix, Interlocked.Increment(ref next))), stop.Token);
                        counts.AddOrUpdate(((int)answer.StatusCode).ToString(System.Globalization.CultureInfo.InvariantCulture), 1, (_, n) => n + 1);
                    }
                    catch (Exception)
                    {
                        counts.AddOrUpdate("cut by the kill", 1, (_, n) => n + 1);
                        return;
                    }
                }
            });
            await WaitRunningAsync(planJobs[^1]);
            await Task.Delay(1500);
            service.Kill();
            killed++;
            await stop.CancelAsync();
            await posting;
        }
        // A fresh process recovers the stranded jobs (stale after 3 s) and finishes them once.
        await using (var service = await ServiceProcess.StartAsync(api.IsolatedConnectionString))
        {
            using var client = new HttpClient { BaseAddress = service.Address };
            client.DefaultRequestHeaders.Authorization = new System.Net.Http.Headers.AuthenticationHeaderValue("Bearer", scheduler);
            foreach (var job in planJobs)
            {
                await DemoNetwork.WaitForJobAsync(client, $"/api/jobs/{job}", seconds: 600);
            }
        }
        await using var conn = await api.Direct.OpenConnectionAsync();
        var perJob = (await conn.QueryAsync<long>("SELECT count(*) FROM plans WHERE job_id = ANY(@ids) GROUP BY job_id", new { ids = planJobs.ToArray() })).ToList();
        Assert.Equal(planJobs.Count, perJob.Count);
        Assert.All(perJob, n => Assert.Equal(1, n));
        var (partial, duplicates, _) = await CheckBatchesAsync(api.Direct, prefix);
        output.WriteLine(Row($"kill -9 of a service process during a plan job and intake, {killed} times, then a fresh process", counts, partial, duplicates, $"{perJob.Count} jobs, each 1"));
    }

    private async Task WaitRunningAsync(Guid id)
    {
        for (var i = 0; i < 1200; i++)
        {
            await using var conn = await api.Direct.OpenConnectionAsync();
            if (await conn.ExecuteScalarAsync<string>("SELECT status FROM jobs WHERE id = @id", new { id }) == "running")
            {
                return;
            }
            await Task.Delay(100);
        }
        throw new TimeoutException($"job {id} never started");
    }
}

/// <summary>The service as a separate process (the built Triage.Api.dll), for <c>kill -9</c>.</summary>
public sealed class ServiceProcess : IAsyncDisposable
{
    private readonly Process _process;

    private ServiceProcess(Process process, Uri address)
    {
        _process = process;
        Address = address;
    }

    public Uri Address { get; }

    public static async Task<ServiceProcess> StartAsync(string connectionString)
    {
        int port;
        using (var probe = new TcpListener(IPAddress.Loopback, 0))
        {
            probe.Start();
            port = ((IPEndPoint)probe.LocalEndpoint).Port;
        }
        var start = new ProcessStartInfo("dotnet")
        {
            ArgumentList = { Path.Combine(AppContext.BaseDirectory, "Triage.Api.dll"), "--urls", $"http://127.0.0.1:{port}", "--contentRoot", Repository.File("src", "Triage.Api") },
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.Environment["ConnectionStrings__Triage"] = connectionString;
        start.Environment["Triage__Jobs__StaleAfter"] = "00:00:03";
        start.Environment["Triage__Jobs__PollInterval"] = "00:00:00.200";
        start.Environment["Serilog__MinimumLevel__Default"] = "Warning";
        start.Environment["ASPNETCORE_ENVIRONMENT"] = "Production";
        var process = Process.Start(start)!;
        process.OutputDataReceived += (_, _) => { };
        process.ErrorDataReceived += (_, _) => { };
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        var address = new Uri($"http://127.0.0.1:{port}");
        using var http = new HttpClient { BaseAddress = address };
        for (var i = 0; i < 600; i++)
        {
            try
            {
                if ((await http.GetAsync("/health/ready")).IsSuccessStatusCode)
                {
                    return new ServiceProcess(process, address);
                }
            }
            catch (HttpRequestException)
            {
                // not listening yet
            }
            await Task.Delay(100);
        }
        process.Kill(entireProcessTree: true);
        throw new TimeoutException("the service process did not become ready");
    }

    /// <summary>SIGKILL: no shutdown, no flush, exactly as <c>kill -9</c>.</summary>
    public void Kill()
    {
        if (!_process.HasExited)
        {
            _process.Kill(entireProcessTree: true);
            _process.WaitForExit();
        }
    }

    public ValueTask DisposeAsync()
    {
        Kill();
        _process.Dispose();
        return ValueTask.CompletedTask;
    }
}
