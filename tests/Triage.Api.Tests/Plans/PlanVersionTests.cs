using System.Text.Json;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Planning;
using Triage.Storage.Access;
using Triage.Storage.Plans;

namespace Triage.Api.Tests.Plans;

/// <summary>Stored plan versions read back through the API: whole, per queue (JSON and CSV), and as a diff.</summary>
[Collection(ApiCollection.Name)]
public sealed class PlanVersionTests(TriageApiFactory api)
{
    private static int _nightOffset;

    /// <summary>
    /// A night no other test of this run uses, inside the accepted years (1901–2099); versions an
    /// earlier run stored for it are removed first, so numbering starts at 1.
    /// </summary>
    private DateOnly FreshNight()
    {
        var night = new DateOnly(1901, 1, 1).AddDays((Interlocked.Increment(ref _nightOffset) * 7919 + Random.Shared.Next(0, 72_000)) % 72_000);
        using var conn = api.DataSource.OpenConnection();
        using var cmd = new Npgsql.NpgsqlCommand("DELETE FROM plans WHERE night = @night", conn);
        cmd.Parameters.AddWithValue("night", night);
        cmd.ExecuteNonQuery();
        return night;
    }

    private static QueueEntry Entry(string id, DateTimeOffset start, double accuracy) => new(
        id, start, start.AddMinutes(20), 900, 1.3, 19.2, 25, accuracy, 0.5, accuracy, $"best value for {id}", [], null, 0);

    private static NightPlan Plan(DateOnly night, params (string Spectrograph, QueueEntry[] Entries)[] queues) => new(
        NightPlan.AdvisoryStatement,
        PlanObjective.Accuracy,
        queues.Select(q => new SpectrographQueue(q.Spectrograph, "unit " + q.Spectrograph, "Test Site", 500, 36000, q.Entries.Length * 1200, 10, 0.1, q.Entries)).ToList(),
        [],
        new PlanSummary(5, queues.Sum(q => q.Entries.Length), queues.Sum(q => q.Entries.Sum(e => e.ExpectedAccuracy)), 1, 1, 1.1, 0.05, PlanStatus.Feasible, 20, 10, 8),
        []) { Night = night };

    private async Task<PlanVersionRow> StoreAsync(NightPlan plan) =>
        await api.Services.GetRequiredService<PlanStore>().AddVersionAsync(new NewPlanVersion(
            plan.Night!.Value, DateTimeOffset.UtcNow, "accuracy", plan.Summary.Status.ToString(), plan.Summary.ExpectedCorrectIdentifications,
            plan.Summary.Assigned, null, null, PlanJson.Serialize(plan)), DateTimeOffset.UtcNow);

