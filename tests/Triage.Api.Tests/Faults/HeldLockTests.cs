using System.Diagnostics;
using System.Net;
using Dapper;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Faults;

/// <summary>A host whose statements wait at most one second for a lock.</summary>
public sealed class ShortLockFactory : ProxiedDatabaseFactory
{
    protected override IReadOnlyDictionary<string, string?> Settings => new Dictionary<string, string?>
    {
        ["Triage:Database:LockTimeoutSeconds"] = "1",
    };
}

/// <summary>
/// One table locked by someone else cannot starve the pool: requests that need the table answer
/// 503 with Retry-After once the lock timeout passes, and unrelated reads and the health checks
/// keep answering while the lock is held.
/// </summary>
public sealed class HeldLockTests(ShortLockFactory api) : IClassFixture<ShortLockFactory>
{
    [Fact]
    public async Task HeldTableLock_BlockedRequestsAre503_UnrelatedReadsAndHealthStillAnswer()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync("/api/sites")).StatusCode);

        await using var holder = await api.Direct.OpenConnectionAsync();
        await using var tx = await holder.BeginTransactionAsync();
        await holder.ExecuteAsync("LOCK TABLE sites IN ACCESS EXCLUSIVE MODE", transaction: tx);

        // More blocked requests than the pool has connections (24).
        var blocked = Enumerable.Range(0, 40).Select(_ => client.GetAsync("/api/sites")).ToList();
        await Task.Delay(200);
        var clock = Stopwatch.StartNew();
        var unrelated = await client.GetAsync("/api/jobs");
        var live = await api.CreateClient().GetAsync("/health/live");
        var ready = await api.CreateClient().GetAsync("/health/ready");
        var waited = clock.Elapsed;

        Assert.Equal(HttpStatusCode.OK, unrelated.StatusCode);
        Assert.Equal(HttpStatusCode.OK, live.StatusCode);
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
        Assert.True(waited < TimeSpan.FromSeconds(8), $"unrelated requests waited {waited.TotalSeconds:0.0} s");
        foreach (var answer in await Task.WhenAll(blocked))
        {
            Assert.Equal(HttpStatusCode.ServiceUnavailable, answer.StatusCode);
            Assert.NotNull(answer.Headers.RetryAfter);
        }
        await tx.RollbackAsync();
        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync("/api/sites")).StatusCode);
    }
}
