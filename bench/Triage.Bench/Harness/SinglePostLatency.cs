using System.Diagnostics;
using System.Net.Http.Headers;
using System.Text;

namespace Triage.Bench.Harness;

/// <summary>
/// Latency of single-candidate posts under a steady offered load against a running service:
/// <c>latency URL BROKER_KEY [RATE=200] [SECONDS=30]</c>. Requests are released on a fixed
/// schedule (open loop: a slow answer does not delay the next request, so queueing shows in
/// the latencies), the run stops by itself after RATE × SECONDS requests, and the percentiles
/// of the measured latencies are printed. Each request is a new invented candidate with ten points.
/// </summary>
internal static class SinglePostLatency
{
    public static async Task<int> RunAsync(string[] args)
    {
        if (args.Length < 3)
        {
            Console.Error.WriteLine("usage: latency URL BROKER_KEY [RATE=200] [SECONDS=30]");
            return 2;
        }
        var baseUrl = new Uri(args[1]);
        string key = args[2];
        int rate = args.Length > 3 ? int.Parse(args[3]) : 200;
        int seconds = args.Length > 4 ? int.Parse(args[4]) : 30;
        int total = rate * seconds;

        using var http = new HttpClient(new SocketsHttpHandler { MaxConnectionsPerServer = 256, PooledConnectionLifetime = TimeSpan.FromMinutes(5) }) { BaseAddress = baseUrl, Timeout = TimeSpan.FromSeconds(30) };
        http.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        string run = Guid.NewGuid().ToString("N")[..8];

        // Warm-up: 200 requests at the same rate, not measured.
        await DriveAsync(http, run + "w", 200, rate, null);
        var latencies = new double[total];
        var started = Stopwatch.StartNew();
        var failures = await DriveAsync(http, run, total, rate, latencies);
        var elapsed = started.Elapsed;

        Array.Sort(latencies);
        double P(double q) => latencies[Math.Min(total - 1, (int)Math.Ceiling(q * total) - 1)];
        Console.WriteLine($"single-candidate posts: {total} offered at {rate}/s for {seconds} s, failures {failures}, achieved {total / elapsed.TotalSeconds:0} answers/s");
        Console.WriteLine($"latency ms: p50 {P(0.50):0.0}  p90 {P(0.90):0.0}  p95 {P(0.95):0.0}  p99 {P(0.99):0.0}  max {latencies[^1]:0.0}  mean {latencies.Average():0.0}");
        return failures == 0 ? 0 : 1;
    }

    private static async Task<int> DriveAsync(HttpClient http, string run, int count, int rate, double[]? latencies)
    {
        int failures = 0;
        var tasks = new List<Task>(count);
        var clock = Stopwatch.StartNew();
        for (int i = 0; i < count; i++)
        {
            var due = TimeSpan.FromSeconds(i / (double)rate);
            var wait = due - clock.Elapsed;
            if (wait > TimeSpan.Zero)
            {
                await Task.Delay(wait);
            }
            int index = i;
            tasks.Add(Task.Run(async () =>
            {
                var sw = Stopwatch.StartNew();
                try
                {
                    using var content = new StringContent(Body($"{run}-{index}"), Encoding.UTF8, "application/json");
                    using var response = await http.PostAsync("/api/candidates/batches", content);
                    if (!response.IsSuccessStatusCode)
                    {
                        Interlocked.Increment(ref failures);
                    }
                }
                catch (Exception ex) when (ex is HttpRequestException or TaskCanceledException)
                {
                    // A refused or timed-out request counts as a failure; its latency is the time until it failed.
                    Interlocked.Increment(ref failures);
                }
                sw.Stop();
                if (latencies is not null)
                {
                    latencies[index] = sw.Elapsed.TotalMilliseconds;
                }
            }));
        }
        await Task.WhenAll(tasks);
        return failures;
    }

    private static string Body(string id)
    {
        var sb = new StringBuilder();
        sb.Append("{\"candidates\":[{\"id\":\"").Append(id).Append("\",\"raDeg\":150.1,\"decDeg\":-20.2,\"discoveredUtc\":\"2026-11-01T00:00:00Z\",\"photometry\":[");
        for (int j = 0; j < 10; j++)
        {
            if (j > 0)
            {
                sb.Append(',');
            }
            sb.Append("{\"mjd\":").Append(61345 + 3 * j).Append(",\"band\":\"").Append(j % 2 == 0 ? 'g' : 'r')
              .Append("\",\"magAb\":").Append(19 + 0.1 * j).Append(",\"magAbError\":0.05}");
        }
        sb.Append("]}]}");
        return sb.ToString();
    }
}
