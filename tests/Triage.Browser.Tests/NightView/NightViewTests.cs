using System.Net.Http.Json;
using System.Text.Json.Nodes;
using Microsoft.Playwright;
using Triage.Browser.Tests.Infrastructure;

namespace Triage.Browser.Tests.NightView;

/// <summary>The night view in Debian's Chromium against the running service and PostgreSQL.</summary>
[Collection(BrowserCollection.Name)]
public sealed class NightViewTests(NightViewHost host)
{
    /// <summary>Candidate ids per lane, in time order, as the API returns them for the active plan.</summary>
    private static async Task<List<List<string>>> LanesFromApiAsync(NightViewHost host, NightScenario s)
    {
        var plan = await host.ClientWith(s.AdminKey).GetFromJsonAsync<JsonObject>($"/api/plans/{s.NightText}");
        return plan!["plan"]!["spectrographs"]!.AsArray()
            .Select(q => q!["queue"]!.AsArray().Select(e => (string)e!["candidateId"]!).ToList()).ToList();
    }

    private static async Task<List<List<string>>> LanesOnPageAsync(IPage page) =>
        (await page.EvalOnSelectorAllAsync<string[][]>(".board .lane:not(.axis)",
            "lanes => lanes.map(l => [...l.querySelectorAll('.block')].map(b => b.dataset.candidate))"))
        .Select(l => l.ToList()).ToList();

    [Fact]
    public async Task Tonight_Lanes_ShowExactlyThePlannedEntries_AndFollowANewVersionWithoutReload()
    {
        var s = await NightScenario.CreateAsync(host);
        await using var view = await ViewSession.SignedInAsync(host, s);

        Assert.Equal(await LanesFromApiAsync(host, s), await LanesOnPageAsync(view.Page));
        Assert.Equal("done", await view.Page.GetAttributeAsync($".block[data-candidate=\"{s.CandidateIds[0]}\"]", "data-state"));
        Assert.Equal("lost", await view.Page.GetAttributeAsync($".block[data-candidate=\"{s.CandidateIds[1]}\"]", "data-state"));
        Assert.Equal("pending", await view.Page.GetAttributeAsync($".block[data-candidate=\"{s.CandidateIds[2]}\"]", "data-state"));
        Assert.Contains("advisory", await view.Page.InnerTextAsync(".advisory"), StringComparison.OrdinalIgnoreCase);
        Assert.Contains("objective identification", await view.Page.InnerTextAsync(".meta"), StringComparison.Ordinal);
        await view.ScreenshotAsync("tonight");

        // A marker on the window survives only if the page is not reloaded.
        await view.Page.EvaluateAsync("() => { window.stillTheSamePage = true; }");
        var t0 = s.Evening;
        await s.StorePlanAsync(host,
            [NightScenario.Entry(s.CandidateIds[3], t0.AddMinutes(5), 20.8), NightScenario.Entry(s.CandidateIds[0], t0.AddMinutes(60), 18.4)],
            [NightScenario.Entry(s.CandidateIds[2], t0.AddMinutes(20), 19.1)]);
        await view.Page.WaitForSelectorAsync(".meta:has-text('Plan version 2')", new PageWaitForSelectorOptions { Timeout = 15000 });

        Assert.Equal(await LanesFromApiAsync(host, s), await LanesOnPageAsync(view.Page));
        Assert.True(await view.Page.EvaluateAsync<bool>("() => window.stillTheSamePage === true"));
        Assert.Contains("version 2", await view.Page.InnerTextAsync(".live"), StringComparison.Ordinal);
        Assert.Empty(view.ConsoleErrors);
    }

    [Fact]
    public async Task Tonight_SelectingABlockWithTheKeyboard_ShowsItsReasonAndFigures()
    {
        var s = await NightScenario.CreateAsync(host);
        await using var view = await ViewSession.SignedInAsync(host, s);

        await view.Page.FocusAsync($".block[data-candidate=\"{s.CandidateIds[0]}\"]");
        await view.Page.Keyboard.PressAsync("ArrowRight");
        await view.Page.Keyboard.PressAsync("Enter");
        var panel = await view.Page.InnerTextAsync(".block-detail");
        Assert.Contains($"Reason for {s.CandidateIds[2]}", panel, StringComparison.Ordinal);
        // An identification plan's reason is long: the panel shows it whole, escalation clause included.
        Assert.Contains(NightScenario.CheapFirst, panel, StringComparison.Ordinal);
        Assert.Contains("19.10 AB", panel, StringComparison.Ordinal);
        Assert.Contains("UTC", panel, StringComparison.Ordinal);
        Assert.Contains("local", panel, StringComparison.Ordinal);
        Assert.Equal("true", await view.Page.GetAttributeAsync($".block[data-candidate=\"{s.CandidateIds[2]}\"]", "aria-pressed"));
        await view.ScreenshotAsync("tonight-selected");

        await view.Page.ClickAsync($".block[data-candidate=\"{s.CandidateIds[1]}\"]");
        Assert.Contains($"Reason for {s.CandidateIds[1]}", await view.Page.InnerTextAsync(".block-detail"), StringComparison.Ordinal);
        Assert.Empty(view.ConsoleErrors);
    }

