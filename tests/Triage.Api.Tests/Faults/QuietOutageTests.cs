using Serilog.Events;

namespace Triage.Api.Tests.Faults;

/// <summary>
/// The plan-event relay through a database outage: one warning when the database goes and one line when it is back,
/// not an error with a stack trace at every poll (the long fault run logged 25 of those in one run before).
/// </summary>
public sealed class QuietOutageTests(AttackFactory api) : IClassFixture<AttackFactory>
{
    [Fact]
    public async Task PlanEventRelay_LogsOneLineWhenTheDatabaseGoes_AndOneWhenItIsBack()
    {
        _ = api.Server;
        await Task.Delay(1000);
        var before = api.Log.Events.Count;
        api.Proxy.Cut();
        try
        {
            await WaitForAsync(before, lines => lines.Count >= 1);
            // Several more 2 s polls fail while the database stays away.
            await Task.Delay(6000);
        }
        finally
        {
            api.Proxy.Restore();
        }
        await WaitForAsync(before, lines => lines.Any(e => e.Level == LogEventLevel.Information));
        await Task.Delay(4000); // and a few good polls

        var all = RelayLines(before);
        Assert.True(all.Count == 2, $"{all.Count} relay lines: {string.Join(" | ", all.Select(e => $"{e.Level} {e.MessageTemplate.Text}"))}");
        Assert.Equal((LogEventLevel.Warning, LogEventLevel.Information), (all[0].Level, all[1].Level));
        Assert.All(all, e => Assert.Null(e.Exception));
    }

    private List<LogEvent> RelayLines(int from) => api.Log.Events.Skip(from).Where(e => e.Properties.TryGetValue("SourceContext", out var c)
        && c.ToString().Trim('"') == "Triage.Api.Events.PlanEventRelay").ToList();

    // A statement in flight when the relay is cut can take up to the connection's own limits to fail (Npgsql defaults:
    // 15 s to connect, 30 s per command), and a loaded test machine stretches both: wait well past their sum.
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(120);

    private async Task WaitForAsync(int from, Func<List<LogEvent>, bool> condition)
    {
        var until = DateTime.UtcNow + Patience;
        while (DateTime.UtcNow < until && !condition(RelayLines(from)))
        {
            await Task.Delay(100);
        }
        var recent = api.Log.Events.Skip(from).TakeLast(8).Select(e => $"{e.Level} {e.MessageTemplate.Text}");
        Assert.True(condition(RelayLines(from)),
            $"relay lines so far: {string.Join(" | ", RelayLines(from).Select(e => $"{e.Level} {e.MessageTemplate.Text}"))}; last log lines: {string.Join(" | ", recent)}");
    }
}
