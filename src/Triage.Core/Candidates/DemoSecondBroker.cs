// A second invented broker for the demo: surveys overlap, so some transients reach the service twice. It reposts one
// candidate in twelve of the demo batch under its own ids ("NB-" and the original's serial), measured by its own astrometry
// (0.3–0.9″ away, position angles spread by the golden angle) and found a little later (its photometry lacks the
// first point when there are three or more; discovery moves to the first point it keeps when that is later). The planner's grouping
// (SameTransient) should plan each such transient once.
using System.Globalization;
using System.Text.Json.Nodes;

namespace Triage.Core.Candidates;

/// <summary>Derives the second demo broker's batch from the demo batch.</summary>
public static class DemoSecondBroker
{
    // A point's time: an ISO 8601 instant or an MJD (UTC days).
    private static DateTimeOffset? Time(JsonObject point) =>
        point["mjd"] is JsonValue v && v.TryGetValue<double>(out var mjd) ? LightCurves.ModifiedJulianDate.ToUtc(mjd)
        : point["timeUtc"] is JsonValue t && t.TryGetValue<string>(out var text)
            && DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.RoundtripKind, out var at) ? at.ToUniversalTime()
        : null;

    /// <summary>One candidate in this many is reposted.</summary>
    public const int Every = 12;

    /// <summary>The second broker's batch: reposts of candidates 5, 17, 29, … of <paramref name="batchJson"/>.</summary>
    /// <exception cref="FormatException">The text is not a broker batch.</exception>
    public static string Batch(string batchJson)
    {
        var root = JsonNode.Parse(batchJson) as JsonObject ?? throw new FormatException("demo batch: not a JSON object.");
        var source = root["candidates"]?.AsArray() ?? throw new FormatException("demo batch: no 'candidates' array.");
        var reposts = new JsonArray();
        for (var i = 5; i < source.Count; i += Every)
        {
            if (source[i] is not JsonObject original || original["raDeg"] is not JsonValue ra || original["decDeg"] is not JsonValue dec
                || !ra.TryGetValue<double>(out var raDeg) || !dec.TryGetValue<double>(out var decDeg))
            {
                continue;
            }

            var copy = original.DeepClone().AsObject();
            var id = (string?)original["id"] ?? i.ToString(CultureInfo.InvariantCulture);
            copy["id"] = "NB-" + id[(id.LastIndexOf('-') + 1)..];
            var k = reposts.Count + 1;
            var separationArcsec = 0.3 + 0.6 * (k * 0.6180339887 % 1.0);
            var angle = k * 137.50776 * Math.PI / 180;
            var newDec = Math.Clamp(decDeg + separationArcsec * Math.Cos(angle) / 3600, -90, 90);
            var newRa = (raDeg + separationArcsec * Math.Sin(angle) / 3600 / Math.Cos(decDeg * Math.PI / 180)) % 360;
            copy["raDeg"] = Math.Round(newRa < 0 ? newRa + 360 : newRa, 7);
            copy["decDeg"] = Math.Round(newDec, 7);
            if (copy["photometry"] is JsonArray points && points.Count >= 3)
            {
                var ordered = points.OfType<JsonObject>().OrderBy(p => Time(p) ?? DateTimeOffset.MaxValue).ToList();
                points.Remove(ordered[0]);
                if (Time(ordered[1]) is { } found && original["discoveredUtc"] is JsonValue d && d.TryGetValue<string>(out var discovered)
                    && DateTimeOffset.TryParse(discovered, CultureInfo.InvariantCulture, DateTimeStyles.RoundtripKind, out var first) && found > first)
                {
                    copy["discoveredUtc"] = found.ToString("yyyy-MM-ddTHH:mm:ss.fffzzz", CultureInfo.InvariantCulture);
                }
            }

            reposts.Add(copy);
        }

        return new JsonObject { ["candidates"] = reposts }.ToJsonString();
    }
}
