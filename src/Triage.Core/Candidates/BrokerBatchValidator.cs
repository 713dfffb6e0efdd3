using System.Text.RegularExpressions;
using Triage.Core.LightCurves;

namespace Triage.Core.Candidates;

/// <summary>
/// Checks a <see cref="BrokerBatch"/> field by field and turns it into validated
/// <see cref="Candidate"/>s. Every error names the candidate (index and id) and the JSON
/// path of the field.
/// </summary>
/// <remarks>
/// Subtype probabilities: negatives and non-finite values are rejected; a sum within
/// <see cref="BatchLimits.ProbabilitySumTolerance"/> of 1 is normalised (and reported as a
/// notice); a sum further from 1 is rejected. Labels absent from the batch get probability 0.
/// </remarks>
public static partial class BrokerBatchValidator
{
    [GeneratedRegex("^[A-Za-z0-9._:-]{1,64}$")]
    private static partial Regex IdPattern();

    /// <summary>Validates a batch against the active taxonomy.</summary>
    /// <param name="batch">The parsed batch.</param>
    /// <param name="subtypeLabels">Labels of the active taxonomy (case-sensitive).</param>
    /// <param name="limits">Limits; defaults when null.</param>
    public static BatchValidationResult Validate(BrokerBatch? batch, IReadOnlySet<string> subtypeLabels, BatchLimits? limits = null)
    {
        limits ??= new BatchLimits();
        var errors = new List<BatchError>();
        var notices = new List<BatchError>();
        var valid = new List<Candidate>();
        if (batch?.Candidates is null)
        {
            errors.Add(new("candidates", "is required (an array of candidates)."));
            return new(valid, errors, notices);
        }
        if (batch.Candidates.Count == 0)
        {
            errors.Add(new("candidates", "must hold at least one candidate."));
            return new(valid, errors, notices);
        }
        if (batch.Candidates.Count > limits.MaxCandidates)
        {
            errors.Add(new("candidates", $"holds {batch.Candidates.Count} candidates; at most {limits.MaxCandidates} are accepted per batch."));
            return new(valid, errors, notices);
        }

        var seenIds = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int i = 0; i < batch.Candidates.Count; i++)
        {
            var candidate = ValidateCandidate(batch.Candidates[i], i, subtypeLabels, limits, errors, notices);
            string? id = batch.Candidates[i]?.Id;
            if (id is not null && IdPattern().IsMatch(id))
            {
                if (seenIds.TryGetValue(id, out int first))
                {
                    errors.Add(new($"candidates[{i}].id", $"duplicates the id of candidates[{first}] in the same batch.", i, id));
                    continue;
                }
                seenIds[id] = i;
            }
            if (candidate is not null)
            {
                valid.Add(candidate);
            }
        }
        return new(valid, errors, notices);
    }

    private static Candidate? ValidateCandidate(
        CandidateSubmission? c, int i, IReadOnlySet<string> labels, BatchLimits limits,
        List<BatchError> errors, List<BatchError> notices)
    {
        string p = $"candidates[{i}]";
        if (c is null)
        {
            errors.Add(new(p, "must be an object, not null.", i));
            return null;
        }
        int before = errors.Count;
        string? id = c.Id;
        void Fail(string field, string message) => errors.Add(new($"{p}.{field}", message, i, id));

        if (id is null)
        {
            Fail("id", "is required.");
        }
        else if (!IdPattern().IsMatch(id))
        {
            Fail("id", "must be 1–64 characters of A–Z a–z 0–9 . _ : -.");
        }

        RequireFinite(c.RaDeg, "raDeg", 0, 360, upperExclusive: true, Fail);
        RequireFinite(c.DecDeg, "decDeg", -90, 90, upperExclusive: false, Fail);
        if (c.DiscoveredUtc is not { } discovered)
        {
            Fail("discoveredUtc", "is required (ISO 8601 UTC instant).");
        }
        else
        {
            CheckInstant(discovered, "discoveredUtc", limits, Fail);
        }

        if (c.Redshift is { } z)
        {
            if (!double.IsFinite(z) || z < 0 || z > 5)
            {
                Fail("redshift", "must be a finite number in [0, 5].");
            }
        }
        if (c.RedshiftError is { } zErr)
        {
            if (c.Redshift is null)
            {
                Fail("redshiftError", "is given without a redshift.");
            }
            else if (!double.IsFinite(zErr) || zErr <= 0 || zErr > 1)
            {
                Fail("redshiftError", "must be a finite number in (0, 1].");
            }
        }
        if (c.ScienceWeight is { } w && (!double.IsFinite(w) || w <= 0 || w > 100))
        {
            Fail("scienceWeight", "must be a finite number in (0, 100].");
        }
        if (c.Notes is { Length: > 2000 })
        {
            Fail("notes", "must be at most 2,000 characters.");
        }
        ValidateBrokerState(c.BrokerState, limits, Fail);

        var probabilities = ValidateProbabilities(c.SubtypeProbabilities, labels, limits, Fail,
            message => notices.Add(new($"{p}.subtypeProbabilities", message, i, id)));
        var photometry = ValidatePhotometry(c.Photometry, limits, Fail);

        if (errors.Count > before)
        {
            return null;
        }
        return new Candidate(id!, c.RaDeg!.Value, c.DecDeg!.Value, c.DiscoveredUtc!.Value.ToUniversalTime(),
            c.Redshift, c.RedshiftError, photometry!, probabilities, c.ScienceWeight ?? 1.0, c.Notes, c.BrokerState);
    }

    private static void RequireFinite(double? value, string field, double min, double max, bool upperExclusive, Action<string, string> fail)
    {
        if (value is not { } v)
        {
            fail(field, "is required.");
        }
        else if (!double.IsFinite(v) || v < min || (upperExclusive ? v >= max : v > max))
        {
            fail(field, $"must be a finite number in [{min}, {max}{(upperExclusive ? ")" : "]")}.");
        }
    }

    private static void CheckInstant(DateTimeOffset t, string field, BatchLimits limits, Action<string, string> fail)
    {
        if (t < limits.NotBeforeUtc)
        {
            fail(field, $"is before {limits.NotBeforeUtc:yyyy-MM-dd}.");
        }
        else if (limits.NotAfterUtc is { } notAfter && t > notAfter)
        {
            fail(field, "is in the future.");
        }
    }

    private static void ValidateBrokerState(BrokerState? s, BatchLimits limits, Action<string, string> fail)
    {
        if (s is null)
        {
            return;
        }
        if (s.PeakUtc is { } peak && peak < limits.NotBeforeUtc)
        {
            fail("brokerState.peakUtc", $"is before {limits.NotBeforeUtc:yyyy-MM-dd}.");
        }
        if (s.PeakSigmaDays is { } sd && (!double.IsFinite(sd) || sd <= 0 || sd > 1000))
        {
            fail("brokerState.peakSigmaDays", "must be a finite number in (0, 1000].");
        }
        if (s.PeakMagAb is { } m && (!double.IsFinite(m) || m < -2 || m > 35))
        {
            fail("brokerState.peakMagAb", "must be a finite AB magnitude in [−2, 35].");
        }
        if (s.PeakBand is { } b && !PhotometricBands.TryGet(b, out _))
        {
            fail("brokerState.peakBand", $"'{b}' is not a known band ({KnownBands}).");
        }
        if (s.Trend is { Length: > 64 })
        {
            fail("brokerState.trend", "must be at most 64 characters.");
        }
    }

    private static string KnownBands => string.Join(" ", PhotometricBands.All.Select(b => b.Name));

    private static Dictionary<string, double>? ValidateProbabilities(
        IReadOnlyDictionary<string, double>? given, IReadOnlySet<string> labels, BatchLimits limits,
        Action<string, string> fail, Action<string> notice)
    {
        if (given is null)
        {
            return null;
        }
        if (given.Count == 0)
        {
            fail("subtypeProbabilities", "must name at least one subtype (or be left out).");
            return null;
        }
        bool ok = true;
        double sum = 0;
        foreach (var (label, value) in given)
        {
            string field = $"subtypeProbabilities.{label}";
            if (!labels.Contains(label))
            {
                fail(field, $"'{label}' is not a subtype of the active taxonomy.");
                ok = false;
            }
            else if (!double.IsFinite(value))
            {
                fail(field, "must be a finite number.");
                ok = false;
            }
            else if (value < 0)
            {
                fail(field, "must not be negative.");
                ok = false;
            }
            else if (value > 1)
            {
                fail(field, "must not exceed 1.");
                ok = false;
            }
            else
            {
                sum += value;
            }
        }
        if (!ok)
        {
            return null;
        }
        if (Math.Abs(sum - 1) > limits.ProbabilitySumTolerance)
        {
            fail("subtypeProbabilities", $"sum to {sum:0.####}; they must sum to 1 within ±{limits.ProbabilitySumTolerance}.");
            return null;
        }
        if (sum != 1)
        {
            notice($"summed to {sum:0.######}; normalised to 1.");
        }
        return given.ToDictionary(kv => kv.Key, kv => kv.Value / sum, StringComparer.Ordinal);
    }

    private static List<PhotometryPoint>? ValidatePhotometry(
        IReadOnlyList<PhotometrySubmission?>? points, BatchLimits limits, Action<string, string> fail)
    {
        if (points is null)
        {
            fail("photometry", "is required (at least one detection).");
            return null;
        }
        if (points.Count > limits.MaxPhotometryPerCandidate)
        {
            fail("photometry", $"holds {points.Count} points; at most {limits.MaxPhotometryPerCandidate} are accepted per candidate.");
            return null;
        }
        var result = new List<PhotometryPoint>(points.Count);
        var seen = new Dictionary<(string Band, long Microseconds), int>();
        bool ok = true;
        for (int j = 0; j < points.Count; j++)
        {
            var point = ValidatePoint(points[j], $"photometry[{j}]", limits, (f, m) => { ok = false; fail(f, m); });
            if (point is null)
            {
                continue;
            }
            // Compared to the microsecond, the resolution the time is stored at (a timestamptz), so two
            // points closer than that are refused here rather than colliding in the database.
            var key = (point.Band.Name, point.TimeUtc.UtcTicks / TimeSpan.TicksPerMicrosecond);
            if (seen.TryGetValue(key, out int first))
            {
                fail($"photometry[{j}]", $"duplicates photometry[{first}] (same band and time).");
                ok = false;
                continue;
            }
            seen[key] = j;
            result.Add(point);
        }
        if (ok && !result.Any(r => !r.IsUpperLimit))
        {
            fail("photometry", "must contain at least one detection (a point that is not an upper limit).");
            ok = false;
        }
        if (!ok)
        {
            return null;
        }
        result.Sort((a, b) => a.TimeUtc != b.TimeUtc ? a.TimeUtc.CompareTo(b.TimeUtc) : string.CompareOrdinal(a.Band.Name, b.Band.Name));
        return result;
    }

    private static PhotometryPoint? ValidatePoint(PhotometrySubmission? s, string p, BatchLimits limits, Action<string, string> fail)
    {
        if (s is null)
        {
            fail(p, "must be an object, not null.");
            return null;
        }
        bool ok = true;
        void F(string field, string message)
        {
            ok = false;
            fail($"{p}.{field}", message);
        }

        DateTimeOffset time = default;
        if (s.TimeUtc is { } t && s.Mjd is not null)
        {
            F("mjd", "give either timeUtc or mjd, not both.");
        }
        else if (s.TimeUtc is { } t2)
        {
            time = t2.ToUniversalTime();
            CheckInstant(time, "timeUtc", limits, F);
        }
        else if (s.Mjd is { } mjd)
        {
            if (!double.IsFinite(mjd) || mjd < 40000 || mjd > 80000)
            {
                F("mjd", "must be a finite MJD in [40000, 80000].");
            }
            else
            {
                time = ModifiedJulianDate.ToUtc(mjd);
                CheckInstant(time, "mjd", limits, F);
            }
        }
        else
        {
            F("timeUtc", "is required (or give mjd).");
        }

        PhotometricBand band = null!;
        if (s.Band is null)
        {
            F("band", "is required.");
        }
        else if (!PhotometricBands.TryGet(s.Band, out band))
        {
            F("band", $"'{s.Band}' is not a known band ({KnownBands}).");
        }

        bool upper = s.UpperLimit ?? false;
        double flux = 0, fluxErr = 0;
        bool hasMag = s.MagAb is not null || s.MagAbError is not null;
        bool hasFlux = s.FluxMicroJy is not null || s.FluxMicroJyError is not null;
        if (hasMag && hasFlux)
        {
            F("fluxMicroJy", "give either magAb (with magAbError) or fluxMicroJy (with fluxMicroJyError), not both.");
        }
        else if (hasMag)
        {
            if (s.MagAb is not { } m)
            {
                F("magAb", "is required with magAbError.");
            }
            else if (!double.IsFinite(m) || m < -2 || m > 35)
            {
                F("magAb", "must be a finite AB magnitude in [−2, 35].");
            }
            else
            {
                flux = AbMagnitude.ToMicroJansky(m);
            }
            if (s.MagAbError is { } me)
            {
                if (!double.IsFinite(me) || me <= 0 || me > 5)
                {
                    F("magAbError", "must be a finite number in (0, 5].");
                }
                else
                {
                    fluxErr = AbMagnitude.FluxErrorFromMagError(flux, me);
                }
            }
            else if (!upper)
            {
                F("magAbError", "is required for a detection.");
            }
        }
        else if (hasFlux)
        {
            if (s.FluxMicroJy is not { } f)
            {
                F("fluxMicroJy", "is required with fluxMicroJyError.");
            }
            else if (!double.IsFinite(f) || Math.Abs(f) > 1e12)
            {
                F("fluxMicroJy", "must be a finite number of µJy with |f| ≤ 1e12.");
            }
            else if (upper && f <= 0)
            {
                F("fluxMicroJy", "must be positive for an upper limit.");
            }
            else
            {
                flux = f;
            }
            if (s.FluxMicroJyError is { } fe)
            {
                if (!double.IsFinite(fe) || fe <= 0 || fe > 1e12)
                {
                    F("fluxMicroJyError", "must be a finite positive number of µJy.");
                }
                else
                {
                    fluxErr = fe;
                }
            }
            else if (!upper)
            {
                F("fluxMicroJyError", "is required for a detection.");
            }
        }
        else
        {
            F("magAb", "is required (or give fluxMicroJy).");
        }

        // Kept to the microsecond, the resolution of PostgreSQL timestamps, so a point's identity survives storage.
        time = new DateTimeOffset(time.UtcTicks - time.UtcTicks % 10, TimeSpan.Zero);
        return ok ? new PhotometryPoint(time, ModifiedJulianDate.FromUtc(time), band, flux, fluxErr, upper, s.MagAb, s.MagAbError) : null;
    }
}
