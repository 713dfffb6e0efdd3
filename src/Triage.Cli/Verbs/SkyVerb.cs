using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Cli.Verbs;

/// <summary>
/// <c>triage sky</c>: twilights, Moon, and per-target samples and visibility windows for one site and night.
/// </summary>
internal static class SkyVerb
{
    public static Command Create()
    {
        var latitude = new Option<double>("--latitude") { Description = "Geodetic latitude, degrees, north positive.", Required = true };
        var longitude = new Option<double>("--longitude") { Description = "Longitude, degrees, EAST positive.", Required = true };
        var elevation = new Option<double>("--elevation") { Description = "Height above the WGS84 ellipsoid, m.", DefaultValueFactory = _ => 0 };
        var date = new Option<string>("--date") { Description = "Local date whose evening starts the night, YYYY-MM-DD.", Required = true };
        var targets = new Option<string[]>("--target") { Description = "Target as RA,DEC in ICRS degrees; repeatable." };
        var at = new Option<string[]>("--at") { Description = "ISO 8601 UTC instant to sample; repeatable. Default: the middle of the dark window." };
        var minAltitude = new Option<double>("--min-altitude") { Description = "Lowest usable altitude, degrees.", DefaultValueFactory = _ => 30 };
        var maxAirmass = new Option<double>("--max-airmass") { Description = "Airmass limit for the windows.", DefaultValueFactory = _ => 2.0 };
        var sunAvoidance = new Option<double>("--sun-avoidance") { Description = "Least target–Sun angle, degrees.", DefaultValueFactory = _ => 45 };
        var moonAvoidance = new Option<double>("--moon-avoidance") { Description = "Least target–Moon angle while the Moon is up, degrees.", DefaultValueFactory = _ => 30 };
        var depth = new Option<double>("--twilight-depth") { Description = "Sun depression that counts as dark, degrees.", DefaultValueFactory = _ => 18 };

        var command = new Command("sky", "Twilights, Moon and target visibility for one site and night, as JSON.")
        {
            latitude, longitude, elevation, date, targets, at, minAltitude, maxAirmass, sunAvoidance, moonAvoidance, depth,
        };
        command.SetAction(parse =>
        {
            var output = parse.InvocationConfiguration.Output;
            var error = parse.InvocationConfiguration.Error;
            if (!DateOnly.TryParseExact(parse.GetValue(date), "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var night))
            {
                return CliJson.Fail(error, "--date must be YYYY-MM-DD.");
            }

            var parsedTargets = new List<SkyTarget>();
            foreach (string text in parse.GetValue(targets) ?? [])
            {
                if (!TryParseTarget(text, out var target))
                {
                    return CliJson.Fail(error, $"--target '{text}' must be RA,DEC in degrees with 0 ≤ RA < 360 and −90 ≤ DEC ≤ 90.");
                }

                parsedTargets.Add(target);
            }

            var instants = new List<DateTimeOffset>();
            foreach (string text in parse.GetValue(at) ?? [])
            {
                if (!DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal | DateTimeStyles.AdjustToUniversal, out var t))
                {
                    return CliJson.Fail(error, $"--at '{text}' is not an ISO 8601 UTC instant.");
                }

                instants.Add(t);
            }

            var site = new Site(
                Guid.Empty, "command line", parse.GetValue(latitude), parse.GetValue(longitude), parse.GetValue(elevation),
                parse.GetValue(minAltitude), parse.GetValue(sunAvoidance), parse.GetValue(moonAvoidance),
                1.0, 21.0, 5500, 0.15, SiteStatus.Open);
            try
            {
                var model = NightModel.For(site, night, new NightOptions { TwilightDepthDeg = parse.GetValue(depth) });
                output.WriteLine(JsonSerializer.Serialize(Describe(model, parsedTargets, instants, parse.GetValue(maxAirmass)), CliJson.Options));
                return 0;
            }
            catch (ArgumentOutOfRangeException ex)
            {
                return VerbParsing.FailArgument(error, parse, ex);
            }
        });
        return command;
    }

    private static bool TryParseTarget(string text, out SkyTarget target)
    {
        target = default;
        var parts = text.Split(',');
        if (parts.Length != 2
            || !double.TryParse(parts[0], NumberStyles.Float, CultureInfo.InvariantCulture, out double ra)
            || !double.TryParse(parts[1], NumberStyles.Float, CultureInfo.InvariantCulture, out double dec)
            || !(ra >= 0 && ra < 360) || !(dec >= -90 && dec <= 90))
        {
            return false;
        }

        target = new SkyTarget(ra, dec);
        return true;
    }

    private static object Describe(NightModel model, IReadOnlyList<SkyTarget> targets, IReadOnlyList<DateTimeOffset> instants, double maxAirmass)
    {
        var dark = model.DarkWindow;
        var reference = dark.Window is { } w ? w.StartUtc + w.Duration / 2 : model.StartUtc.AddHours(12);
        var samples = instants.Count > 0 ? instants : [reference];
        var phase = MoonPhase.At(reference);
        return new
        {
            site = new { latitudeDeg = model.Site.LatitudeDeg, longitudeDeg = model.Site.LongitudeDeg, elevationM = model.Site.ElevationM },
            night = new { localDate = model.LocalDate.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture), startUtc = CliJson.Utc(model.StartUtc), endUtc = CliJson.Utc(model.EndUtc) },
            sun = new
            {
                twilights = model.Twilights.Select(t => new { depressionDeg = t.DepressionDeg, eveningUtc = CliJson.Utc(t.EveningUtc), morningUtc = CliJson.Utc(t.MorningUtc) }),
                darkWindow = new { kind = dark.Kind, twilightDepthDeg = dark.TwilightDepthDeg, startUtc = CliJson.Utc(dark.Window?.StartUtc), endUtc = CliJson.Utc(dark.Window?.EndUtc) },
            },
            moon = new
            {
                illumination = CliJson.Round(phase.IlluminatedFraction, 4),
                phaseAngleDeg = CliJson.Round(phase.PhaseAngleDeg, 3),
                atUtc = CliJson.Utc(reference),
                riseSet = model.MoonRiseSet().Select(e => new { kind = e.Kind, utc = CliJson.Utc(e.Utc) }),
                samples = samples.Select(t =>
                {
                    var hz = model.MoonHorizontal(t);
                    return new { utc = CliJson.Utc(t), altitudeDeg = CliJson.Round(hz.AltitudeDeg, 4), azimuthDeg = CliJson.Round(hz.AzimuthDeg, 4), illumination = CliJson.Round(model.MoonIlluminationAt(t), 4) };
                }),
            },
            targets = targets.Select(target =>
            {
                var vis = model.VisibilityWindows(target, maxAirmass);
                return new
                {
                    raDeg = target.RaDeg,
                    decDeg = target.DecDeg,
                    reason = vis.Reason,
                    altitudeLimitDeg = CliJson.Round(vis.AltitudeLimitDeg, 4),
                    at = samples.Select(t =>
                    {
                        var hz = model.Horizontal(target, t);
                        return new
                        {
                            utc = CliJson.Utc(t),
                            altitudeDeg = CliJson.Round(hz.AltitudeDeg, 4),
                            azimuthDeg = CliJson.Round(hz.AzimuthDeg, 4),
                            airmass = CliJson.Round(Airmass.KastenYoung(hz.AltitudeDeg), 4),
                            moonSeparationDeg = CliJson.Round(model.MoonSeparationDeg(target, t), 3),
                            sunSeparationDeg = CliJson.Round(model.SunSeparationDeg(target, t), 3),
                        };
                    }),
                    windows = vis.Windows.Select(w => new { startUtc = CliJson.UtcCeiling(w.StartUtc), endUtc = CliJson.UtcFloor(w.EndUtc) }),
                };
            }),
        };
    }
}
