using Dapper;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Jobs;

namespace Triage.Api.Tests.Jobs;

/// <summary>
/// The life of a job split into parts, on kinds no worker runs (so the test moves every state itself): the split is
/// idempotent; a parent waiting for open parts is never taken for dead although it beats no heartbeat; a dead part
/// (stale heartbeat) is queued again; a failed part fails its parent and withdraws the parts still queued.
/// </summary>
public sealed class JobPartsTests(IsolatedDatabaseFactory api) : IClassFixture<IsolatedDatabaseFactory>
{
    private const string ParentKind = "test-split-parent";
    private const string PartKind = "test-split-part";

    [Fact]
    public async Task SplitJob_WaitsForItsParts_DeadPartIsRequeued_FailedPartFailsTheParent()
    {
        var jobs = new JobStore(api.DataSource);
        var now = DateTimeOffset.UtcNow;
        var parent = await jobs.EnqueueAsync(ParentKind, """{"n":3}""", null, now);
        Assert.Equal(parent, (await jobs.ClaimNextAsync([ParentKind], now))!.Id);

        string[] inputs = ["""{"i":0}""", """{"i":1}""", """{"i":2}"""];
        Assert.Equal(3, await jobs.SplitIntoPartsAsync(parent, PartKind, inputs, "3 parts", now));
        Assert.Equal(3, await jobs.SplitIntoPartsAsync(parent, PartKind, inputs, "3 parts", now)); // ran again: no more parts
        await using var conn = await api.DataSource.OpenConnectionAsync();
        var parts = (await conn.QueryAsync<(Guid Id, int Part, string Status)>(
            "SELECT id, part, status FROM jobs WHERE parent_id = @parent ORDER BY part", new { parent })).ToList();
        Assert.Equal([0, 1, 2], parts.Select(p => p.Part));
        Assert.All(parts, p => Assert.Equal("queued", p.Status));

        // The parent's heartbeat is an hour old, but its parts are open: recovery leaves it running.
        await conn.ExecuteAsync("UPDATE jobs SET heartbeat_at = @old WHERE id = @parent", new { parent, old = now.AddHours(-1) });
        await jobs.RecoverInterruptedAsync(TimeSpan.FromMinutes(1), now);
        Assert.Equal(JobStatus.Running, (await jobs.GetAsync(parent))!.Status);

        // Part 0's worker died: its heartbeat goes stale and recovery queues it again.
        var claimed = (await jobs.ClaimNextAsync([PartKind], now))!;
        Assert.Equal(parts[0].Id, claimed.Id);
        await conn.ExecuteAsync("UPDATE jobs SET heartbeat_at = @old WHERE id = @id", new { id = claimed.Id, old = now.AddMinutes(-5) });
        Assert.True(await jobs.RecoverInterruptedAsync(TimeSpan.FromMinutes(1), now) >= 1);
        var requeued = (await jobs.GetAsync(claimed.Id))!;
        Assert.Equal((JobStatus.Queued, 1), (requeued.Status, requeued.Attempts));
        Assert.Equal(JobStatus.Running, (await jobs.GetAsync(parent))!.Status);

        // Part 1 fails: the parent fails naming it, and the parts still queued are withdrawn.
        Assert.Equal(parts[0].Id, (await jobs.ClaimNextAsync([PartKind], now))!.Id);
        Assert.Equal(parts[1].Id, (await jobs.ClaimNextAsync([PartKind], now))!.Id);
        await jobs.FailAsync(parts[1].Id, "the library was refused", now);
        var failedParent = (await jobs.GetAsync(parent))!;
        Assert.Equal(JobStatus.Failed, failedParent.Status);
        Assert.Equal("part 1 failed: the library was refused", failedParent.Error);
        var after = (await conn.QueryAsync<(int Part, string Status, string? Error)>(
            "SELECT part, status, error FROM jobs WHERE parent_id = @parent ORDER BY part", new { parent })).ToList();
        Assert.Equal("running", after[0].Status); // still running: it finds its parent ended when it stores
        Assert.Equal(("failed", "the library was refused"), (after[1].Status, after[1].Error));
        Assert.Equal(("failed", "withdrawn: the job it is part of failed"), (after[2].Status, after[2].Error));
    }
}
