using Npgsql;
using NpgsqlTypes;
using Triage.Core.Candidates;

namespace Triage.Storage.Candidates;

/// <summary>
/// A candidate's photometry as stored in one <c>candidate_light_curves</c> row: parallel arrays,
/// element k of each being point k, in time order (then band, ordinal), each (band, time) at most
/// once. Times are kept to the microsecond, the resolution of a <c>timestamptz</c>.
/// </summary>
internal sealed record StoredLightCurve(
    string[] Band, DateTime[] ObservedAt, double[] FluxMicroJy, double[] FluxErrorMicroJy, bool[] UpperLimit, double?[] MagAb, double?[] MagAbError)
{
    private readonly record struct Point(string Band, DateTime ObservedAt, double Flux, double FluxError, bool Upper, double? Mag, double? MagError)
    {
        public (string, long) Key => (Band, ObservedAt.Ticks);
    }

    /// <summary>Number of points.</summary>
    public int Count => Band.Length;

    /// <summary>The curve of a submission's points (sorted here; the validator has refused duplicates).</summary>
    public static StoredLightCurve Of(IReadOnlyList<PhotometryPoint> photometry)
    {
        var points = new Point[photometry.Count];
        for (int k = 0; k < points.Length; k++)
        {
            points[k] = ToPoint(photometry[k]);
        }
        return From(points);
    }

    /// <summary>
    /// Merges a submission's points into this stored curve: a point replaces the stored point of the
    /// same band and time, stored points not sent again are kept (points are never deleted).
    /// </summary>
    /// <returns>The merged curve, and how many incoming points were new or differed from the stored point.</returns>
    public (StoredLightCurve Merged, int Written) Merge(IReadOnlyList<PhotometryPoint> incoming)
    {
        var points = new Dictionary<(string, long), Point>(Count + incoming.Count);
        for (int k = 0; k < Count; k++)
        {
            var p = new Point(Band[k], ObservedAt[k], FluxMicroJy[k], FluxErrorMicroJy[k], UpperLimit[k], MagAb[k], MagAbError[k]);
            points[p.Key] = p;
        }
        int written = 0;
        foreach (var p in incoming.Select(ToPoint))
        {
            if (!points.TryGetValue(p.Key, out var old) || old != p)
            {
                written++;
                points[p.Key] = p;
            }
        }
        return (From(points.Values), written);
    }

    /// <summary>Reads the curve in columns <paramref name="first"/> … first + 6 (band … mag_ab_error); null when the row had none.</summary>
    public static StoredLightCurve? Read(NpgsqlDataReader reader, int first) =>
        reader.IsDBNull(first) ? null : new StoredLightCurve(
            reader.GetFieldValue<string[]>(first),
            reader.GetFieldValue<DateTime[]>(first + 1),
            reader.GetFieldValue<double[]>(first + 2),
            reader.GetFieldValue<double[]>(first + 3),
            reader.GetFieldValue<bool[]>(first + 4),
            reader.GetFieldValue<double?[]>(first + 5),
            reader.GetFieldValue<double?[]>(first + 6));

    /// <summary>Writes the seven arrays as the next fields of a binary COPY row.</summary>
    public void WriteTo(PgCopyRows copy)
    {
        copy.TextArray(Band);
        copy.TimestampTzArray(ObservedAt);
        copy.Float8Array(FluxMicroJy);
        copy.Float8Array(FluxErrorMicroJy);
        copy.BoolArray(UpperLimit);
        copy.Float8Array(MagAb);
        copy.Float8Array(MagAbError);
    }

    /// <summary>The seven arrays as command parameters named band … mag_ab_error.</summary>
    public IEnumerable<NpgsqlParameter> Parameters() =>
    [
        new("band", NpgsqlDbType.Array | NpgsqlDbType.Text) { Value = Band },
        new("observed_at", NpgsqlDbType.Array | NpgsqlDbType.TimestampTz) { Value = ObservedAt },
        new("flux_microjy", NpgsqlDbType.Array | NpgsqlDbType.Double) { Value = FluxMicroJy },
        new("flux_error_microjy", NpgsqlDbType.Array | NpgsqlDbType.Double) { Value = FluxErrorMicroJy },
        new("upper_limit", NpgsqlDbType.Array | NpgsqlDbType.Boolean) { Value = UpperLimit },
        new("mag_ab", NpgsqlDbType.Array | NpgsqlDbType.Double) { Value = MagAb },
        new("mag_ab_error", NpgsqlDbType.Array | NpgsqlDbType.Double) { Value = MagAbError },
    ];

    // The stored time: truncated to the microsecond, as a timestamptz keeps it.
    private static Point ToPoint(PhotometryPoint p)
    {
        long ticks = p.TimeUtc.UtcTicks;
        return new Point(p.Band.Name, new DateTime(ticks - ticks % 10, DateTimeKind.Utc), p.FluxMicroJy, p.FluxErrorMicroJy, p.IsUpperLimit, p.MagAb, p.MagAbError);
    }

    private static int InOrder(Point a, Point b) => a.ObservedAt != b.ObservedAt ? a.ObservedAt.CompareTo(b.ObservedAt) : string.CompareOrdinal(a.Band, b.Band);

    private static StoredLightCurve From(IEnumerable<Point> points)
    {
        var sorted = points as Point[] ?? points.ToArray();
        bool ordered = true;
        for (int k = 1; k < sorted.Length && ordered; k++)
        {
            ordered = InOrder(sorted[k - 1], sorted[k]) < 0;
        }
        if (!ordered)
        {
            Array.Sort(sorted, InOrder);
        }
        var curve = new StoredLightCurve(new string[sorted.Length], new DateTime[sorted.Length], new double[sorted.Length], new double[sorted.Length],
            new bool[sorted.Length], new double?[sorted.Length], new double?[sorted.Length]);
        for (int k = 0; k < sorted.Length; k++)
        {
            var p = sorted[k];
            (curve.Band[k], curve.ObservedAt[k], curve.FluxMicroJy[k], curve.FluxErrorMicroJy[k], curve.UpperLimit[k], curve.MagAb[k], curve.MagAbError[k]) =
                (p.Band, p.ObservedAt, p.Flux, p.FluxError, p.Upper, p.Mag, p.MagError);
        }
        return curve;
    }
}
