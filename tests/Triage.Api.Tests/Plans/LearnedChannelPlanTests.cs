using System.Text.Json;
using Microsoft.Extensions.DependencyInjection;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Roster;

namespace Triage.Api.Tests.Plans;

/// <summary>
/// The plan job with the identification objective plans with each unit's calibration combined with its
/// own labelled outcomes (Dirichlet prior of 20 objects per row, docs/sequential-triage.md §4): after
/// a unit answers "II" forty times on a candidate the scheduler then confirms as Ia, its spectra are
/// worth less to the next plan, and a unit without trials is valued exactly as before.
/// </summary>
public sealed class LearnedChannelPlanTests(IsolatedDatabaseFactory api) : IClassFixture<IsolatedDatabaseFactory>
{
    private const string Hyrax = "5ec00000-0000-4000-8000-000000000003"; // R = 100 at Vendraal Plateau (demo roster)
    private const string Oryx = "5ec00000-0000-4000-8000-000000000004";  // R = 4000 at the same site
    private const string Vendraal = "5a7e0000-0000-4000-8000-000000000002";
    private const string PlanBody = """{"night":"2026-12-03","objective":"identification","timeLimitSeconds":3}""";

    [Fact]
    public async Task WrongLabelledTrials_LowerTheUnitsValue_OtherUnitsUnchanged()
    {
        var (scheduler, observatoryKeys) = await DemoNetwork.ArrangeAsync(api);
        await DemoNetwork.RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(PlanBody)));
        var before = Alternatives(await scheduler.GetStringAsync("/api/plans/2026-12-03"));

        // Forty "II" answers from Hyrax-100 over the S/N bands and phase bins, on one candidate confirmed as Ia.
        var site = (await api.Services.GetRequiredService<RosterStore>().GetSiteAsync(Guid.Parse(Vendraal)))!.Value;
        var observedUtc = Triage.Core.Sky.DarkTime.LatestDarkInstant(site, DateTimeOffset.UtcNow)!.Value;
        var page = JsonDocument.Parse(await scheduler.GetStringAsync("/api/candidates?limit=1000")).RootElement;
        var trialCandidate = page.GetProperty("items").EnumerateArray().Select(i => i.GetProperty("id").GetString()!)
            .First(id => !before.ContainsKey(id));
        var observatory = api.ClientWith(observatoryKeys[Vendraal]);
        foreach (var snr in new[] { 5.0, 10, 20, 40 })
        {
            foreach (var phase in new[] { -10.0, 0, 10, 25, 45 })
            {
                for (var i = 0; i < 2; i++)
                {
                    var report = await observatory.PostAsync($"/api/candidates/{trialCandidate}/observations", Bodies.Raw(JsonSerializer.Serialize(new
                    {
                        spectrographId = Hyrax, outcome = "done", achievedSnr = snr, classifiedLabel = "II", phaseDays = phase, observedUtc,
                    })));
                    Assert.True(report.IsSuccessStatusCode, await report.Content.ReadAsStringAsync());
                }
            }
        }

        var confirmed = await scheduler.PostAsync($"/api/candidates/{trialCandidate}/identification", Bodies.Raw("""{"label":"Ia","reason":"sharper spectrum"}"""));
        Assert.True(confirmed.IsSuccessStatusCode, await confirmed.Content.ReadAsStringAsync());
        var accuracy = JsonDocument.Parse(await scheduler.GetStringAsync("/api/units/accuracy")).RootElement;
        var hyraxRow = accuracy.GetProperty("units").EnumerateArray().Single(u => u.GetProperty("spectrographId").GetString() == Hyrax);
        Assert.Equal(40, hyraxRow.GetProperty("trials").GetInt32());
        Assert.True(hyraxRow.GetProperty("flagged").GetBoolean());

        await DemoNetwork.RunJobAsync(scheduler, await scheduler.PostAsync("/api/plans", Bodies.Raw(PlanBody)));
        var after = Alternatives(await scheduler.GetStringAsync("/api/plans/2026-12-03"));

        // The same candidates (same posterior, same night) valued on both units before and after the trials.
        var onHyrax = before.Keys.Intersect(after.Keys)
            .Where(c => before[c].ContainsKey(Hyrax) && after[c].ContainsKey(Hyrax)).ToList();
        Assert.True(onHyrax.Count >= 3, $"{onHyrax.Count} candidates could go to Hyrax-100 in both versions");
        var lower = onHyrax.Count(c => after[c][Hyrax] < before[c][Hyrax] - 1e-9);
        Assert.True(lower * 2 > onHyrax.Count, $"Hyrax-100 worth less for {lower} of {onHyrax.Count} candidates");
        Assert.True(onHyrax.Sum(c => after[c][Hyrax]) < onHyrax.Sum(c => before[c][Hyrax]));

        var onOryx = before.Keys.Intersect(after.Keys)
            .Where(c => before[c].ContainsKey(Oryx) && after[c].ContainsKey(Oryx)).ToList();
        Assert.NotEmpty(onOryx);
        foreach (var c in onOryx)
        {
            Assert.Equal(before[c][Oryx], after[c][Oryx], 9);
        }
    }

    /// <summary>Candidate → spectrograph → value of its best level there, from every queue entry of the latest version.</summary>
    private static Dictionary<string, Dictionary<string, double>> Alternatives(string planJson) =>
        JsonDocument.Parse(planJson).RootElement.GetProperty("plan").GetProperty("spectrographs").EnumerateArray()
            .SelectMany(q => q.GetProperty("queue").EnumerateArray())
            .ToDictionary(
                e => e.GetProperty("candidateId").GetString()!,
                e => e.GetProperty("alternatives").EnumerateArray()
                    .ToDictionary(a => a.GetProperty("spectrographId").GetString()!, a => a.GetProperty("value").GetDouble()));
}
