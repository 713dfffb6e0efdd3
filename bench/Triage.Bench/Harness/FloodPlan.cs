using System.Diagnostics;
using System.Globalization;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using Triage.Core.Candidates;

namespace Triage.Bench.Harness;

/// <summary>
/// A plan under a flood of candidates, against a running service:
/// <c>flood URL BROKER_KEY SCHEDULER_KEY [COUNT=300000] [SERVICE_PID] [TIME_LIMIT=5] [NIGHT=2026-12-02]</c>.
/// Posts COUNT invented candidates (the demo night's generator, ten-odd points each, new ids every
/// run; 0: none, plan over what the service holds) in batches of 5,000, then requests one plan and follows its job: the job's own start and
/// finish times, the service's resident memory sampled every 100 ms from /proc/PID/status while
/// the job runs (and its peak VmHWM), the plan's pool record, and the time and size of the plan
/// read whole, compressed (br) and in parts. The machine's load average is printed with the figures.
/// </summary>
internal static class FloodPlan
{
    public static async Task<int> RunAsync(string[] args)
    {
        if (args.Length < 4)
        {
            Console.Error.WriteLine("usage: flood URL BROKER_KEY SCHEDULER_KEY [COUNT=300000] [SERVICE_PID] [TIME_LIMIT=5] [NIGHT=2026-12-02]");
            return 2;
        }
        var inv = CultureInfo.InvariantCulture;
        var baseUrl = new Uri(args[1]);
        var count = args.Length > 4 ? int.Parse(args[4], inv) : 300_000;
        int? pid = args.Length > 5 && args[5] != "-" ? int.Parse(args[5], inv) : null;
        var limit = args.Length > 6 ? double.Parse(args[6], inv) : 5;
        var night = args.Length > 7 ? args[7] : "2026-12-02";
        using var broker = Client(baseUrl, args[2]);
        using var scheduler = Client(baseUrl, args[3]);

        // 1. The flood, two batches in flight.
        var run = Guid.NewGuid().ToString("N")[..8];
        var labels = DefaultSubtypeLabels.Set;
        var batches = (count + 4999) / 5000;
        var intake = Stopwatch.StartNew();
        var next = 0;
        async Task PostLoop()
        {
            for (int b; (b = Interlocked.Increment(ref next) - 1) < batches;)
            {
                var size = Math.Min(5000, count - b * 5000);
                var batch = DemoNightGenerator.Generate(labels, new DemoNightOptions { Count = size, Seed = 1000 + b });
                var renamed = new BrokerBatch(batch.Candidates!.Select(c => c! with { Id = $"fl-{run}-{b}-{c.Id}" }).ToList());
                using var body = new StringContent(BrokerBatchJson.Serialize(renamed), Encoding.UTF8, "application/json");
                using var response = await broker.PostAsync("/api/candidates/batches", body);
                if (!response.IsSuccessStatusCode)
                {
                    throw new InvalidOperationException($"batch {b}: {(int)response.StatusCode} {await response.Content.ReadAsStringAsync()}");
                }
            }
        }
        await Task.WhenAll(PostLoop(), PostLoop());
        if (count > 0)
        {
            Console.WriteLine(string.Create(inv, $"intake: {count} candidates in {intake.Elapsed.TotalSeconds:F1} s ({count / intake.Elapsed.TotalSeconds:F0}/s over HTTP, validation included)"));
        }

        // 2. One plan, its job followed while memory is sampled.
        var baselineRss = pid is { } p0 ? Memory(p0, "VmRSS") : null;
        var wall = Stopwatch.StartNew();
        using var accepted = await scheduler.PostAsync("/api/plans",
            new StringContent(string.Create(inv, $$"""{"night":"{{night}}","timeLimitSeconds":{{limit}}}"""), Encoding.UTF8, "application/json"));
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString()!;
        long peakRss = 0;
        JsonElement job;
        while (true)
        {
            if (pid is { } p && Memory(p, "VmRSS") is { } rss)
            {
                peakRss = Math.Max(peakRss, rss);
            }
            job = JsonDocument.Parse(await scheduler.GetStringAsync(jobUrl)).RootElement;
            var status = job.GetProperty("status").GetString();
            if (status is "succeeded" or "failed")
            {
                break;
            }
            await Task.Delay(100);
        }
        var waited = wall.Elapsed.TotalSeconds;
        if (job.GetProperty("status").GetString() == "failed")
        {
            Console.WriteLine("plan job failed: " + job.GetProperty("error").GetString());
            return 1;
        }
        var started = job.GetProperty("startedAt").GetDateTimeOffset();
        var finished = job.GetProperty("finishedAt").GetDateTimeOffset();
        Console.WriteLine(string.Create(inv, $"plan job: {(finished - started).TotalSeconds:F1} s from start to finish (job record), {waited:F1} s from the request to seeing it done; time limit {limit} s"));
        if (pid is { } pp)
        {
            Console.WriteLine(string.Create(inv, $"service resident memory: {baselineRss / 1024.0:F0} MB before the plan, peak {peakRss / 1024.0:F0} MB while it ran (100 ms samples), VmHWM {Memory(pp, "VmHWM") / 1024.0:F0} MB since the service started"));
        }

        // 3. Reading the plan.
        var plain = Stopwatch.StartNew();
        var whole = await scheduler.GetByteArrayAsync($"/api/plans/{night}");
        var plainSeconds = plain.Elapsed.TotalSeconds;
        using var request = new HttpRequestMessage(HttpMethod.Get, $"/api/plans/{night}");
        request.Headers.AcceptEncoding.ParseAdd("br");
        var packed = Stopwatch.StartNew();
        using var compressed = await scheduler.SendAsync(request);
        var packedBytes = await compressed.Content.ReadAsByteArrayAsync();
        var packedSeconds = packed.Elapsed.TotalSeconds;
        var summaryClock = Stopwatch.StartNew();
        var summary = await scheduler.GetStringAsync($"/api/plans/{night}/summary");
        var summarySeconds = summaryClock.Elapsed.TotalSeconds;
        var pageClock = Stopwatch.StartNew();
        var page = await scheduler.GetStringAsync($"/api/plans/{night}/unassigned?limit=500");
        var pageSeconds = pageClock.Elapsed.TotalSeconds;
        Console.WriteLine(string.Create(inv, $"plan read whole: {whole.Length / 1e6:F2} MB in {plainSeconds:F2} s; br: {packedBytes.Length / 1e6:F2} MB in {packedSeconds:F2} s ({string.Join(",", compressed.Content.Headers.ContentEncoding)}); summary {summary.Length / 1e3:F1} kB in {summarySeconds:F3} s; 500 unassigned {page.Length / 1e3:F1} kB in {pageSeconds:F3} s"));
        var pool = JsonDocument.Parse(summary).RootElement.GetProperty("pool");
        Console.WriteLine("pool: " + pool.GetRawText());
        Console.WriteLine("load average: " + File.ReadAllText("/proc/loadavg").Trim());
        return 0;
    }

    private static HttpClient Client(Uri baseUrl, string key)
    {
        var http = new HttpClient(new SocketsHttpHandler { AutomaticDecompression = System.Net.DecompressionMethods.None })
        {
            BaseAddress = baseUrl,
            Timeout = TimeSpan.FromMinutes(5),
        };
        http.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        return http;
    }

    /// <summary>A /proc/PID/status field in kB, or null when the process is gone.</summary>
    private static long? Memory(int pid, string field)
    {
        try
        {
            var line = File.ReadLines($"/proc/{pid}/status").FirstOrDefault(l => l.StartsWith(field + ":", StringComparison.Ordinal));
            return line is null ? null : long.Parse(line.Split(' ', StringSplitOptions.RemoveEmptyEntries)[1], CultureInfo.InvariantCulture);
        }
        catch (IOException)
        {
            return null;
        }
    }
}
