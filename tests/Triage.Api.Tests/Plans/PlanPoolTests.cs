using System.IO.Compression;
using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.AspNetCore.Hosting;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Roster;
using Triage.Storage.Access;
using Triage.Storage.Calibrations;
using Triage.Storage.Roster;

namespace Triage.Api.Tests.Plans;

/// <summary>A host whose plan job keeps at most 30 candidates in its pool.</summary>
public sealed class SmallPoolFactory : IsolatedDatabaseFactory
{
    public const int Pool = 30;

    private readonly SemaphoreSlim _gate = new(1, 1);
    private HttpClient? _scheduler;

    /// <summary>Loads the demo network, calibration and 150 candidates once per fixture; a scheduler's client.</summary>
    public async Task<HttpClient> ArrangeOnceAsync(Func<Task<HttpClient>> arrange)
    {
        await _gate.WaitAsync();
        try
        {
            return _scheduler ??= await arrange();
        }
        finally
        {
            _gate.Release();
        }
    }

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.UseSetting("Triage:Planner:MaxPoolCandidates", Pool.ToString(System.Globalization.CultureInfo.InvariantCulture));
    }
}

/// <summary>
/// The bounded candidate pool and the paged plan reads through the API: 150 demo candidates, a
/// pool of 30, the cut recorded in the plan, the unassigned list read page by page, a second plan
/// keeping the first one's assignments in its pool, and the whole document compressed.
/// </summary>
public sealed class PlanPoolTests(SmallPoolFactory api) : IClassFixture<SmallPoolFactory>
{
    private const string Night = "2026-12-03";

    private Task<HttpClient> ArrangeAsync() => api.ArrangeOnceAsync(LoadAsync);

    private async Task<HttpClient> LoadAsync()
    {
        var now = DateTimeOffset.UtcNow;
        var (sites, spectrographs) = RosterJson.Parse(await File.ReadAllTextAsync(Repository.File("demo", "roster.json")));
        var roster = api.Services.GetRequiredService<RosterStore>();
        foreach (var s in sites)
        {
            await roster.InsertSiteAsync(s, now);
        }
        foreach (var s in spectrographs)
        {
            await roster.InsertSpectrographAsync(s, now);
        }
        await api.Services.GetRequiredService<CalibrationStore>().AddAsync(new NewCalibration(
            "synthetic", true, null, "test", null, null, await File.ReadAllTextAsync(Repository.File("demo", "calibration.json"))), true, now);
        var batch = JsonNode.Parse(await File.ReadAllTextAsync(Repository.File("demo", "candidates.json")))!.AsObject();
        var some = new JsonArray(batch["candidates"]!.AsArray().Take(150).Select(c => c!.DeepClone()).ToArray());
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var posted = await broker.PostAsync("/api/candidates/batches", Bodies.Json(new JsonObject { ["candidates"] = some }));
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
        return api.ClientWith(await api.KeyAsync(Scope.Scheduler));
    }

    private static async Task<int> PlanAsync(HttpClient client)
    {
        var accepted = await client.PostAsync("/api/plans", Bodies.Raw($$"""{"night":"{{Night}}","timeLimitSeconds":2}"""));
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString();
        for (var i = 0; i < 600; i++)
        {
            var job = JsonDocument.Parse(await client.GetStringAsync(jobUrl)).RootElement;
            var status = job.GetProperty("status").GetString();
            if (status == "succeeded")
            {
                return job.GetProperty("result").GetProperty("version").GetInt32();
            }
            Assert.True(status != "failed", job.GetProperty("error").GetString());
            await Task.Delay(200);
        }
        throw new TimeoutException("the plan job did not finish");
    }

    private static IEnumerable<string> Assigned(JsonElement plan) =>
        plan.GetProperty("spectrographs").EnumerateArray().SelectMany(q => q.GetProperty("queue").EnumerateArray()).Select(e => e.GetProperty("candidateId").GetString()!);