    [Fact]
    public async Task Tonight_ABlockOfATransientPostedTwice_NamesTheOtherBrokersPost()
    {
        var s = await NightScenario.CreateAsync(host);
        var t0 = s.Evening;
        await s.StorePlanAsync(host,
            [NightScenario.Entry(s.CandidateIds[2], t0.AddMinutes(5), 19.1) with { AlsoPostedAs = [new Triage.Core.Planning.OtherPost(s.CandidateIds[3], "b2c4e6f8", "NB-7781")] }],
            [NightScenario.Entry(s.CandidateIds[0], t0.AddMinutes(20), 18.4)]);
        await using var view = await ViewSession.SignedInAsync(host, s);

        await view.Page.ClickAsync($".block[data-candidate=\"{s.CandidateIds[2]}\"]");
        var panel = await view.Page.InnerTextAsync(".block-detail");
        Assert.Contains("Also posted as", panel, StringComparison.Ordinal);
        Assert.Contains("b2c4e6f8/NB-7781", panel, StringComparison.Ordinal);
        await view.ScreenshotAsync("tonight-same-transient");
        await view.Page.SetViewportSizeAsync(800, 900);
        Assert.Contains("b2c4e6f8/NB-7781", await view.Page.InnerTextAsync(".block-detail"), StringComparison.Ordinal);
        await view.ScreenshotAsync("tonight-same-transient-800");
        await view.Page.ClickAsync($".block[data-candidate=\"{s.CandidateIds[0]}\"]");
        Assert.DoesNotContain("Also posted as", await view.Page.InnerTextAsync(".block-detail"), StringComparison.Ordinal);
        Assert.Empty(view.ConsoleErrors);
    }

    [Fact]
    public async Task CandidatePage_OfATransientPostedTwice_LinksTheOtherBrokersPost()
    {
        var s = await NightScenario.CreateAsync(host);
        var admin = host.ClientWith(s.AdminKey);
        var first = (await admin.GetFromJsonAsync<JsonObject>($"/api/candidates/{s.CandidateIds[0]}"))!["candidate"]!;
        var otherBroker = host.ClientWith(await host.KeyAsync(Triage.Storage.Access.Scope.Broker));
        var copy = NightScenario.CandidateBody($"NB-{s.BrokerIds[0]}", (double)first["raDeg"]!, (double)first["decDeg"]! + 0.7 / 3600);
        var posted = await otherBroker.PostAsync("/api/candidates/batches", new StringContent(new JsonObject { ["candidates"] = new JsonArray(copy) }.ToJsonString(),
            System.Text.Encoding.UTF8, "application/json"));
        Assert.True(posted.IsSuccessStatusCode, await posted.Content.ReadAsStringAsync());

        await using var view = await ViewSession.SignedInAsync(host, s, $"candidates/{s.CandidateIds[0]}");
        var same = await view.Page.InnerTextAsync("dd.same-transient");
        Assert.Contains($"NB-{s.BrokerIds[0]}", same, StringComparison.Ordinal);
        Assert.Contains("0.70″", same, StringComparison.Ordinal);
        await view.ScreenshotAsync("candidate-same-transient");
        Assert.Empty(view.ConsoleErrors);
    }

    [Theory]
    [InlineData("candidates")]
    [InlineData("candidate")]
    [InlineData("calibration")]
    [InlineData("roster")]
    public async Task Page_Loads_WithoutConsoleErrors(string page)
    {
        var s = await NightScenario.CreateAsync(host);
        await using var view = await ViewSession.SignedInAsync(host, s, page == "candidate" ? $"candidates/{s.CandidateIds[0]}" : page);
        var text = await view.Page.InnerTextAsync("main");
        switch (page)
        {
            case "candidates":
                await view.Page.FillAsync("#cand-filter", s.BrokerIds[1]);
                Assert.Equal(1, await view.Page.Locator("table.grid tbody tr").CountAsync());
                Assert.Contains(s.SpectrographNames[1], await view.Page.InnerTextAsync("table.grid tbody"), StringComparison.Ordinal);
                break;
            case "candidate":
                Assert.Contains(s.BrokerIds[0], text, StringComparison.Ordinal);
                Assert.Equal(1, await view.Page.Locator(".chart canvas").CountAsync());
                break;
            case "roster":
                Assert.Contains(s.SpectrographNames[0], text, StringComparison.Ordinal);
                Assert.Contains("1.0 h / 8.0 h", text, StringComparison.Ordinal);
                break;
            case "calibration":
                // The page must say what the API says: the active calibration's curves, or why there are none.
                var active = await host.ClientWith(s.AdminKey).GetAsync("/api/calibrations/active");
                if (active.IsSuccessStatusCode)
                {
                    var doc = (await active.Content.ReadFromJsonAsync<JsonObject>())!["document"]!;
                    Assert.Equal(doc["subtypes"]!.AsArray().Count, await view.Page.Locator("figure.multiple").CountAsync());
                }
                else
                {
                    Assert.Equal(System.Net.HttpStatusCode.NotFound, active.StatusCode);
                    Assert.True(await view.Page.IsVisibleAsync("#cal-none"));
                }
                break;
        }
        await view.ScreenshotAsync(page);
        Assert.Empty(view.ConsoleErrors);
    }

    [Fact]
    public async Task BadKey_IsRefused_AndTheSignInShowsAgain()
    {
        await using var view = await ViewSession.OpenAsync(host);
        await view.SignInAsync(host, "trk_00000000_not-a-real-secret", "2091-01-01");
        var refusal = await view.Page.WaitForSelectorAsync("#signin-message:has-text('refused')", new PageWaitForSelectorOptions { Timeout = 10000 });
        Assert.NotNull(refusal);
        Assert.True(await view.Page.IsVisibleAsync("#signin"));
        Assert.True(await view.Page.IsHiddenAsync("#nav"));
        Assert.Null(await view.Page.EvaluateAsync<string?>("() => sessionStorage.getItem('triage.apiKey')"));
        await view.ScreenshotAsync("refused");
    }
}
