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
        await Task.Delay(1000); // the relay has read the outbox once
        var before = api.Log.Events.Count;
        api.Proxy.Cut();
        try
        {
            await Task.Delay(7000); // at its 2 s poll the relay tries about three times
        }
        finally
        {
            api.Proxy.Restore();
        }
        var lines = new List<LogEvent>();
        for (var i = 0; i < 100 && !lines.Any(e => e.Level == LogEventLevel.Information); i++)
        {
            await Task.Delay(100);
            lines = api.Log.Events.Skip(before).Where(e => e.Properties.TryGetValue("SourceContext", out var c)
                && c.ToString().Trim('"') == "Triage.Api.Events.PlanEventRelay").ToList();
        }

        Assert.True(lines.Count == 2, $"{lines.Count} relay lines: {string.Join(" | ", lines.Select(e => $"{e.Level} {e.MessageTemplate.Text}"))}");
        Assert.Equal((LogEventLevel.Warning, LogEventLevel.Information), (lines[0].Level, lines[1].Level));
        Assert.All(lines, e => Assert.Null(e.Exception));
    }
}
