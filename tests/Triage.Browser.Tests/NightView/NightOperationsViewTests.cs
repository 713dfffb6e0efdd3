using System.Net.Http.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Playwright;
using Triage.Browser.Tests.Infrastructure;
using Triage.Core.Planning;
using Triage.Storage.Plans;

namespace Triage.Browser.Tests.NightView;

/// <summary>
/// Night operations in the night view: closures drawn as shaded spans where the API puts them, the live
/// indicator following the event stream (a new version shows without waiting for the periodic check), and the
/// operator queue printable from the page. Screenshots at 1400 and 800 px wide.
/// </summary>
[Collection(BrowserCollection.Name)]
public sealed class NightOperationsViewTests(NightViewHost host)
{
    private static async Task ShootAsync(ViewSession view, string name)
    {
        foreach (var width in new[] { 1400, 800 })
        {
            await view.Page.SetViewportSizeAsync(width, 900);
            await view.ScreenshotAsync($"{name}-{width}");
        }
    }

    /// <summary>Opens tonight with the periodic check set to 10 minutes, so that only the live stream can bring news quickly.</summary>
    private async Task<ViewSession> OpenSlowPollingAsync(NightScenario s)
    {
        var view = await ViewSession.OpenAsync(host);
        await view.Page.GotoAsync(new Uri(host.Address, $"/?night={s.NightText}&poll=600#/tonight").ToString());
        await view.Page.FillAsync("#key", s.AdminKey);
        await view.Page.ClickAsync("#signin button[type=submit]");
        await view.WaitReadyAsync("tonight");
        return view;
    }

    [Fact]
    public async Task Closure_IsShadedOnTheLanesOfItsSite_OverTheClosedSpan()
    {
        var s = await NightScenario.CreateAsync(host);
        var admin = host.ClientWith(s.AdminKey);
        var from = s.Evening.AddMinutes(15);
        var to = s.Evening.AddMinutes(75);
        var posted = await admin.PostAsJsonAsync($"/api/sites/{s.SiteId}/closures", new { fromUtc = from, toUtc = to, reason = "weather", note = "cloud bank" });
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());
        await using var view = await ViewSession.SignedInAsync(host, s);

