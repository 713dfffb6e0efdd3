using System.Text.Json;
using Microsoft.Playwright;
using Triage.Browser.Tests.Infrastructure;

namespace Triage.Browser.Tests.NightView;

/// <summary>
/// The night view's time axes, block labels and block states at a wide (1400 px) and a narrow
/// (800 px) window: tick labels never overlap or leave their track, a label shows inside a block
/// only when it fits and otherwise on hover and focus, and the five states look different.
/// </summary>
[Collection(BrowserCollection.Name)]
public sealed class NightAxesTests(NightViewHost host)
{
    private sealed record Box(double Left, double Right, double Top, double Bottom, bool Visible);

    private static async Task<ViewSession> OpenAsync(NightViewHost host, NightScenario s, int width, DateTimeOffset? now = null)
    {
        var view = await ViewSession.OpenAsync(host);
        await view.Page.SetViewportSizeAsync(width, 900);
        if (now is { } t)
        {
            await view.Page.Clock.SetFixedTimeAsync(t.UtcDateTime);
        }
        await view.SignInAsync(host, s.AdminKey, s.NightText);
        await view.WaitReadyAsync("tonight");
        return view;
    }

    private static async Task<List<Box>> LabelsAsync(IPage page, string axisSelector) =>
        JsonSerializer.Deserialize<List<Box>>(await page.EvalOnSelectorAsync<string>(axisSelector, """
            axis => JSON.stringify([...axis.querySelectorAll('.tick-label')].map(l => {
              const r = l.getBoundingClientRect();
              return { Left: r.left, Right: r.right, Top: r.top, Bottom: r.bottom, Visible: getComputedStyle(l).visibility !== 'hidden' };
            }))
            """))!;

    [Theory]
    [InlineData(1400)]
    [InlineData(800)]
    public async Task Axes_TicksChosenForTheWidth_LabelsNeverOverlapOrLeaveTheTrack(int width)
    {
        var s = await NightScenario.CreateAsync(host);
        await using var view = await OpenAsync(host, s, width);
        var page = view.Page;

        var track = await page.EvalOnSelectorAsync<double[]>(".axis-utc .axis-track", "t => { const r = t.getBoundingClientRect(); return [r.left, r.right]; }");
        foreach (var axis in new[] { ".axis-utc", ".axis-local" })
        {
            var shown = (await LabelsAsync(page, axis)).Where(l => l.Visible).ToList();
            Assert.True(shown.Count >= 3, $"{axis} at {width} px shows {shown.Count} labels");
            for (int i = 1; i < shown.Count; i++)
                Assert.True(shown[i].Left >= shown[i - 1].Right + 2, $"{axis} at {width} px: labels {i - 1} and {i} overlap");
            Assert.All(shown, l => Assert.InRange(l.Left, track[0] - 0.5, track[1] + 0.5));
            Assert.All(shown, l => Assert.InRange(l.Right, track[0] - 0.5, track[1] + 0.5));
        }
        // The UTC and local rows are separate rows: their labels cannot collide.
        var utcBottom = (await LabelsAsync(page, ".axis-utc")).Max(l => l.Bottom);
        var localTop = (await LabelsAsync(page, ".axis-local")).Min(l => l.Top);
        Assert.True(localTop >= utcBottom, "the local axis row lies below the UTC row");
        Assert.Contains("Local time", await page.InnerTextAsync(".axis-local .lane-label"), StringComparison.Ordinal);
        // Labels read as clock times; the row says which clock.
        Assert.Matches("^[0-2][0-9]:[0-5][0-9]$", await page.InnerTextAsync(".axis-utc .tick-label:not(.hidden) >> nth=0"));
        Assert.Empty(view.ConsoleErrors);
        await view.ScreenshotAsync($"axes-{width}");
    }

    [Fact]
    public async Task Axes_NarrowWindow_UsesAWiderStepThanAWideOne()
    {
        var s = await NightScenario.CreateAsync(host);
        int wide, narrow;
        await using (var view = await OpenAsync(host, s, 1400))
            wide = int.Parse(await view.Page.GetAttributeAsync(".board", "data-tick-minutes") ?? "0", System.Globalization.CultureInfo.InvariantCulture);
        await using (var view = await OpenAsync(host, s, 800))
            narrow = int.Parse(await view.Page.GetAttributeAsync(".board", "data-tick-minutes") ?? "0", System.Globalization.CultureInfo.InvariantCulture);
        Assert.True(wide > 0 && narrow > wide, $"step {wide} min at 1400 px, {narrow} min at 800 px");
    }

