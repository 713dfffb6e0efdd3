// Moving the invented demo scenario to another night: every time in the broker batch (discovery, photometry as an
// ISO 8601 instant or as an MJD) moves by Δ = (target night − scenario night) whole days, and every right ascension by Δ · 360°/365.2422
// (the Sun's mean motion per day), so that each target stands at the same hour angle at the same clock time
// and the demo night looks alike in any season. Declinations, magnitudes and ids are unchanged.
//
// References
// [1] J. Meeus, Astronomical Algorithms, 2nd ed., Willmann-Bell 1998, ch. 25 (the Sun's mean longitude
//     advances 0.98564736° per day, 360° per tropical year of 365.2422 days).
using System.Globalization;
using System.Text.Json.Nodes;

namespace Triage.Core.Candidates;

/// <summary>Shifts the demo scenario (a broker batch invented for <see cref="ScenarioNight"/>) to another night.</summary>
public static class DemoShift
{
    /// <summary>The night the demo scenario was invented for.</summary>
    public static readonly DateOnly ScenarioNight = new(2026, 12, 2);

    /// <summary>Degrees of right ascension per day that keep a target at the same hour angle at the same clock time.</summary>
    public const double RightAscensionDegPerDay = 360.0 / 365.2422;

    /// <summary>
    /// Parses YYYY-MM-DD or "tonight" (the UTC date twelve hours before <paramref name="nowUtc"/>: the evening the
    /// current night started).
    /// </summary>
    public static bool TryParseNight(string text, DateTimeOffset nowUtc, out DateOnly night)
    {
        if (string.Equals(text, "tonight", StringComparison.OrdinalIgnoreCase))
        {
            night = DateOnly.FromDateTime(nowUtc.UtcDateTime.AddHours(-12));
            return true;
        }

        return DateOnly.TryParseExact(text, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out night);
    }

    /// <summary>The batch JSON with its times and right ascensions moved to <paramref name="night"/>.</summary>
    /// <exception cref="FormatException">The text is not a broker batch.</exception>
    public static string Shift(string batchJson, DateOnly night)
    {
        var days = night.DayNumber - ScenarioNight.DayNumber;
        var root = JsonNode.Parse(batchJson) as JsonObject ?? throw new FormatException("demo batch: not a JSON object.");
        if (days == 0)
        {
            return batchJson;
        }

        var offset = TimeSpan.FromDays(days);
        foreach (var candidate in root["candidates"]?.AsArray() ?? throw new FormatException("demo batch: no 'candidates' array."))
        {
            if (candidate is not JsonObject c)
            {
                continue;
            }

            ShiftTime(c, "discoveredUtc", offset);
            if (c["raDeg"] is JsonValue ra && ra.TryGetValue<double>(out var raDeg))
            {
                var shifted = (raDeg + days * RightAscensionDegPerDay) % 360.0;
                c["raDeg"] = Math.Round(shifted < 0 ? shifted + 360.0 : shifted, 5) % 360.0;
            }

            foreach (var point in c["photometry"]?.AsArray() ?? [])
            {
                if (point is JsonObject p)
                {
                    // A point carries its time either as an ISO 8601 instant or as an MJD (UTC days).
                    ShiftTime(p, "timeUtc", offset);
                    if (p["mjd"] is JsonValue mjd && mjd.TryGetValue<double>(out var days0))
                    {
                        p["mjd"] = Math.Round(days0 + days, 9);
                    }
                }
            }
        }

        return root.ToJsonString();
    }

    private static void ShiftTime(JsonObject node, string name, TimeSpan offset)
    {
        if (node[name] is JsonValue v && v.TryGetValue<string>(out var text)
            && DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.RoundtripKind, out var t))
        {
            node[name] = (t + offset).ToString("yyyy-MM-ddTHH:mm:ss.fffffffzzz", CultureInfo.InvariantCulture);
        }
    }
}
