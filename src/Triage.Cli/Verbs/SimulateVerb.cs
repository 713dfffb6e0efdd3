using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using Spectre.Console;
using Triage.Core.Identification;
using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Core.Season;
using Triage.Learning;

namespace Triage.Cli.Verbs;

/// <summary>
/// <c>triage simulate</c>: a simulated season of the roster night by night for every strategy on the
/// same sky and weather; JSON with a top-level <c>strategies</c> array, optional SVG plots, optional
/// facility what-if against a changed roster.
/// </summary>
internal static class SimulateVerb
{
    public static Command Create()
    {
        var roster = new Option<FileInfo>("--roster") { Description = "Roster JSON (sites with their spectrographs).", Required = true };
        var calibration = new Option<FileInfo>("--calibration") { Description = "The planner's calibration JSON (default demo/calibration.json).", DefaultValueFactory = _ => new FileInfo(Path.Combine("demo", "calibration.json")) };
        var truth = new Option<FileInfo?>("--truth-calibration") { Description = "Calibration the reported labels are drawn from (default: the planner's)." };
        var degrade = new Option<string?>("--degrade") { Description = "Truth worse than the model for units: NAME=d[,NAME=d], truth row (1 − d)·C + d/K." };
        var nights = new Option<int>("--nights") { Description = "Nights (default 10).", DefaultValueFactory = _ => 10 };
        var seed = new Option<int>("--seed") { Description = "First seed (default 1).", DefaultValueFactory = _ => 1 };
        var seeds = new Option<int>("--seeds") { Description = "Number of seeds, seed, seed+1, ... (default 1).", DefaultValueFactory = _ => 1 };
        var peaks = new Option<double>("--peaks-per-day") { Description = "Transients peaking brighter than the survey limit per day (default 81: a volumetric estimate, docs/sequential-triage.md).", DefaultValueFactory = _ => new SkySettings().PeaksPerDay };
        var maxPool = new Option<int>("--max-pool") { Description = "Most candidates planned per night, chosen like the service's bounded pool (default 600).", DefaultValueFactory = _ => new SeasonSettings().MaxPoolCandidates };
        var clear = new Option<double>("--clear-fraction") { Description = "Probability a site is clear on a night (default 0.7).", DefaultValueFactory = _ => 0.7 };
        var costCap = new Option<double?>("--network-cost-cap") { Description = "Most the whole network may spend a night, in the roster's cost units (cost per hour × hours): one programme budget shared by the units (default: none)." };
        var reliability = new Option<bool>("--no-unit-reliability") { Description = "Outcome learning by per-row counts only, without the share of uniform guesses estimated per unit from all its trials (docs/sequential-triage.md §4)." };
        var noLearning = new Option<bool>("--no-learning") { Description = "Plan with the calibration only (no outcome learning)." };
        var strategies = new Option<string?>("--strategies") { Description = "Comma-separated strategy names (default: the five compared; triage-sequential-accuracy-objective on request)." };
        var whatIf = new Option<FileInfo?>("--what-if-roster") { Description = "A changed roster: run the same seeds with it and report the difference." };
        var plots = new Option<DirectoryInfo?>("--plots") { Description = "Folder for SVG plots of the first seed." };
        var output = new Option<FileInfo>("--out") { Description = "Season JSON to write.", Required = true };
        var cmd = new Command("simulate", "Simulate a season of the roster for Triage (with and without escalation) and the rule baselines.")
            { roster, calibration, truth, degrade, nights, seed, seeds, peaks, maxPool, clear, costCap, reliability, noLearning, strategies, whatIf, plots, output };
        cmd.SetAction((parse, ct) =>
        {
            try
            {
                var (sites, units) = RosterJson.Parse(File.ReadAllText(Existing(parse.GetValue(roster)!, "--roster")));
                var planner = AccuracySurface.FromDocument(PlanJson.ReadCalibration(File.ReadAllText(Existing(parse.GetValue(calibration)!, "--calibration"))));
                var truthSurface = parse.GetValue(truth) is { } t
                    ? AccuracySurface.FromDocument(PlanJson.ReadCalibration(File.ReadAllText(Existing(t, "--truth-calibration"))))
                    : planner;
                var settings = new SeasonSettings
                {
                    Nights = parse.GetValue(nights) is var n and >= 1 and <= 366 ? n : throw new FormatException("--nights: 1 to 366."),
                    ClearFraction = parse.GetValue(clear) is var c and >= 0 and <= 1 ? c : throw new FormatException("--clear-fraction: 0 to 1."),
                    LearnUnitAccuracy = !parse.GetValue(noLearning),
                    Outcomes = new UnitOutcomeSettings { UnitReliability = !parse.GetValue(reliability) },
                    NetworkCostCap = parse.GetValue(costCap) is { } cap
                        ? cap is >= 0 and <= 1e9 ? cap : throw new FormatException("--network-cost-cap: 0 to 1e9.")
                        : null,
                    Sky = new SkySettings { PeaksPerDay = parse.GetValue(peaks) is var pd and > 0 and <= 1000 ? pd : throw new FormatException("--peaks-per-day: above 0, at most 1000.") },
                    MaxPoolCandidates = parse.GetValue(maxPool) is var mp and >= 1 and <= 100_000 ? mp : throw new FormatException("--max-pool: 1 to 100000."),
                    TruthDegradation = Degradation(parse.GetValue(degrade), units),
                    Strategies = Strategies(parse.GetValue(strategies)),
                };
                var count = parse.GetValue(seeds) is var k and >= 1 and <= 100 ? k : throw new FormatException("--seeds: 1 to 100.");
                var changed = parse.GetValue(whatIf) is { } w ? RosterJson.Parse(File.ReadAllText(Existing(w, "--what-if-roster"))) : default;
                var seedList = Enumerable.Range(parse.GetValue(seed), count).ToList();
                var report = RunAll((sites, units), changed.Item1 is null ? null : changed, planner, truthSurface, settings, seedList, ct);
                var runs = report.Runs;
                var outFile = parse.GetValue(output)!;
                Directory.CreateDirectory(outFile.DirectoryName!);
                File.WriteAllText(outFile.FullName, report.ToJson(indented: true));
                if (parse.GetValue(plots) is { } dir)
                {
                    Directory.CreateDirectory(dir.FullName);
                    File.WriteAllText(Path.Combine(dir.FullName, "identifications.svg"), SeasonPlots.IdentificationsSvg(runs[0]));
                    File.WriteAllText(Path.Combine(dir.FullName, "high-r-hours.svg"), SeasonPlots.HighResolutionHoursSvg(runs[0]));
                }

                Print(report);
                Console.WriteLine($"Wrote {outFile.FullName}");
                return Task.FromResult(0);
            }
            catch (Exception ex) when (ex is FormatException or ArgumentException or JsonException or IOException)
            {
                Console.Error.WriteLine(ex.Message);
                return Task.FromResult(2);
            }
        });
        return cmd;
    }