    [Theory]
    [InlineData(1400)]
    [InlineData(800)]
    public async Task Blocks_LabelInsideWhenItFits_OtherwiseOnHoverAndFocus(int width)
    {
        var s = await NightScenario.CreateAsync(host);
        await using var view = await OpenAsync(host, s, width);
        var page = view.Page;

        var blocks = await page.EvalOnSelectorAllAsync<string>(".board .block", """
            bs => JSON.stringify(bs.map(b => ({ id: b.dataset.candidate, hidden: b.classList.contains('label-hidden'),
              textWidth: b.querySelector('.block-text').getBoundingClientRect().width, room: b.clientWidth })))
            """);
        var list = JsonDocument.Parse(blocks).RootElement.EnumerateArray().ToList();
        Assert.NotEmpty(list);
        foreach (var b in list)
        {
            bool hidden = b.GetProperty("hidden").GetBoolean();
            double text = b.GetProperty("textWidth").GetDouble(), room = b.GetProperty("room").GetDouble();
            // Shown exactly when it fits (a hidden label keeps its layout width, so it is measured the same way).
            Assert.True(text > 0, "the label has a width");
            Assert.Equal(text > room - 4, hidden);
        }
        var target = $".block[data-candidate=\"{s.CandidateIds[2]}\"]";
        await page.HoverAsync(target);
        var tip = page.Locator(".block-tip");
        Assert.True(await tip.IsVisibleAsync());
        Assert.Contains(s.BrokerIds[2], await tip.InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(await tip.GetAttributeAsync("id"), await page.GetAttributeAsync(target, "aria-describedby"));

        await page.Mouse.MoveAsync(1, 1);
        await page.FocusAsync($".block[data-candidate=\"{s.CandidateIds[3]}\"]");
        Assert.True(await tip.IsVisibleAsync());
        Assert.Contains(s.BrokerIds[3], await tip.InnerTextAsync(), StringComparison.Ordinal);
        if (width == 800)
        {
            Assert.Contains(list, b => b.GetProperty("hidden").GetBoolean());
        }
        Assert.Empty(view.ConsoleErrors);
    }

    [Fact]
    public async Task States_PendingExecutingDoneLostReplanned_EachLooksDifferent_AndAReplanAfterALossIsNotLost()
    {
        var s = await NightScenario.CreateAsync(host);
        // Version 2, computed after the weather loss of candidate 1: it is planned again later on the
        // same unit. Candidate 2's slot contains the page's clock, so it is executing.
        var t0 = s.Evening;
        await s.StorePlanAsync(host,
            [NightScenario.Entry(s.CandidateIds[0], t0, 18.4), NightScenario.Entry(s.CandidateIds[2], t0.AddMinutes(40), 19.1)],
            [NightScenario.Entry(s.CandidateIds[3], t0.AddMinutes(10), 20.8), NightScenario.Entry(s.CandidateIds[1], t0.AddMinutes(90), 20.2)]);
        await using var view = await OpenAsync(host, s, 1400, now: t0.AddMinutes(55));
        var page = view.Page;

        async Task<string?> StateOf(int i) => await page.GetAttributeAsync($".block[data-candidate=\"{s.CandidateIds[i]}\"]", "data-state");
        Assert.Equal("done", await StateOf(0));
        Assert.Equal("replanned", await StateOf(1));
        Assert.Equal("executing", await StateOf(2));
        Assert.Equal("pending", await StateOf(3));
        Assert.Equal("none", await page.EvalOnSelectorAsync<string>($".block[data-candidate=\"{s.CandidateIds[1]}\"]", "b => getComputedStyle(b).textDecorationLine"));

        // Every state in the legend, each with its own fill, edge and mark.
        var looks = await page.EvalOnSelectorAllAsync<string[]>(".legend .swatch.block", """
            ss => ss.map(s => { const c = getComputedStyle(s), m = getComputedStyle(s.querySelector('.block-text'), '::before');
              return [s.className, c.backgroundColor + c.backgroundImage, c.borderTopStyle + c.borderTopColor, m.content].join(' | '); })
            """);
        Assert.Equal(5, looks.Length);
        foreach (int part in new[] { 1, 2, 3 })
        {
            var values = looks.Select(l => l.Split(" | ")[part]).ToList();
            Assert.True(values.Distinct().Count() == 5, $"part {part} not distinct: {string.Join(" / ", values)}");
        }
        await view.ScreenshotAsync("states-1400");
        Assert.Empty(view.ConsoleErrors);
    }
}
