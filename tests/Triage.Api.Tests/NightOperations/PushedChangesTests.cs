using System.Net;
using System.Net.Sockets;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using System.Threading.Channels;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Candidates;

namespace Triage.Api.Tests.NightOperations;

/// <summary>
/// Events during the night through the API: a closure posted mid-night makes a new version within the debounce
/// interval that avoids the closed span; a server-sent-event client and a webhook receiver (signature checked
/// here with the shared secret) both get it; a "done" report in daylight is refused, a lost one replans.
/// </summary>
public sealed class PushedChangesTests(NightClockFactory api) : IClassFixture<NightClockFactory>
{
    private static string Id(JsonElement e) => e.GetProperty("candidateId").GetString()!;

    [Fact]
    public async Task ClosureMidNight_ReplansAroundIt_AndTheVersionReachesSseAndWebhook()
    {
        var (scheduler, keys, sites, units) = await api.ArrangeDemoAsync();
        var night = NightClockFactory.Night.ToString("yyyy-MM-dd");
        api.Clock.Now = NightClockFactory.MidNight;
        var now = api.Clock.Now;
        await NightClockFactory.RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(JsonSerializer.Serialize(new { night }))));
        var v1 = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night}")).RootElement;
        var entries1 = NightClockFactory.Entries(v1);

        // The site with most planned work closes for two hours from half an hour from now.
        var unitSite = units.ToDictionary(u => u.Id.ToString(), u => u.SiteId);
        var site = entries1.GroupBy(e => unitSite[e.Unit]).OrderByDescending(g => g.Count()).First().Key;
        var siteUnits = units.Where(u => u.SiteId == site).Select(u => u.Id.ToString()).ToHashSet();
        var firstThere = entries1.Where(e => siteUnits.Contains(e.Unit)).Min(e => e.Entry.GetProperty("startUtc").GetDateTimeOffset());
        var closedFrom = firstThere > now.AddMinutes(15) ? firstThere.AddMinutes(-5) : now.AddMinutes(10);
        var closedTo = closedFrom.AddHours(2);
        Assert.Contains(entries1, e => siteUnits.Contains(e.Unit)
            && e.Entry.GetProperty("startUtc").GetDateTimeOffset() < closedTo && closedFrom < e.Entry.GetProperty("endUtc").GetDateTimeOffset());

        // A webhook receiver and an SSE client listen before the closure.
        var secret = "a-test-secret-of-enough-length";
        using var receiver = new WebhookReceiver();
        var observatory = api.ClientWith(keys[site]);
        var hook = await observatory.PostAsync("/api/webhooks", Bodies.Raw(JsonSerializer.Serialize(new { url = receiver.Url, secret })));
        Assert.Equal(HttpStatusCode.Created, hook.StatusCode);
        var hookId = JsonDocument.Parse(await hook.Content.ReadAsStringAsync()).RootElement.GetProperty("id").GetString();
        using var sseCancel = new CancellationTokenSource(TimeSpan.FromMinutes(3));
        var sseEvents = Channel.CreateUnbounded<(string Id, string Event, string Data)>();
        var sse = ServerSentEvents.ReadAsync(api.ClientWith(await api.KeyAsync(Triage.Storage.Access.Scope.Scheduler)), $"/api/plans/{night}/events", sseEvents.Writer, sseCancel.Token);

        // Other observatories cannot close this site.
        var other = keys.First(k => sites.First(s => s.Id == k.Key).Observatory != sites.First(s => s.Id == site).Observatory).Value;
        var refused = await api.ClientWith(other).PostAsync($"/api/sites/{site}/closures", Bodies.Raw(JsonSerializer.Serialize(new { fromUtc = closedFrom, toUtc = closedTo, reason = "weather" })));
        Assert.Equal(HttpStatusCode.Forbidden, refused.StatusCode);

        var posted = DateTime.UtcNow;
        var closure = await observatory.PostAsync($"/api/sites/{site}/closures", Bodies.Raw(JsonSerializer.Serialize(new { fromUtc = closedFrom, toUtc = closedTo, reason = "weather" })));
        Assert.Equal(HttpStatusCode.Created, closure.StatusCode);

        // The replan comes by itself, records its trigger and avoids the closed span.
        var meta = await NightClockFactory.WaitForVersionAsync(scheduler, NightClockFactory.Night, 2, TimeSpan.FromMinutes(2));
        Assert.Equal("closure", meta.GetProperty("trigger").GetProperty("kind").GetString());
        var v2 = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night}?version=2")).RootElement;
        Assert.InRange(v2.GetProperty("version").GetProperty("plannedFrom").GetDateTimeOffset(), now, api.Clock.Now);
        foreach (var (unit, e) in NightClockFactory.Entries(v2).Where(x => siteUnits.Contains(x.Unit)))
        {
            var start = e.GetProperty("startUtc").GetDateTimeOffset();
            var end = e.GetProperty("endUtc").GetDateTimeOffset();
            Assert.False(start < closedTo && closedFrom < end, $"{Id(e)} on {unit} runs {start:HH:mm}–{end:HH:mm}, inside the closure");
        }

        // Candidates the closure pushed out of the plan wait again.
        var store = api.Services.GetRequiredService<CandidateStore>();
        var inV2 = NightClockFactory.Entries(v2).Select(e => Id(e.Entry)).ToHashSet();
        foreach (var dropped in entries1.Select(e => Id(e.Entry)).Where(id => !inV2.Contains(id)))
        {
            Assert.Equal("new", (await store.GetAsync(Guid.Parse(dropped)))!.Summary.State);
        }

        // The SSE client gets the version with its diff.
        var sseEvent = await ServerSentEvents.ReadUntilAsync(sseEvents.Reader, e => e.Event == "plan-version", TimeSpan.FromMinutes(1));
        var data = JsonDocument.Parse(sseEvent.Data).RootElement;
        Assert.Equal(2, data.GetProperty("version").GetInt32());
        Assert.Equal("closure", data.GetProperty("trigger").GetProperty("kind").GetString());
        Assert.Equal(sseEvent.Id, data.GetProperty("id").GetInt64().ToString(System.Globalization.CultureInfo.InvariantCulture));

        // The webhook receiver gets it too, signed with the shared secret.
        var delivery = await receiver.NextAsync(TimeSpan.FromMinutes(1));
        var eventId = delivery.Headers["Triage-Event-Id"]!;
        var timestamp = delivery.Headers["Triage-Timestamp"]!;
        var expected = "hmac-sha256=" + Convert.ToHexStringLower(HMACSHA256.HashData(Encoding.UTF8.GetBytes(secret), Encoding.UTF8.GetBytes($"{eventId}.{timestamp}.{delivery.Body}")));
        Assert.Equal(expected, delivery.Headers["Triage-Signature"]);
        Assert.Equal(2, JsonDocument.Parse(delivery.Body).RootElement.GetProperty("version").GetInt32());
        var log = JsonDocument.Parse(await observatory.GetStringAsync($"/api/webhooks/{hookId}/deliveries")).RootElement;
        await WaitAsync(async () => JsonDocument.Parse(await observatory.GetStringAsync($"/api/webhooks/{hookId}/deliveries")).RootElement
            .EnumerateArray().Any(d => d.GetProperty("status").GetString() == "delivered"), TimeSpan.FromSeconds(30));
        sseCancel.Cancel();
        await Task.WhenAny(sse, Task.Delay(2000));
        Assert.True((DateTime.UtcNow - posted) < TimeSpan.FromMinutes(2));
    }

    [Fact]
    public async Task Reports_DoneInDaylightIsRefused_LostOneIsAcceptedAndReplans()
    {
        var (scheduler, keys, _, units) = await api.ArrangeDemoAsync();
        api.Clock.Now = NightClockFactory.MidNight;
        var night = NightClockFactory.Night.AddDays(2);
        await NightClockFactory.RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(JsonSerializer.Serialize(new { night = night.ToString("yyyy-MM-dd") }))));
        var plan = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{night:yyyy-MM-dd}")).RootElement;
        var (unit, entry) = NightClockFactory.Entries(plan).First();
        var siteId = units.Single(u => u.Id.ToString() == unit).SiteId;
        var observatory = api.ClientWith(keys[siteId]);
        var slotStart = entry.GetProperty("startUtc").GetDateTimeOffset();

        // Ten hours before its slot is daylight at the site: refused, naming observedUtc.
        api.Clock.Now = slotStart.AddHours(1);
        var daylight = await observatory.PostAsync($"/api/candidates/{Id(entry)}/observations", Bodies.Raw(JsonSerializer.Serialize(new
        {
            spectrographId = unit, outcome = "done", achievedSnr = 20.0, observedUtc = slotStart.AddHours(-10),
        })));
        await Bodies.AssertProblemNamingAsync(daylight, 400, "observedUtc");

        // Lost to weather in its slot: accepted, no warning, and the night is replanned by itself.
        var lost = await observatory.PostAsync($"/api/candidates/{Id(entry)}/observations", Bodies.Raw(JsonSerializer.Serialize(new
        {
            spectrographId = unit, outcome = "weather", observedUtc = slotStart.AddMinutes(1),
        })));
        Assert.Equal(HttpStatusCode.OK, lost.StatusCode);
        var answer = JsonDocument.Parse(await lost.Content.ReadAsStringAsync()).RootElement;
        Assert.Equal(0, answer.GetProperty("warnings").GetArrayLength());
        var meta = await NightClockFactory.WaitForVersionAsync(scheduler, night, 2, TimeSpan.FromMinutes(2));
        Assert.Equal("report", meta.GetProperty("trigger").GetProperty("kind").GetString());
    }

    private static async Task WaitAsync(Func<Task<bool>> condition, TimeSpan timeout)
    {
        var until = DateTime.UtcNow + timeout;
        while (!await condition())
        {
            Assert.True(DateTime.UtcNow < until, "condition not met in time");
            await Task.Delay(200);
        }
    }

    /// <summary>A tiny HTTP receiver on a free local port that records each POST.</summary>
    private sealed class WebhookReceiver : IDisposable
    {
        private readonly HttpListener _listener = new();
        private readonly Channel<(System.Collections.Specialized.NameValueCollection Headers, string Body)> _received = Channel.CreateUnbounded<(System.Collections.Specialized.NameValueCollection, string)>();

        public WebhookReceiver()
        {
            var probe = new TcpListener(IPAddress.Loopback, 0);
            probe.Start();
            var port = ((IPEndPoint)probe.LocalEndpoint).Port;
            probe.Stop();
            Url = $"http://127.0.0.1:{port}/hook/";
            _listener.Prefixes.Add(Url);
            _listener.Start();
            _ = Task.Run(async () =>
            {
                while (_listener.IsListening)
                {
                    HttpListenerContext ctx;
                    try
                    {
                        ctx = await _listener.GetContextAsync();
                    }
                    catch (Exception e) when (e is HttpListenerException or ObjectDisposedException)
                    {
                        return;
                    }
                    using var body = new StreamReader(ctx.Request.InputStream);
                    var text = await body.ReadToEndAsync();
                    await _received.Writer.WriteAsync((ctx.Request.Headers, text));
                    ctx.Response.StatusCode = 204;
                    ctx.Response.Close();
                }
            });
        }

        public string Url { get; }

        public async Task<(System.Collections.Specialized.NameValueCollection Headers, string Body)> NextAsync(TimeSpan timeout)
        {
            using var cts = new CancellationTokenSource(timeout);
            return await _received.Reader.ReadAsync(cts.Token);
        }

        public void Dispose() => _listener.Close();
    }
}