    private static string Existing(FileInfo file, string option) =>
        file.Exists ? file.FullName : throw new FormatException($"{option}: '{file.FullName}' does not exist.");

    private static Dictionary<string, double> Degradation(string? text, IReadOnlyList<Spectrograph> units)
    {
        var result = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach (var part in (text ?? "").Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries))
        {
            var eq = part.LastIndexOf('=');
            if (eq <= 0 || !double.TryParse(part[(eq + 1)..], NumberStyles.Float, CultureInfo.InvariantCulture, out var d) || d is < 0 or > 1)
            {
                throw new FormatException($"--degrade: '{part}' is not NAME=d with d in [0, 1].");
            }

            var name = part[..eq];
            if (units.All(u => u.Name != name))
            {
                throw new FormatException($"--degrade: no spectrograph named '{name}' in the roster.");
            }

            result[name] = d;
        }

        return result;
    }

    private static IReadOnlyList<SeasonStrategy> Strategies(string? text)
    {
        if (string.IsNullOrWhiteSpace(text))
        {
            return SeasonSettings.Compared;
        }

        var all = Enum.GetValues<SeasonStrategy>().ToDictionary(SeasonSimulator.Name, s => s, StringComparer.Ordinal);
        return text.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries)
            .Select(s => all.TryGetValue(s, out var v) ? v : throw new FormatException($"--strategies: unknown '{s}' (known: {string.Join(", ", all.Keys)})."))
            .ToList();
    }

    private static SeasonReport RunAll(
        (IReadOnlyList<Site>, IReadOnlyList<Spectrograph>) roster, (IReadOnlyList<Site>, IReadOnlyList<Spectrograph>)? changed,
        AccuracySurface planner, AccuracySurface truth, SeasonSettings settings, List<int> seeds, CancellationToken ct)
    {
        SeasonReport? report = null;
        AnsiConsole.Progress()
            .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new ElapsedTimeColumn(), new RemainingTimeColumn())
            .Start(ctx =>
            {
                var task = ctx.AddTask("simulating", maxValue: SeasonReport.Steps(settings, seeds.Count, changed is not null));
                var progress = new Inline<SeasonProgress>(p => { task.Value = p.Done; task.Description = p.What; });
                report = SeasonReport.Run(roster, changed, planner, truth, settings, seeds, progress, ct);
                task.Value = task.MaxValue;
            });
        return report!;
    }

    private static void Print(SeasonReport summary)
    {
        var whatIf = summary.WhatIf;
        var inv = CultureInfo.InvariantCulture;
        var table = new Table().AddColumns("strategy", "correct", "wrong", "at τ correct / wrong", "closed correct / wrong (mean p; at season end)", "spectra", "high-R h", "correct per high-R h", "high-R share on ambiguous");
        foreach (var s in summary.Strategies)
        {
            table.AddRow(s.Name,
                string.Create(inv, $"{s.CorrectIdentifications:0.#} ± {s.CorrectIdentificationsSpread.StandardDeviation:0.#}"),
                string.Create(inv, $"{s.WrongIdentifications:0.#}"),
                s.IdentifiedAtConfidence is { } tau ? string.Create(inv, $"{tau.Correct.Mean:0.#} / {tau.Wrong.Mean:0.#}") : "—",
                s.ClosedWithBestLabel is { } closed && s.ClosedAtSeasonEnd is { } end
                    ? string.Create(inv, $"{closed.Correct.Mean:0.#} / {closed.Wrong.Mean:0.#} ({closed.MeanProbability:0.00}; {end.Correct.Mean:0.#} / {end.Wrong.Mean:0.#})")
                    : "—",
                string.Create(inv, $"{s.Observations:0.#}"),
                string.Create(inv, $"{s.HighResolutionHours:0.#}"), string.Create(inv, $"{s.IdentificationsPerHighResolutionHour:0.00}"),
                string.Create(inv, $"{s.AmbiguousHighResolutionShare:P0}"));
        }

        AnsiConsole.Write(table);
        foreach (var s in summary.Strategies)
        {
            Console.WriteLine(string.Create(inv,
                $"{s.Name}: per night {s.Load.Pool:0} in the pool, {s.Load.WorthObserving:0} worth observing needing ≥ {s.Load.DemandHours:0.#} h against {s.Load.CapacityHours:0.#} h of unit time (×{s.Load.Oversubscription:0.00}; oversubscribed on {s.Load.OversubscribedNightShare:P0} of nights)"));
        }

        foreach (var c in summary.Comparisons)
        {
            Console.WriteLine(string.Create(inv,
                $"{c.Strategy} vs {c.Against} ({c.Count}): ratio {c.Ratio.Mean:0.000} ± {c.Ratio.StandardDeviation:0.000}, difference {c.Difference.Mean:0.#} ± {c.Difference.StandardDeviation:0.#}, better in {c.SeedsWhereBetter} of {summary.Seeds.Count} seeds"));
        }

        foreach (var w in whatIf ?? [])
        {
            Console.WriteLine(string.Create(inv,
                $"what-if {w.Strategy}: changed − base = {w.Difference.Mean:0.#} ± {w.Difference.StandardDeviation:0.#} (s.e. {w.StandardError:0.#}) correct identifications"));
        }
    }

    private sealed class Inline<T>(Action<T> action) : IProgress<T>
    {
        public void Report(T value) => action(value);
    }
}
