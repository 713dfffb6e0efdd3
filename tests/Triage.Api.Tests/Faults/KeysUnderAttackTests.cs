using System.Net;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Serilog.Core;
using Triage.Api.Tests.Infrastructure;
using Triage.Api.Tests.Operations;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Faults;

/// <summary>A proxied host with a tight failed-authentication limit (5 per minute) and its log captured.</summary>
public sealed class AttackFactory : ProxiedDatabaseFactory
{
    public CapturedLog Log { get; } = new();

    protected override IReadOnlyDictionary<string, string?> Settings => new Dictionary<string, string?>
    {
        ["Serilog:MinimumLevel:Default"] = "Information",
        ["Triage:Access:FailuresPerWindow"] = "5",
        ["Triage:Access:WindowSeconds"] = "60",
    };

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.ConfigureTestServices(s => s.AddSingleton<ILogEventSink>(Log));
    }
}

/// <summary>
/// Keys under attack: an unknown key is remembered as unknown, and an address past the
/// failed-authentication limit is refused before any key lookup. Both are shown with the
/// database cut away: an answer that needed the database would be a 503.
/// </summary>
public sealed class KeysUnderAttackTests(AttackFactory api) : IClassFixture<AttackFactory>
{
    private static string MadeUpKey() => $"trk_{Guid.NewGuid():N}"[..16] + "_" + Guid.NewGuid().ToString("N");

    [Fact]
    public async Task UnknownKeyRepeated_AndMadeUpKeyFlood_CostNoDatabaseWork_OneLogLinePerBurst()
    {
        var repeated = MadeUpKey();
        Assert.Equal(HttpStatusCode.Unauthorized, (await api.ClientWith(repeated).GetAsync("/api/sites")).StatusCode);
        for (var i = 0; i < 4; i++)
        {
            Assert.Equal(HttpStatusCode.Unauthorized, (await api.ClientWith(MadeUpKey()).GetAsync("/api/sites")).StatusCode);
        }
        var linesBefore = api.Log.Events.Count;

        api.Proxy.Cut();
        try
        {
            var answers = new List<HttpResponseMessage>();
            for (var i = 0; i < 200; i++)
            {
                answers.Add(await api.ClientWith(MadeUpKey()).GetAsync("/api/sites"));
            }
            // The address reached its limit: refused with 429 and Retry-After, without asking the (absent) database.
            Assert.All(answers, a => Assert.Equal(HttpStatusCode.TooManyRequests, a.StatusCode));
            Assert.All(answers, a => Assert.NotNull(a.Headers.RetryAfter));
            Assert.Equal("application/problem+json", answers[0].Content.Headers.ContentType?.MediaType);

            await Task.Delay(300);
            // Request-log and authentication lines (the job worker's own complaints about the cut are not part of the burst).
            var burstLines = api.Log.Events.Skip(linesBefore)
                .Where(e => e.Properties.TryGetValue("SourceContext", out var source)
                    && (source.ToString().Contains("RequestLogging", StringComparison.Ordinal) || source.ToString().Contains("Access", StringComparison.Ordinal)))
                .Select(e => e.RenderMessage()).ToList();
            Assert.True(burstLines.Count <= 2, $"{burstLines.Count} log lines for one refusal burst: {string.Join(" | ", burstLines.Take(5))}");
        }
        finally
        {
            api.Proxy.Restore();
        }
    }

    [Fact]
    public async Task UnknownKey_IsRememberedAsUnknown_WhileAValidKeyStillWorks()
    {
        using var other = new AttackFactory();
        var scheduler = other.ClientWith(await other.KeyAsync(Scope.Scheduler));
        var unknown = MadeUpKey();
        Assert.Equal(HttpStatusCode.Unauthorized, (await other.ClientWith(unknown).GetAsync("/api/sites")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await scheduler.GetAsync("/api/sites")).StatusCode);

        other.Proxy.Cut();
        try
        {
            // Known to be unknown: refused at once, no lookup (a lookup would answer 503 now).
            Assert.Equal(HttpStatusCode.Unauthorized, (await other.ClientWith(unknown).GetAsync("/api/sites")).StatusCode);
        }
        finally
        {
            other.Proxy.Restore();
        }
    }
}