    [Fact]
    public async Task Plan_FloodAboveThePool_RecordsTheCut_PagesTheUnassigned_AndKeepsAssignmentsOnReplan()
    {
        var scheduler = await ArrangeAsync();

        var v1 = await PlanAsync(scheduler);
        var plan1 = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{Night}?version={v1}")).RootElement.GetProperty("plan");
        var pool = plan1.GetProperty("pool");
        Assert.Equal(150, pool.GetProperty("waiting").GetInt32());
        Assert.Equal(SmallPoolFactory.Pool, pool.GetProperty("kept").GetInt32());
        Assert.Equal(150, pool.GetProperty("kept").GetInt32() + pool.GetProperty("neverVisible").GetInt32() + pool.GetProperty("noMagnitude").GetInt32()
            + pool.GetProperty("tooFaint").GetInt32() + pool.GetProperty("belowCut").GetInt32());
        Assert.True(pool.GetProperty("belowCut").GetInt32() > 0);
        Assert.Contains("cut at", pool.GetProperty("reason").GetString(), StringComparison.Ordinal);
        // The planner saw the pool only.
        Assert.Equal(SmallPoolFactory.Pool, plan1.GetProperty("summary").GetProperty("candidates").GetInt32());
        var assigned1 = Assigned(plan1).ToHashSet();
        Assert.NotEmpty(assigned1);

        // The summary names the queues without carrying them.
        var summary = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{Night}/summary")).RootElement;
        Assert.Equal(v1, summary.GetProperty("version").GetProperty("version").GetInt32());
        Assert.Equal(SmallPoolFactory.Pool, summary.GetProperty("pool").GetProperty("kept").GetInt32());
        var lines = summary.GetProperty("queues").EnumerateArray().ToList();
        Assert.Equal(plan1.GetProperty("spectrographs").GetArrayLength(), lines.Count);
        Assert.Equal(assigned1.Count, lines.Sum(l => l.GetProperty("observations").GetInt32()));
        var busiest = lines.MaxBy(l => l.GetProperty("observations").GetInt32());
        var queue = JsonDocument.Parse(await scheduler.GetStringAsync(busiest.GetProperty("url").GetString())).RootElement;
        Assert.Equal(busiest.GetProperty("observations").GetInt32(), queue.GetProperty("queue").GetArrayLength());

        // The unassigned list, seven at a time, is the document's list in order.
        var expected = plan1.GetProperty("unassigned").EnumerateArray().Select(u => u.GetProperty("candidateId").GetString()).ToList();
        Assert.Equal(expected.Count, summary.GetProperty("unassignedCount").GetInt32());
        var paged = new List<string?>();
        string? next = $"/api/plans/{Night}/unassigned?limit=7";
        var pages = 0;
        while (next is not null)
        {
            var page = JsonDocument.Parse(await scheduler.GetStringAsync(next)).RootElement;
            Assert.Equal(expected.Count, page.GetProperty("total").GetInt32());
            var items = page.GetProperty("items").EnumerateArray().ToList();
            Assert.InRange(items.Count, 1, 7);
            paged.AddRange(items.Select(u => u.GetProperty("candidateId").GetString()));
            next = page.GetProperty("next").ValueKind == JsonValueKind.Null ? null : page.GetProperty("next").GetString();
            pages++;
        }
        Assert.Equal(expected, paged);
        Assert.Equal((expected.Count + 6) / 7, pages);

        // A second plan keeps every candidate the first one assigned in its pool, whatever their bound.
        var v2 = await PlanAsync(scheduler);
        var plan2 = JsonDocument.Parse(await scheduler.GetStringAsync($"/api/plans/{Night}?version={v2}")).RootElement.GetProperty("plan");
        Assert.Equal(v1 + 1, v2);
        Assert.Equal(assigned1.Count, plan2.GetProperty("pool").GetProperty("keptFromPreviousVersion").GetInt32());
        var inPool2 = Assigned(plan2).Concat(plan2.GetProperty("unassigned").EnumerateArray().Select(u => u.GetProperty("candidateId").GetString()!)).ToHashSet();
        Assert.Superset(assigned1, inPool2);
    }

    [Fact]
    public async Task Unassigned_CursorNotHandedOut_Is400NamingTheCursor()
    {
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));

        var response = await scheduler.GetAsync($"/api/plans/{Night}/unassigned?cursor=not-a-cursor");

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        Assert.Contains("cursor", await response.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        Assert.Equal(HttpStatusCode.BadRequest, (await scheduler.GetAsync($"/api/plans/{Night}/unassigned?limit=0")).StatusCode);
    }

    [Theory]
    [InlineData("br")]
    [InlineData("gzip")]
    public async Task Plan_AskedCompressed_ComesCompressedAndDecodesToTheSameDocument(string encoding)
    {
        var scheduler = await ArrangeAsync();
        if ((await scheduler.GetAsync($"/api/plans/{Night}")).StatusCode == HttpStatusCode.NotFound)
        {
            await PlanAsync(scheduler);
        }
        var plain = await scheduler.GetStringAsync($"/api/plans/{Night}");

        using var request = new HttpRequestMessage(HttpMethod.Get, $"/api/plans/{Night}");
        request.Headers.AcceptEncoding.ParseAdd(encoding);
        using var response = await scheduler.SendAsync(request);
        var packed = await response.Content.ReadAsByteArrayAsync();

        Assert.Equal(encoding, Assert.Single(response.Content.Headers.ContentEncoding));
        await using Stream decoder = encoding == "br"
            ? new BrotliStream(new MemoryStream(packed), CompressionMode.Decompress)
            : new GZipStream(new MemoryStream(packed), CompressionMode.Decompress);
        var text = await new StreamReader(decoder).ReadToEndAsync();
        Assert.Equal(plain, text);
        Assert.True(packed.Length * 2 < System.Text.Encoding.UTF8.GetByteCount(plain), $"{packed.Length} bytes compressed of {plain.Length}");
    }
}
