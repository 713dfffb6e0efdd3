using System.Collections.Concurrent;
using System.Net;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Serilog.Core;
using Serilog.Events;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Operations;

/// <summary>Log events of one host, kept in memory.</summary>
public sealed class CapturedLog : ILogEventSink
{
    public ConcurrentQueue<LogEvent> Events { get; } = new();

    public void Emit(LogEvent logEvent) => Events.Enqueue(logEvent);

    /// <summary>The request-log lines ("HTTP … answered …") for a path.</summary>
    public IReadOnlyList<LogEvent> RequestLines(string path) => Events
        .Where(e => e.MessageTemplate.Text.StartsWith("HTTP ", StringComparison.Ordinal)
            && e.Properties.TryGetValue("RequestPath", out var p) && p.ToString().Trim('"') == path)
        .ToList();
}

/// <summary>A host that logs at Information into a <see cref="CapturedLog"/>.</summary>
public sealed class LogCaptureFactory : TriageApiFactory
{
    public CapturedLog Log { get; } = new();

    protected override IReadOnlyDictionary<string, string?> Settings => new Dictionary<string, string?>
    {
        ["Serilog:MinimumLevel:Default"] = "Information",
        ["Triage:Candidates:FitInBackground"] = "false",
    };

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.ConfigureTestServices(s => s.AddSingleton<ILogEventSink>(Log));
    }
}

/// <summary>
/// The request log states the status actually sent: a 400 or 413 is logged as such, without a
/// stack trace (it used to say "answered 500" with the binding exception).
/// </summary>
public sealed class RequestLogTests(LogCaptureFactory api) : IClassFixture<LogCaptureFactory>
{
    [Fact]
    public async Task BadBodies_AreLoggedWithTheStatusSent_WithoutException()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var malformed = await client.PostAsync("/api/sites", Bodies.Raw("{\"name\": "));
        Assert.Equal(HttpStatusCode.BadRequest, malformed.StatusCode);
        var huge = await client.PostAsync("/api/keys", Bodies.Raw("{\"name\":\"" + new string('x', 20_000) + "\"}"));
        Assert.Equal(HttpStatusCode.RequestEntityTooLarge, huge.StatusCode);

        await Task.Delay(200); // the log line is written as the response completes
        var siteLine = Assert.Single(api.Log.RequestLines("/api/sites"), e => e.Properties["RequestMethod"].ToString() == "\"POST\"");
        Assert.Equal("400", siteLine.Properties["StatusCode"].ToString());
        Assert.Null(siteLine.Exception);
        Assert.NotEqual(LogEventLevel.Error, siteLine.Level);
        var keyLine = Assert.Single(api.Log.RequestLines("/api/keys"));
        Assert.Equal("413", keyLine.Properties["StatusCode"].ToString());
        Assert.Null(keyLine.Exception);
    }
}
