using System.Text.Json.Nodes;
using Triage.Api.Tests.Infrastructure;

namespace Triage.Api.Tests.Candidates;

/// <summary>Invented candidate batches for the API tests.</summary>
internal static class CandidateBodies
{
    /// <summary>A valid candidate whose photometry samples a rise and decline in g and r (ten points).</summary>
    public static JsonObject Candidate(string? id = null, int points = 10)
    {
        var photometry = new JsonArray();
        var start = new DateTimeOffset(2026, 11, 1, 0, 0, 0, TimeSpan.Zero);
        for (int i = 0; i < points; i++)
        {
            double day = 3 * (i / 2);
            double mag = 20.5 - 2.0 * Math.Exp(-Math.Pow((day - 12) / 8, 2));
            photometry.Add(new JsonObject
            {
                ["timeUtc"] = start.AddDays(day + (i % 2) * 0.01).ToString("O"),
                ["band"] = i % 2 == 0 ? "g" : "r",
                ["magAb"] = Math.Round(mag + (i % 2) * 0.2, 3),
                ["magAbError"] = 0.05,
            });
        }
        return new JsonObject
        {
            ["id"] = id ?? Unique.Name("cand"),
            ["raDeg"] = 123.4,
            ["decDeg"] = -23.5,
            ["discoveredUtc"] = start.ToString("O"),
            ["photometry"] = photometry,
        };
    }

    public static JsonObject Batch(params JsonObject[] candidates) =>
        new() { ["candidates"] = new JsonArray(candidates.Select(c => (JsonNode)c.DeepClone()).ToArray()) };
}
