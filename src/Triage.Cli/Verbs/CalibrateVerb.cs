using System.CommandLine;
using System.Globalization;
using Spectre.Console;
using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Learning;

namespace Triage.Cli.Verbs;

/// <summary>
/// <c>triage calibrate</c>: compute the resolution–accuracy model of a library and write the
/// calibration JSON, the minimum-R table (CSV and JSON) and optionally SVG plots.
/// </summary>
internal static class CalibrateVerb
{
    public static Command Create()
    {
        var library = new Option<DirectoryInfo>("--library") { Description = "Library folder with manifest.csv.", Required = true };
        var output = new Option<FileInfo>("--out") { Description = "Calibration JSON to write.", Required = true };
        var resolutions = new Option<string?>("--resolutions") { Description = "Comma-separated R values (default: 12 log-spaced from 5 to 4000, or to the library's R when lower)." };
        var snr = new Option<string>("--snr") { Description = "Comma-separated S/N per element; 'native' adds no noise beyond the library's own (default 5,10,20).", DefaultValueFactory = _ => "5,10,20" };
        var folds = new Option<int>("--folds") { Description = "Cross-validation folds, grouped by object (default 5).", DefaultValueFactory = _ => 5 };
        var seed = new Option<int>("--seed") { Description = "Seed of folds and noise (default 1).", DefaultValueFactory = _ => 1 };
        var model = new Option<string>("--model") { Description = $"Classifier: {string.Join(", ", SubtypeClassifiers.Names)} (default linear).", DefaultValueFactory = _ => "linear" };
        var continuum = new Option<ContinuumHandling>("--continuum") { Description = "Continuum handling (default DivideKeepColour).", DefaultValueFactory = _ => ContinuumHandling.DivideKeepColour };
        var maxBins = new Option<int>("--max-bins") { Description = string.Create(System.Globalization.CultureInfo.InvariantCulture, $"Upper bound on flux bins of the feature vector (default {new PreprocessOptions().MaxBins})."), DefaultValueFactory = _ => new PreprocessOptions().MaxBins };
        var defaults = new PreprocessOptions();
        var lowBelow = new Option<double?>("--low-r-below") { Description = $"Below this R use the low-R feature choice (default {defaults.LowResolutionBelow.ToString(CultureInfo.InvariantCulture)}; 0: one choice for every R)." };
        var lowContinuum = new Option<ContinuumHandling?>("--low-r-continuum") { Description = $"Continuum handling below --low-r-below (default {defaults.LowResolution?.Continuum.ToString() ?? "none"})." };
        var lowMinBins = new Option<int?>("--low-r-min-bins") { Description = $"Minimum flux bins below --low-r-below (default {defaults.LowResolution?.MinBins.ToString(CultureInfo.InvariantCulture) ?? "4"})." };
        var passes = new Option<int?>("--passes") { Description = $"Passes over each training fold for --model linear (default {SubtypeClassifiers.LinearIterations}) or lbfgs (default 200)." };
        var unweighted = new Option<bool>("--unweighted") { Description = "Train without balanced class weights." };
        var taxonomy = new Option<FileInfo?>("--taxonomy") { Description = "Taxonomy file (default: the built-in one, as config/taxonomy.txt)." };
        var cache = new Option<DirectoryInfo?>("--cache") { Description = "Folder of the binary cache of parsed libraries, keyed by content (default ~/.cache/triage/libraries)." };
        var noCache = new Option<bool>("--no-cache") { Description = "Parse the library's text files without reading or writing the cache." };
        var plots = new Option<DirectoryInfo?>("--plots") { Description = "Folder for SVG plots (recall curves per S/N, confusion heatmaps)." };
        var cmd = new Command("calibrate", "Compute per-subtype classification accuracy versus R, S/N and phase from a labelled library.")
            { library, output, resolutions, snr, folds, seed, model, continuum, maxBins, lowBelow, lowContinuum, lowMinBins, passes, unweighted, taxonomy, cache, noCache, plots };
        cmd.SetAction((parse, ct) =>
        {
            CalibrationSettings settings;
            Taxonomy tax;
            SpectralLibrary lib;
            try
            {
                settings = new CalibrationSettings
                {
                    Resolutions = parse.GetValue(resolutions) is string r ? VerbParsing.NumberList(r, "--resolutions", false).Select(v => v!.Value).ToArray() : null,
                    SnrLevels = VerbParsing.NumberList(parse.GetValue(snr)!, "--snr", true),
                    Folds = parse.GetValue(folds) is var k and >= 2 ? k : throw new FormatException("--folds: at least 2."),
                    Seed = parse.GetValue(seed),
                    Model = SubtypeClassifiers.Names.Contains(parse.GetValue(model)) ? parse.GetValue(model)! : throw new FormatException($"--model: unknown '{parse.GetValue(model)}'."),
                    Preprocess = LowResolutionChoice(new PreprocessOptions
                    {
                        Continuum = parse.GetValue(continuum),
                        MaxBins = parse.GetValue(maxBins) is var mb and >= 8 ? mb : throw new FormatException("--max-bins: at least 8."),
                    }, parse.GetValue(lowBelow), parse.GetValue(lowContinuum), parse.GetValue(lowMinBins)),
                    BalancedClassWeights = !parse.GetValue(unweighted),
                    ClassifierPasses = parse.GetValue(passes) switch
                    {
                        null => null,
                        < 1 => throw new FormatException("--passes: at least 1."),
                        _ when parse.GetValue(model) is "tree" or "boosted" => throw new FormatException($"--passes: applies to --model linear or lbfgs, not {parse.GetValue(model)}."),
                        var n => n,
                    },
                };
                tax = LibraryFiles.LoadTaxonomy(parse.GetValue(taxonomy)?.FullName);
                lib = parse.GetValue(noCache)
                    ? LibraryFiles.Load(parse.GetValue(library)!.FullName, tax)
                    : LibraryCache.Load(parse.GetValue(library)!.FullName, tax, parse.GetValue(cache)?.FullName ?? LibraryCache.DefaultFolder).Library;
                foreach (var w in lib.Warnings) Console.Error.WriteLine($"warning: {w}");
            }
            catch (LibraryImportException ex)
            {
                foreach (var e in ex.Errors) Console.Error.WriteLine(e);
                Console.Error.WriteLine($"Library not imported: {ex.Errors.Count} problem(s).");
                return Task.FromResult(1);
            }
            catch (FormatException ex)
            {
                Console.Error.WriteLine(ex.Message);
                return Task.FromResult(2);
            }

            AccuracyModelDocument? doc = null;
            CalibrationTimings? timings = null;
            try
            {
                AnsiConsole.Progress()
                    .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new ElapsedTimeColumn(), new RemainingTimeColumn())
                    .Start(ctx =>
                    {
                        var task = ctx.AddTask("calibrating", maxValue: 100);
                        var progress = new Inline<CalibrationProgress>(p =>
                        {
                            task.Value = p.Percent;
                            task.Description = p.Stage;
                        });
                        (doc, timings) = CalibrationPipeline.RunTimed(lib, tax, settings, VerbParsing.CodeVersion, progress, ct);
                        task.Value = 100;
                    });
            }
            catch (ArgumentException ex)
            {
                return Task.FromResult(VerbParsing.FailArgument(Console.Error, parse, ex));
            }
            var outPath = parse.GetValue(output)!.FullName;
            Directory.CreateDirectory(Path.GetDirectoryName(outPath)!);
            File.WriteAllText(outPath, CalibrationJson.Serialize(doc!));
            string stem = Path.Combine(Path.GetDirectoryName(outPath)!, Path.GetFileNameWithoutExtension(outPath));
            File.WriteAllText(stem + ".minimum-r.csv", MinimumResolutionTable.ToCsv(doc!.MinimumResolution));
            File.WriteAllText(stem + ".minimum-r.json", CalibrationJson.SerializeMinimumResolution(doc.MinimumResolution));
            File.WriteAllText(stem + ".cells.csv", AccuracyTableCsv.Write(doc.Cells));
            if (parse.GetValue(plots) is { } plotDir) WritePlots(doc, plotDir.FullName);
            PrintSummary(doc, timings!);
            Console.WriteLine($"Wrote {outPath}, {stem}.minimum-r.csv and .json, {stem}.cells.csv");
            return Task.FromResult(0);
        });
        return cmd;
    }

    // The low-R band: the defaults' band unless overridden; --low-r-below 0 switches it off.
    private static PreprocessOptions LowResolutionChoice(PreprocessOptions o, double? below, ContinuumHandling? continuum, int? minBins)
    {
        var defaults = new PreprocessOptions();
        double threshold = below ?? defaults.LowResolutionBelow;
        if (threshold < 0) throw new FormatException("--low-r-below: must be ≥ 0.");
        if (minBins is < 4) throw new FormatException("--low-r-min-bins: at least 4.");
        if (threshold == 0) return o with { LowResolutionBelow = 0, LowResolution = null };
        var low = (defaults.LowResolution ?? o) with { MaxBins = o.MaxBins };
        low = low with { Continuum = continuum ?? low.Continuum, MinBins = minBins ?? low.MinBins };
        return o with { LowResolutionBelow = threshold, LowResolution = low };
    }

    internal static void WritePlots(AccuracyModelDocument doc, string dir)
    {
        Directory.CreateDirectory(dir);
        foreach (var snr in doc.SnrLevels)
        {
            string tag = snr is double v ? "snr" + v.ToString(CultureInfo.InvariantCulture) : "native";
            File.WriteAllText(Path.Combine(dir, $"recall-vs-r-{tag}.svg"), CalibrationPlots.RecallCurvesSvg(doc, snr));
            foreach (double r in new[] { doc.Resolutions[^1], doc.Resolutions.OrderBy(x => Math.Abs(Math.Log(x / 100))).First(), doc.Resolutions[0] }.Distinct())
                File.WriteAllText(Path.Combine(dir, string.Create(CultureInfo.InvariantCulture, $"confusion-r{r:0}-{tag}.svg")),
                    CalibrationPlots.ConfusionSvg(doc, r, snr));
        }
        if (doc.SnrLevels.Any(s => s is not null))
            File.WriteAllText(Path.Combine(dir, "equal-exposure.svg"), CalibrationPlots.EqualExposureSvg(doc));
    }

    private static void PrintSummary(AccuracyModelDocument doc, CalibrationTimings t)
    {
        var table = new Table().AddColumn("R");
        foreach (var snr in doc.SnrLevels) table.AddColumn($"S/N {(snr is double v ? v.ToString(CultureInfo.InvariantCulture) : "native")}: subtype / broad");
        foreach (double r in doc.Resolutions)
        {
            var cells = new List<string> { r.ToString("0.#", CultureInfo.InvariantCulture) };
            foreach (var snr in doc.SnrLevels)
            {
                var s = doc.Summaries.First(x => x.Resolution == r && x.Snr == snr);
                cells.Add(string.Create(CultureInfo.InvariantCulture, $"{s.Accuracy:0.000} / {s.BroadAccuracy:0.000}"));
            }
            table.AddRow(cells.ToArray());
        }
        AnsiConsole.Write(table);
        if (doc.Baselines is { } b)
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"Baselines: uniform guess {b.UniformGuess:0.000}, majority ({b.MajoritySubtype}) {b.MajorityClass:0.000}"));
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"Time (stages summed over R, which overlap): degrade {t.Degrade.TotalSeconds:0.0} s, noise+features {t.Features.TotalSeconds:0.0} s, train+predict {t.Train.TotalSeconds:0.0} s, total {t.Total.TotalSeconds:0.0} s"));
    }

    /// <summary>Progress callback invoked synchronously on the reporting thread.</summary>
    private sealed class Inline<T>(Action<T> action) : IProgress<T>
    {
        public void Report(T value) => action(value);
    }
}