    [Fact]
    public async Task Versions_AreNumberedInOrder_AndTheLatestIsActive()
    {
        var night = FreshNight();
        var t0 = new DateTimeOffset(night.ToDateTime(new TimeOnly(23, 0)), TimeSpan.Zero);
        var spec = Guid.NewGuid().ToString();
        var v1 = await StoreAsync(Plan(night, (spec, [Entry("c1", t0, 0.8), Entry("c2", t0.AddMinutes(30), 0.6)])));
        var v2 = await StoreAsync(Plan(night, (spec, [Entry("c2", t0.AddMinutes(90), 0.6), Entry("c3", t0, 0.7)])));
        Assert.Equal(1, v1.Version);
        Assert.Equal(2, v2.Version);

        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var active = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night:yyyy-MM-dd}")).RootElement;
        Assert.Equal(2, active.GetProperty("version").GetProperty("version").GetInt32());
        Assert.Contains("advisory", active.GetProperty("advisory").GetString(), StringComparison.OrdinalIgnoreCase);
        var first = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night:yyyy-MM-dd}?version=1")).RootElement;
        Assert.Equal("c1", first.GetProperty("plan").GetProperty("spectrographs")[0].GetProperty("queue")[0].GetProperty("candidateId").GetString());

        var versions = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night:yyyy-MM-dd}/versions")).RootElement;
        Assert.Equal([1, 2], versions.EnumerateArray().Select(v => v.GetProperty("version").GetInt32()));
    }

    [Fact]
    public async Task ConcurrentVersions_GetDistinctConsecutiveNumbers()
    {
        var night = FreshNight();
        var t0 = new DateTimeOffset(night.ToDateTime(new TimeOnly(23, 0)), TimeSpan.Zero);
        var rows = await Task.WhenAll(Enumerable.Range(0, 6).Select(i => StoreAsync(Plan(night, ("s", [Entry($"c{i}", t0, 0.5)])))));
        Assert.Equal(Enumerable.Range(1, 6), rows.Select(r => r.Version).Order());
    }

    [Fact]
    public async Task Queue_AsJsonAndCsv_ListsTheEntriesInOrder()
    {
        var night = FreshNight();
        var t0 = new DateTimeOffset(night.ToDateTime(new TimeOnly(23, 0)), TimeSpan.Zero);
        var spec = Guid.NewGuid().ToString();
        await StoreAsync(Plan(night, (spec, [Entry("alpha", t0, 0.8), Entry("beta", t0.AddMinutes(25), 0.6)]), ("other", [Entry("gamma", t0, 0.4)])));
        var client = api.ClientWith(await api.KeyAsync(Scope.Observatory));

        var queue = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night:yyyy-MM-dd}/queues/{spec}")).RootElement;
        Assert.Equal(["alpha", "beta"], queue.GetProperty("queue").EnumerateArray().Select(e => e.GetProperty("candidateId").GetString()));

        var csv = await client.GetAsync($"/api/plans/{night:yyyy-MM-dd}/queues/{spec}?format=csv");
        Assert.Equal("text/csv", csv.Content.Headers.ContentType?.MediaType);
        var lines = (await csv.Content.ReadAsStringAsync()).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.StartsWith("# Advisory", lines[0], StringComparison.Ordinal);
        Assert.StartsWith("position,candidate_id,start_utc", lines[1], StringComparison.Ordinal);
        Assert.StartsWith($"1,\"alpha\",{t0.UtcDateTime:yyyy-MM-ddTHH:mm:ss}Z", lines[2], StringComparison.Ordinal);
        Assert.Equal(4, lines.Length);

        await Bodies.AssertProblemNamingAsync(await client.GetAsync($"/api/plans/{night:yyyy-MM-dd}/queues/nowhere"), 404, "spectrographId");
        await Bodies.AssertProblemNamingAsync(await client.GetAsync($"/api/plans/{night:yyyy-MM-dd}/queues/{spec}?format=xml"), 400, "format");
    }

    [Fact]
    public async Task Diff_ReportsAddedRemovedMovedAndRetimed()
    {
        var night = FreshNight();
        var t0 = new DateTimeOffset(night.ToDateTime(new TimeOnly(23, 0)), TimeSpan.Zero);
        await StoreAsync(Plan(night, ("a", [Entry("stay", t0, 0.8), Entry("gone", t0.AddMinutes(30), 0.5), Entry("late", t0.AddMinutes(60), 0.5)]), ("b", [Entry("hop", t0, 0.5)])));
        await StoreAsync(Plan(night, ("a", [Entry("stay", t0, 0.8), Entry("hop", t0.AddMinutes(30), 0.5), Entry("late", t0.AddMinutes(120), 0.5)]), ("b", [Entry("new", t0, 0.5)])));
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));

        var diff = JsonDocument.Parse(await client.GetStringAsync($"/api/plans/{night:yyyy-MM-dd}/diff?from=1&to=2")).RootElement;

        var changes = diff.GetProperty("changes").EnumerateArray()
            .ToDictionary(c => c.GetProperty("candidateId").GetString()!, c => c.GetProperty("kind").GetString());
        Assert.Equal(4, changes.Count);
        Assert.Equal("added", changes["new"]);
        Assert.Equal("removed", changes["gone"]);
        Assert.Equal("moved", changes["hop"]);
        Assert.Equal("retimed", changes["late"]);
        await Bodies.AssertProblemNamingAsync(await client.GetAsync($"/api/plans/{night:yyyy-MM-dd}/diff?from=7"), 404, "from");
    }

    [Theory]
    [InlineData("{\"objective\":\"accuracy\"}", "night")]
    [InlineData("{\"night\":\"2026-13-40\"}", "night")]
    [InlineData("{\"night\":\"2026-12-03\",\"objective\":\"fame\"}", "objective")]
    [InlineData("{\"night\":\"2026-12-03\",\"timeLimitSeconds\":0}", "timeLimitSeconds")]
    [InlineData("{\"night\":\"2026-12-03\",\"timeLimitSeconds\":9999}", "timeLimitSeconds")]
    [InlineData("{\"night\":\"2026-12-03\",\"maxChurnShare\":0}", "maxChurnShare")]
    [InlineData("{\"night\":\"2026-12-03\",\"maxChurnShare\":1.5}", "maxChurnShare")]
    [InlineData("{\"night\":\"2026-12-03\",\"fromUtc\":\"yesterday\"}", "fromUtc")]
    public async Task PlanRequest_BadInput_IsProblemNamingTheField(string body, string field)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        await Bodies.AssertProblemNamingAsync(await client.PostAsync("/api/plans", Bodies.Raw(body)), 400, field);
    }

    [Fact]
    public async Task PlanRequest_NeedsSchedulerScope_AndUnknownNightIs404()
    {
        var broker = api.ClientWith(await api.KeyAsync(Scope.Broker));
        Assert.Equal(403, (int)(await broker.PostAsync("/api/plans", Bodies.Raw("{\"night\":\"2026-12-03\"}"))).StatusCode);
        await Bodies.AssertProblemNamingAsync(await broker.GetAsync("/api/plans/1900-01-02"), 404, "night");
        await Bodies.AssertProblemNamingAsync(await broker.GetAsync("/api/plans/2101-01-01"), 400, "night");
        await Bodies.AssertProblemNamingAsync(await broker.GetAsync("/api/plans/tonight"), 400, "night");
    }
}
