using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;

namespace Triage.Api.Tests.Operations;

/// <summary>
/// Each host logs into its own logger. With the process-wide static logger, the last host built took every host's
/// lines and the first host disposed silenced them all (a fault test then waited two minutes for a warning that had
/// gone to another host's sinks).
/// </summary>
public sealed class HostLoggerTests
{
    [Fact]
    public async Task AHostKeepsItsLines_WhenAnotherHostIsBuiltAndDisposed()
    {
        // The first host's loggers are made after the second host is built, as a hosted service's are when test
        // classes start their hosts side by side.
        await using var first = new LogCaptureFactory();
        _ = first.Server;
        var second = new LogCaptureFactory();
        _ = second.Server;

        first.Services.GetRequiredService<ILogger<HostLoggerTests>>().LogInformation("line {Marker}", "while-both-run");
        second.Services.GetRequiredService<ILogger<HostLoggerTests>>().LogInformation("line {Marker}", "second-host");
        await second.DisposeAsync();
        first.Services.GetRequiredService<ILoggerFactory>().CreateLogger("Triage.Later").LogInformation("line {Marker}", "after-second-disposed");

        Assert.Equal(["while-both-run", "after-second-disposed"], Markers(first.Log));
        Assert.Equal(["second-host"], Markers(second.Log));
    }

    private static List<string> Markers(CapturedLog log) => log.Events
        .Where(e => e.Properties.ContainsKey("Marker"))
        .Select(e => e.Properties["Marker"].ToString().Trim('"'))
        .ToList();
}
