using System.Net.Http.Json;
using System.Text.Json.Nodes;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Playwright;
using Triage.Browser.Tests.Infrastructure;
using Triage.Core.Calibration;
using Triage.Learning;
using Triage.Storage.Calibrations;

namespace Triage.Browser.Tests.NightView;

/// <summary>
/// The unit-accuracy panel of the Roster page at a wide (1400 px) and a narrow (800 px) window: every
/// unit's measured recall and modelled recall with their intervals and trial counts as the API gives
/// them, and a warning for the unit that answered "II" twelve times on a candidate confirmed as Ia.
/// </summary>
[Collection(BrowserCollection.Name)]
public sealed class UnitAccuracyViewTests(NightViewHost host)
{
    // Confusion rows at R = 100, S/N 10 (truth Ia, 91T, II → answers Ia, 91T, II): C(Ia|Ia) = 40/50 = 0.8.
    private static string CalibrationJsonText()
    {
        string[] subtypes = ["Ia", "Ia-91T-like", "II"];
        int[][] counts = [[40, 8, 2], [10, 10, 0], [3, 0, 27]];
        var bin = new PhaseBin("all-phases", -1000, 1000);
        var cells = subtypes.Select((s, i) =>
        {
            var n = counts[i].Sum();
            var recall = (double)counts[i][i] / n;
            return new CalibrationCell(s, 100, 10, bin.Name, recall, recall, recall, recall, n, n);
        }).ToList();
        var matrix = new ConfusionMatrix(100, 10, bin.Name, subtypes, counts.Select(r => (IReadOnlyList<int>)r).ToList());
        return CalibrationJson.Serialize(new AccuracyModelDocument("per resolution element", 6000, subtypes, [100], [10], [bin], cells, [matrix])
        {
            BroadClasses = [new("thermonuclear-normal", ["Ia"]), new("thermonuclear-bright", ["Ia-91T-like"]), new("hydrogen-rich", ["II"])],
        });
    }

    [Theory]
    [InlineData(1400)]
    [InlineData(800)]
    public async Task Roster_UnitAccuracy_MatchesTheApi_AndWarnsAboutTheWorseUnit(int width)
    {
        var s = await NightScenario.CreateAsync(host);
        await host.Services.GetRequiredService<CalibrationStore>().AddAsync(
            new NewCalibration("imported", false, null, "browser test", null, null, CalibrationJsonText()), true, DateTimeOffset.UtcNow);
        var admin = host.ClientWith(s.AdminKey);
        var site = (await host.Services.GetRequiredService<Triage.Storage.Roster.RosterStore>().GetSiteAsync(Guid.Parse(s.SiteId)))!.Value;
        var observedUtc = Triage.Core.Sky.DarkTime.LatestDarkInstant(site, DateTimeOffset.UtcNow)!.Value.ToString("O");
        for (var i = 0; i < 12; i++)
        {
            var report = await admin.PostAsJsonAsync($"/api/candidates/{s.CandidateIds[3]}/observations", new JsonObject
            {
                ["spectrographId"] = s.SpectrographIds[0], ["outcome"] = "done", ["achievedSnr"] = 10.0, ["classifiedLabel"] = "II",
                ["phaseDays"] = 0.0, ["observedUtc"] = observedUtc,
            });
            Assert.True(report.IsSuccessStatusCode, await report.Content.ReadAsStringAsync());
        }
        var confirmed = await admin.PostAsJsonAsync($"/api/candidates/{s.CandidateIds[3]}/identification", new JsonObject { ["label"] = "Ia" });
        Assert.True(confirmed.IsSuccessStatusCode, await confirmed.Content.ReadAsStringAsync());
        var api = (await admin.GetFromJsonAsync<JsonObject>("/api/units/accuracy"))!["units"]!.AsArray();
        var wide = api.Single(u => (string)u!["name"]! == s.SpectrographNames[0])!;
        Assert.True((bool)wide["flagged"]!);

        await using var view = await ViewSession.OpenAsync(host);
        await view.Page.SetViewportSizeAsync(width, 900);
        await view.SignInAsync(host, s.AdminKey, s.NightText, "roster");
        await view.WaitReadyAsync("roster");

        // The flagged unit: its row and its warning, with the figures the API gives (12 trials, none right, 80 % modelled).
        var row = view.Page.Locator($".unit-accuracy tr[data-unit=\"{s.SpectrographNames[0]}\"]");
        Assert.Contains("flagged", await row.GetAttributeAsync("class") ?? "", StringComparison.Ordinal);
        var cells = await row.Locator("td").AllInnerTextsAsync();
        Assert.Equal("12 (0 right)", cells[1]);
        Assert.Equal($"0 % (0 % – {Percent((double)wide["measuredHigh"]!)})", cells[2]);
        Assert.Equal($"80 % ({Percent((double)wide["modelledLow"]!)} – 100 %)", cells[3]);
        Assert.Equal("worse than modelled", cells[6]);
        var warning = await view.Page.InnerTextAsync($".unit-accuracy .warning[data-unit=\"{s.SpectrographNames[0]}\"]");
        Assert.Contains("0 of 12", warning, StringComparison.Ordinal);
        Assert.Contains("worse than modelled", warning, StringComparison.Ordinal);

        // The unit without trials: no figures, no flag.
        var fine = await view.Page.Locator($".unit-accuracy tr[data-unit=\"{s.SpectrographNames[1]}\"] td").AllInnerTextsAsync();
        Assert.Equal("0", fine[1]);
        Assert.Equal("no trials yet", fine[4]);
        Assert.Equal(0, await view.Page.Locator($".unit-accuracy .warning[data-unit=\"{s.SpectrographNames[1]}\"]").CountAsync());

        // The measured point sits at its place on the 0–100 % scale; nothing spills out of the window.
        var left = await view.Page.EvalOnSelectorAsync<double>($".unit-accuracy tr[data-unit=\"{s.SpectrographNames[0]}\"] .acc-point",
            "p => (p.getBoundingClientRect().left + p.getBoundingClientRect().width / 2 - p.parentElement.getBoundingClientRect().left - p.parentElement.clientLeft) / p.parentElement.clientWidth");
        Assert.InRange(left, -0.02, 0.02);
        Assert.True(await view.Page.EvaluateAsync<bool>("() => document.documentElement.scrollWidth <= window.innerWidth"),
            $"the page is wider than the {width} px window");
        await view.ScreenshotAsync($"unit-accuracy-{width}");
        Assert.Empty(view.ConsoleErrors);
    }

    private static string Percent(double value) => FormattableString.Invariant($"{value * 100:0} %");
}
