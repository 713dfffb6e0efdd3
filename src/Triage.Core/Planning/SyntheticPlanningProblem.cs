// Seeded random planning problems for demos, benchmarks and property tests (invented numbers).
// Exposure for S/N n on a unit of aperture D and resolving power R for a source of magnitude m
// follows the source-dominated scaling t ∝ n² · R · 10^{0.4 m} / D² [1, §3.2]; accuracy rises
// with S/N as 1 − e^{−n/n₀} towards a ceiling that depends on the candidate's difficulty and R.
//
// References
// [1] S. B. Howell, Handbook of CCD Astronomy, 2nd ed., Cambridge 2006, ch. 4.4 (CCD equation).
namespace Triage.Core.Planning;

/// <summary>Shape of a synthetic problem.</summary>
public sealed record SyntheticProblemSettings
{
    /// <summary>Number of candidates. Default 200.</summary>
    public int Candidates { get; init; } = 200;

    /// <summary>Number of units (spread round-robin over three sites). Default 6.</summary>
    public int Units { get; init; } = 6;

    /// <summary>Length of each site's dark window, h. Default 9.</summary>
    public double NightHours { get; init; } = 9;

    /// <summary>Share of each unit's night the network may use, 0…1. Default 0.8.</summary>
    public double BudgetShare { get; init; } = 0.8;

    /// <summary>Network cost cap (null: none). Default none.</summary>
    public double? NetworkCostCap { get; init; }

    /// <summary>Price per cost unit. Default 0.</summary>
    public double PricePerCostUnit { get; init; }
}

/// <summary>Generates seeded random planning problems.</summary>
public static class SyntheticPlanningProblem
{
    private static readonly double[] Resolutions = [30, 4000, 100, 1000, 300, 2000];
    private static readonly double[] Apertures = [1.0, 4.0, 2.0, 3.5, 1.5, 2.5];
    private static readonly double[] SnrLevels = [5, 10, 20];

    /// <summary>A problem drawn from <paramref name="seed"/>; the same seed gives the same problem.</summary>
    public static PlanningProblem Create(int seed, SyntheticProblemSettings? settings = null)
    {
        settings ??= new SyntheticProblemSettings();
        var rng = new Random(seed);
        var epoch = new DateTimeOffset(2030, 3, 14, 0, 0, 0, TimeSpan.Zero);
        var night = settings.NightHours * 3600;
        var units = new List<PlanningUnit>();
        var siteOffsets = new[] { 0.0, 8 * 3600, 16 * 3600 };
        for (var u = 0; u < settings.Units; u++)
        {
            var site = u % 3;
            var from = siteOffsets[site];
            units.Add(new PlanningUnit($"unit-{u + 1:D2}", $"Unit {u + 1}", $"Site {(char)('A' + site)}",
                Resolutions[u % Resolutions.Length], new SecondsWindow(from, from + night),
                settings.BudgetShare * night, 20 + 40 * Apertures[u % Apertures.Length]));
        }

        var candidates = new List<PlanningCandidate>();
        var options = new List<PlanOption>();
        for (var c = 0; c < settings.Candidates; c++)
        {
            var magnitude = 16 + 4.5 * rng.NextDouble();
            var difficulty = rng.NextDouble(); // 0: easy at any R, 1: needs high R
            var weight = rng.NextDouble() < 0.15 ? 2.0 : 1.0;
            candidates.Add(new PlanningCandidate($"cand-{c + 1:D4}", weight));
            var visibleSites = new[] { rng.NextDouble() < 0.7, rng.NextDouble() < 0.6, rng.NextDouble() < 0.5 };
            var windows = new SecondsWindow[3];
            for (var s = 0; s < 3; s++)
            {
                var length = (2 + 6 * rng.NextDouble()) * 3600;
                var start = siteOffsets[s] + rng.NextDouble() * Math.Max(0, night - length);
                windows[s] = new SecondsWindow(start, Math.Min(start + length, siteOffsets[s] + night));
            }

            for (var u = 0; u < units.Count; u++)
            {
                var site = u % 3;
                if (!visibleSites[site])
                {
                    continue;
                }

                var r = units[u].ResolvingPower;
                var aperture = Apertures[u % Apertures.Length];
                var ceiling = Math.Clamp(0.95 - difficulty * 0.7 * (1 - Math.Log10(r) / Math.Log10(4000)), 0.1, 0.95);
                var levels = new List<ExposureLevel>();
                foreach (var snr in SnrLevels)
                {
                    var exposure = 2.0 * snr * snr * r * Math.Pow(10, 0.4 * (magnitude - 16)) / (aperture * aperture) / 100;
                    exposure = Math.Clamp(exposure, 60, 4 * 3600);
                    var accuracy = ceiling * (1 - Math.Exp(-snr / 7.0));
                    var duration = exposure + 300;
                    if (duration < windows[site].LengthSeconds)
                    {
                        levels.Add(new ExposureLevel(snr, exposure, duration, accuracy, accuracy * 2, weight * accuracy));
                    }
                }

                if (levels.Count > 0)
                {
                    options.Add(new PlanOption(c, u, windows[site].Intersect(units[u].Available), levels, 1 + rng.NextDouble(), magnitude));
                }
            }
        }

        return new PlanningProblem(epoch, units, candidates, options, PlanObjective.Accuracy, settings.PricePerCostUnit, settings.NetworkCostCap);
    }
}