        // One shaded span per lane (the whole site is closed), over the closed quarter-hour to 75 minutes.
        var spans = view.Page.Locator(".lane:not(.axis) .closure");
        Assert.Equal(2, await spans.CountAsync());
        Assert.Contains("weather", await spans.First.GetAttributeAsync("title") ?? "", StringComparison.Ordinal);
        // Against the first lane's blocks: [0] runs 0–30 min, [2] runs 40–70 min after the evening mark.
        var closure = (await spans.First.BoundingBoxAsync())!;
        var a = (await view.Page.Locator($".block[data-candidate=\"{s.CandidateIds[0]}\"]").BoundingBoxAsync())!;
        var b = (await view.Page.Locator($".block[data-candidate=\"{s.CandidateIds[2]}\"]").BoundingBoxAsync())!;
        var pxPerMinute = (b.X - a.X) / 40.0;
        Assert.InRange(closure.X, a.X + 14 * pxPerMinute, a.X + 16 * pxPerMinute);
        Assert.InRange(closure.X + closure.Width, a.X + 74 * pxPerMinute, a.X + 76 * pxPerMinute);
        Assert.Contains("closed", await view.Page.InnerTextAsync(".legend"), StringComparison.Ordinal);
        await ShootAsync(view, "tonight-closure");
        Assert.Empty(view.ConsoleErrors);
    }

    [Fact]
    public async Task LiveIndicator_FollowsTheEventStream_AndShowsANewVersionAtOnce()
    {
        var s = await NightScenario.CreateAsync(host);
        await using var view = await OpenSlowPollingAsync(s);
        await view.Page.WaitForSelectorAsync(".live-indicator[data-live=\"live\"]", new PageWaitForSelectorOptions { Timeout = 15000 });

        // A new version stored with its event (as a plan job does) reaches the page through the stream.
        var t0 = s.Evening;
        var plan = new NightPlan(NightPlan.AdvisoryStatement, PlanObjective.Accuracy,
            [new SpectrographQueue(s.SpectrographIds[0], s.SpectrographNames[0], "Test Mesa", 90, 8 * 3600, 1800, 10, 0.1, [NightScenario.Entry(s.CandidateIds[3], t0.AddMinutes(5), 20.8)])],
            [], new PlanSummary(4, 1, 0.72, 1, 1, 1.1, 0.05, PlanStatus.Feasible, 20, 10, 8), []) { Night = s.Night };
        var store = host.Services.GetRequiredService<PlanStore>();
        await store.AddVersionAsync(new NewPlanVersion(s.Night, t0, "accuracy", "feasible", 0.72, 1, null, null, PlanJson.Serialize(plan))
        {
            TriggerKind = "closure",
            EventBody = version => Triage.Api.Events.PlanEventBody.Serialize(s.Night, version, version - 1, DateTimeOffset.UtcNow, t0, "closure", "test", null, [], plan),
        }, DateTimeOffset.UtcNow);

        await view.Page.WaitForSelectorAsync(".meta:has-text('Plan version 2')", new PageWaitForSelectorOptions { Timeout = 15000 });
        Assert.Contains("version 2", await view.Page.InnerTextAsync(".live-indicator"), StringComparison.Ordinal);
        Assert.Equal("live", await view.Page.GetAttributeAsync(".live-indicator", "data-live"));
        Assert.Equal([s.CandidateIds[3]], await view.Page.EvalOnSelectorAllAsync<string[]>(".board .block[data-candidate]", "bs => bs.map(b => b.dataset.candidate)"));
        await ShootAsync(view, "tonight-live");
        Assert.Empty(view.ConsoleErrors);
    }

    [Fact]
    public async Task OperatorQueue_PrintsFromThePage_AndTheNightSheetDownloads()
    {
        var s = await NightScenario.CreateAsync(host);
        await using var view = await ViewSession.SignedInAsync(host, s);
        await view.Page.EvaluateAsync("() => { window.print = () => { window.printed = (window.printed || 0) + 1; }; }");
        await view.Page.SelectOptionAsync("#print-unit", s.SpectrographIds[1]);
        await view.Page.ClickAsync("#print-queue");
        await view.Page.WaitForSelectorAsync(".print-queue table", new PageWaitForSelectorOptions { State = WaitForSelectorState.Attached });
        Assert.Equal(1, await view.Page.EvaluateAsync<int>("() => window.printed"));

        // In print media only the queue shows: its rows are the unit's entries with their broker ids, in order.
        await view.Page.EmulateMediaAsync(new PageEmulateMediaOptions { Media = Media.Print });
        Assert.True(await view.Page.IsVisibleAsync(".print-queue"));
        Assert.True(await view.Page.IsHiddenAsync(".board"));
        var rows = await view.Page.EvalOnSelectorAllAsync<string[]>(".print-queue tbody tr td:nth-child(3)", "cells => cells.map(c => c.textContent)");
        Assert.Equal([s.BrokerIds[1], s.BrokerIds[3]], rows);
        var queue = await host.ClientWith(s.AdminKey).GetFromJsonAsync<JsonObject>($"/api/plans/{s.NightText}/queues/{s.SpectrographIds[1]}");
        Assert.Equal(queue!["queue"]!.AsArray().Count, rows.Length);
        await ShootAsync(view, "operator-queue-print");
        await view.Page.EmulateMediaAsync(new PageEmulateMediaOptions { Media = Media.Screen });

        var download = await view.Page.RunAndWaitForDownloadAsync(() => view.Page.ClickAsync("#night-sheet"));
        var path = await download.PathAsync();
        var sheet = await File.ReadAllTextAsync(path!);
        Assert.Contains("NIGHT SHEET", sheet, StringComparison.Ordinal);
        Assert.Contains(s.BrokerIds[1], sheet, StringComparison.Ordinal);
        Assert.Empty(view.ConsoleErrors);
    }
}
