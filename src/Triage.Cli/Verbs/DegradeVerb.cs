using System.CommandLine;
using System.Globalization;
using Triage.Core.Spectra;

namespace Triage.Cli.Verbs;

/// <summary><c>triage degrade</c>: degrade one plain-text spectrum to a resolving power, optionally adding noise.</summary>
internal static class DegradeVerb
{
    public static Command Create()
    {
        var input = new Option<FileInfo>("--in") { Description = "Input spectrum (wavelength Å, flux[, error]).", Required = true };
        var resolution = new Option<double>("--resolution") { Description = "Target resolving power R.", Required = true };
        var source = new Option<double?>("--source-resolution") { Description = "Resolving power of the input, when known." };
        var snr = new Option<double?>("--snr") { Description = "Target S/N per resolution element at 6000 Å on the continuum (default: no noise)." };
        var ppe = new Option<double>("--pixels-per-element") { Description = "Output pixels per resolution element (default 2).", DefaultValueFactory = _ => 2 };
        var seed = new Option<int>("--seed") { Description = "Noise seed (default 1).", DefaultValueFactory = _ => 1 };
        var output = new Option<FileInfo>("--out") { Description = "Output spectrum file.", Required = true };
        var cmd = new Command("degrade", "Degrade a spectrum to resolving power R (Gaussian kernel, flux-conserving binning, optional noise).")
            { input, resolution, source, snr, ppe, seed, output };
        cmd.SetAction(parse =>
        {
            var inFile = parse.GetValue(input)!;
            if (!inFile.Exists) { Console.Error.WriteLine($"--in: '{inFile.FullName}' does not exist."); return 2; }
            try
            {
                var spectrum = SpectrumText.Parse(File.ReadAllText(inFile.FullName), inFile.Name,
                    new SpectrumReadOptions { MinSamples = 2, MinCoverageAngstrom = 0 });
                double r = parse.GetValue(resolution);
                double p = parse.GetValue(ppe);
                var (grid, flux) = Degradation.Degrade(spectrum, r, parse.GetValue(source), new DegradeOptions { PixelsPerElement = p });
                if (parse.GetValue(snr) is double s)
                    flux = SpectrumNoise.AddNoise(grid, flux, s, p, new Random(parse.GetValue(seed)));
                var centres = grid.Centres();
                var keep = Enumerable.Range(0, grid.Count).Where(i => !double.IsNaN(flux[i])).ToArray();
                var result = new Spectrum(keep.Select(i => centres[i]).ToArray(), keep.Select(i => flux[i]).ToArray());
                using var w = new StreamWriter(parse.GetValue(output)!.FullName);
                SpectrumText.Write(w, result, [string.Create(CultureInfo.InvariantCulture,
                    $"degraded from {inFile.Name} to R = {r}, {p} pixels per element{(parse.GetValue(snr) is double v ? $", S/N {v} per element at 6000 Å" : "")}")]);
                return 0;
            }
            catch (ArgumentException ex)
            {
                return VerbParsing.FailArgument(Console.Error, parse, ex);
            }
            catch (FormatException ex)
            {
                return CliJson.Fail(Console.Error, ex.Message);
            }
        });
        return cmd;
    }
}
