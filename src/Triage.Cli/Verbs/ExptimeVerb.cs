using System.CommandLine;
using System.Text.Json;
using Triage.Core.Exposure;
using Triage.Core.Sky;

namespace Triage.Cli.Verbs;

/// <summary>
/// <c>triage exptime</c>: S/N per resolution element for a time, or the time for an S/N, with the electron budget.
/// </summary>
internal static class ExptimeVerb
{
    public static Command Create()
    {
        var instrument = new Option<FileInfo>("--instrument") { Description = "Instrument JSON file (spectrograph fields plus a \"site\" object).", Required = true };
        var mag = new Option<double>("--mag") { Description = "AB magnitude of the source continuum.", Required = true };
        var snr = new Option<double?>("--snr") { Description = "Wanted S/N per resolution element (give this or --seconds)." };
        var seconds = new Option<double?>("--seconds") { Description = "Open-shutter time, s (give this or --snr)." };
        var airmass = new Option<double>("--airmass") { Description = "Airmass of the pointing.", DefaultValueFactory = _ => 1.0 };
        var moonIllumination = new Option<double>("--moon-illumination") { Description = "Illuminated fraction of the Moon, 0–1 (0: no moonlight).", DefaultValueFactory = _ => 0 };
        var moonAltitude = new Option<double>("--moon-altitude") { Description = "Moon altitude when lit, degrees.", DefaultValueFactory = _ => 45 };
        var moonSeparation = new Option<double>("--moon-separation") { Description = "Target–Moon angle when lit, degrees.", DefaultValueFactory = _ => 90 };
        var wavelength = new Option<double?>("--wavelength") { Description = "Wavelength of the estimate, Å (default: the instrument's reference)." };
        var maxSeconds = new Option<double>("--max-seconds") { Description = "Longest total time considered for --snr, s.", DefaultValueFactory = _ => 14_400 };

        var command = new Command("exptime", "Exposure time or S/N per resolution element for one spectrograph, as JSON.")
        {
            instrument, mag, snr, seconds, airmass, moonIllumination, moonAltitude, moonSeparation, wavelength, maxSeconds,
        };
        command.SetAction(parse =>
        {
            var output = parse.InvocationConfiguration.Output;
            var error = parse.InvocationConfiguration.Error;
            double? wantedSnr = parse.GetValue(snr), wantedSeconds = parse.GetValue(seconds);
            if (wantedSnr is null == wantedSeconds is null)
            {
                return CliJson.Fail(error, "give exactly one of --snr and --seconds.");
            }

            double illumination = parse.GetValue(moonIllumination);
            if (!(illumination is >= 0 and <= 1))
            {
                return CliJson.Fail(error, "--moon-illumination must be in [0, 1].");
            }

            var file = parse.GetValue(instrument)!;
            InstrumentFile spec;
            try
            {
                spec = InstrumentFile.Parse(File.ReadAllText(file.FullName));
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or JsonException)
            {
                return CliJson.Fail(error, $"--instrument {file.Name}: {ex.Message}");
            }

            MoonlightGeometry? moon = illumination > 0
                ? new MoonlightGeometry(Math.Acos(2 * illumination - 1) * 180 / Math.PI, parse.GetValue(moonAltitude), parse.GetValue(moonSeparation))
                : null;
            var conditions = new ObservingConditions
            {
                Airmass = parse.GetValue(airmass),
                Moon = moon,
                WavelengthAngstrom = parse.GetValue(wavelength),
                SpatialExtractionPixels = spec.SpatialExtractionPixels,
                MaxTotalSeconds = parse.GetValue(maxSeconds),
            };
            try
            {
                var calculator = ExposureCalculator.For(spec.ToSpectrograph(), spec.ToSite());
                double m = parse.GetValue(mag);
                var estimate = wantedSnr is { } s ? calculator.TimeFor(m, s, conditions) : calculator.SignalToNoiseFor(m, wantedSeconds!.Value, conditions);
                output.WriteLine(JsonSerializer.Serialize(Describe(spec.Name, m, wantedSnr, illumination, estimate), CliJson.Options));
                return 0;
            }
            catch (ArgumentOutOfRangeException ex)
            {
                return VerbParsing.FailArgument(error, parse, ex);
            }
        });
        return command;
    }

    private static object Describe(string name, double mag, double? wantedSnr, double illumination, ExposureEstimate e) => new
    {
        instrument = name,
        magAB = mag,
        snrConvention = "per resolution element (Δλ = λ/R) at the stated wavelength, on the continuum",
        requestedSnr = wantedSnr,
        reachable = e.Reachable,
        snr = CliJson.Round(e.SignalToNoise, 3),
        seconds = CliJson.Round(e.ExposureSeconds, 2),
        exposureCount = e.ExposureCount,
        subExposureSeconds = CliJson.Round(e.SubExposureSeconds, 2),
        elapsedSeconds = CliJson.Round(e.ElapsedSeconds, 2),
        electrons = new
        {
            source = CliJson.Round(e.Electrons.SourceElectrons, 2),
            sky = CliJson.Round(e.Electrons.SkyElectrons, 2),
            dark = CliJson.Round(e.Electrons.DarkElectrons, 3),
            readNoise = CliJson.Round(e.Electrons.ReadNoiseElectrons, 3),
            readNoiseVariance = CliJson.Round(e.Electrons.ReadNoiseVariance, 2),
            noise = CliJson.Round(e.Electrons.NoiseElectrons, 3),
        },
        rates = new
        {
            sourceElectronsPerSecond = CliJson.Round(e.Rates.SourceElectronsPerSecond, 5),
            skyElectronsPerSecond = CliJson.Round(e.Rates.SkyElectronsPerSecond, 5),
            darkElectronsPerSecond = CliJson.Round(e.Rates.DarkElectronsPerSecond, 6),
            pixels = e.Rates.Pixels,
            spatialPixels = e.Rates.SpatialPixels,
            wavelengthAngstrom = e.Rates.WavelengthAngstrom,
            resolutionElementAngstrom = CliJson.Round(e.Rates.ResolutionElementAngstrom, 4),
            slitTransmission = CliJson.Round(e.Rates.SlitTransmission, 5),
            extractionFraction = CliJson.Round(e.Rates.ExtractionFraction, 5),
            skyMagArcsec2 = CliJson.Round(e.Rates.SkyMagArcsec2, 3),
        },
        moonIllumination = illumination,
    };
}
