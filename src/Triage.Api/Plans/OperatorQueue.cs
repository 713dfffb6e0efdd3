using System.Globalization;
using System.Text;
using Triage.Core.Planning;
using Triage.Core.Sky;

namespace Triage.Api.Plans;

/// <summary>
/// One line of an operator's queue: what to point at (broker id, ICRS position in degrees and sexagesimal, predicted
/// magnitude), when and how long (slot, total exposure and its split), under what sky (airmass at start, middle and
/// end, the Moon's distance), why (value, one-line reason) and what to do if the slot is missed.
/// </summary>
public sealed record OperatorEntry(
    int Position,
    string CandidateId,
    string? Broker,
    string? BrokerCandidateId,
    double? RaDeg,
    double? DecDeg,
    string? RaSexagesimal,
    string? DecSexagesimal,
    double PredictedMagnitude,
    DateTimeOffset StartUtc,
    DateTimeOffset EndUtc,
    double ExposureSeconds,
    int ExposureCount,
    double SubExposureSeconds,
    double? AirmassStart,
    double Airmass,
    double? AirmassEnd,
    double? MoonSeparationDeg,
    double ExpectedSnr,
    double ExpectedAccuracy,
    double Value,
    string Reason,
    MissedSlotAdvice? IfMissed,
    bool KeptFromPrevious)
{
    /// <summary>Other brokers' posts of the same transient (a report on this entry answers them too); empty when posted once.</summary>
    public IReadOnlyList<OtherPost> AlsoPostedAs { get; init; } = [];

    /// <summary>"broker-b/ID-7, broker-c/ID-9", or empty.</summary>
    public string AlsoPostedAsText => string.Join(", ", AlsoPostedAs.Select(o => o.Broker is null ? o.CandidateId : $"{o.Broker}/{o.BrokerCandidateId}"));

    /// <summary>The queue entry as an operator reads it.</summary>
    public static OperatorEntry From(int position, QueueEntry e)
    {
        var count = Math.Max(1, e.ExposureCount);
        return new OperatorEntry(position, e.CandidateId, e.Broker, e.BrokerCandidateId, e.RaDeg, e.DecDeg,
            e.RaDeg is { } ra ? Sexagesimal.RightAscension(ra) : null, e.DecDeg is { } dec ? Sexagesimal.Declination(dec) : null,
            e.PredictedMagnitude, e.StartUtc, e.EndUtc, e.ExposureSeconds, count, e.ExposureSeconds / count,
            e.AirmassStart, e.Airmass, e.AirmassEnd, e.MoonSeparationDeg, e.ExpectedSnr, e.ExpectedAccuracy, e.Value, e.Reason, e.IfMissed, e.KeptFromPrevious)
        {
            AlsoPostedAs = e.AlsoPostedAs ?? [],
        };
    }

    /// <summary>"3 × 600 s".</summary>
    public string Split => string.Create(CultureInfo.InvariantCulture, $"{ExposureCount} × {SubExposureSeconds:0} s");

    /// <summary>One line on the missed-slot fallback.</summary>
    public string IfMissedText => IfMissed is { } m
        ? string.Create(CultureInfo.InvariantCulture, $"{m.Name}, start {m.EarliestStartUtc:HH:mm}–{m.LatestStartUtc:HH:mm} UTC, {m.ExposureSeconds:0} s, value {m.Value:0.000}")
        : "no later window tonight";
}

/// <summary>A queue as CSV for observers' tools and as a plain-text night sheet that prints on A4/Letter in portrait.</summary>
public static class OperatorQueue
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>The entries numbered in start order.</summary>
    public static IReadOnlyList<OperatorEntry> Entries(SpectrographQueue queue) =>
        queue.Queue.OrderBy(e => e.StartUtc).Select((e, i) => OperatorEntry.From(i + 1, e)).ToList();

    /// <summary>CSV (RFC 4180, UTC times, degrees and sexagesimal, the reason last).</summary>
    public static string Csv(SpectrographQueue queue)
    {
        var sb = new StringBuilder();
        sb.AppendLine("# Advisory plan: the observatory's own interlocks and operators decide what is observed.");
        sb.AppendLine("position,candidate_id,start_utc,end_utc,broker,broker_candidate_id,ra_deg,dec_deg,ra_hms,dec_dms,predicted_mag_ab,"
            + "exposure_seconds,exposure_count,sub_exposure_seconds,airmass_start,airmass,airmass_end,moon_separation_deg,"
            + "expected_snr,expected_accuracy,value,if_missed,also_posted_as,reason");
        foreach (var e in Entries(queue))
        {
            sb.Append(e.Position).Append(',')
              .Append(Quote(e.CandidateId)).Append(',')
              .Append(Utc(e.StartUtc)).Append(',')
              .Append(Utc(e.EndUtc)).Append(',')
              .Append(Quote(e.Broker ?? "")).Append(',')
              .Append(Quote(e.BrokerCandidateId ?? "")).Append(',')
              .Append(Num(e.RaDeg, "0.00000")).Append(',')
              .Append(Num(e.DecDeg, "0.00000")).Append(',')
              .Append(e.RaSexagesimal ?? "").Append(',')
              .Append(e.DecSexagesimal ?? "").Append(',')
              .Append(e.PredictedMagnitude.ToString("0.00", Inv)).Append(',')
              .Append(e.ExposureSeconds.ToString("0", Inv)).Append(',')
              .Append(e.ExposureCount.ToString(Inv)).Append(',')
              .Append(e.SubExposureSeconds.ToString("0", Inv)).Append(',')
              .Append(Num(e.AirmassStart, "0.000")).Append(',')
              .Append(e.Airmass.ToString("0.000", Inv)).Append(',')
              .Append(Num(e.AirmassEnd, "0.000")).Append(',')
              .Append(Num(e.MoonSeparationDeg, "0.0")).Append(',')
              .Append(e.ExpectedSnr.ToString("0.0", Inv)).Append(',')
              .Append(e.ExpectedAccuracy.ToString("0.000", Inv)).Append(',')
              .Append(e.Value.ToString("0.0000", Inv)).Append(',')
              .Append(Quote(e.IfMissedText)).Append(',')
              .Append(Quote(e.AlsoPostedAsText)).Append(',')
              .Append(Quote(e.Reason)).AppendLine();
        }

        return sb.ToString();
    }

    /// <summary>
    /// The night sheet: a header (unit, site, night, version, planned-from instant, advisory), then per entry two
    /// fixed-width lines of at most 96 characters (slot, target, sky, exposure; then value, the fallback and the reason
    /// wrapped).
    /// </summary>
    public static string NightSheet(SpectrographQueue queue, DateOnly night, int version, DateTimeOffset plannedFrom)
    {
        var sb = new StringBuilder();
        sb.AppendLine(string.Create(Inv, $"NIGHT SHEET  {queue.Name} (R={queue.ResolvingPower:0}) at {queue.SiteName}  night of {night:yyyy-MM-dd}"));
        sb.AppendLine(string.Create(Inv, $"Plan version {version}, planned from {Utc(plannedFrom)}. All times UTC; RA/Dec ICRS."));
        sb.AppendLine("Advisory: the observatory's own interlocks, safety systems and operators decide what is observed.");
        sb.AppendLine(new string('=', 96));
        sb.AppendLine(" #  start-end    broker id             RA (h:m:s)   Dec (d:m:s)   mag   then: exposure, sky, value");
        sb.AppendLine(new string('-', 96));
        foreach (var e in Entries(queue))
        {
            var id = e.BrokerCandidateId ?? e.CandidateId;
            sb.AppendLine(string.Create(Inv,
                $"{e.Position,2}  {e.StartUtc:HH:mm}-{e.EndUtc:HH:mm}  {Fit(id, 20),-20}  {e.RaSexagesimal ?? "-",-11}  {e.DecSexagesimal ?? "-",-11}  {e.PredictedMagnitude,4:0.0}"));
            sb.AppendLine(string.Create(Inv,
                $"    exposure {e.ExposureSeconds:0} s = {e.Split}  airmass {Num(e.AirmassStart, "0.00")}/{e.Airmass:0.00}/{Num(e.AirmassEnd, "0.00")}  Moon {Num(e.MoonSeparationDeg, "0")} deg  value {e.Value:0.000}  A={e.ExpectedAccuracy:0.00}"));
            foreach (var line in Wrap(string.Create(Inv, $"deg ({Num(e.RaDeg, "0.0000")}, {Num(e.DecDeg, "+0.0000;-0.0000")}); if missed: {e.IfMissedText}"), 90)
                .Concat(e.AlsoPostedAs.Count > 0 ? Wrap("same transient, also posted as: " + e.AlsoPostedAsText, 90) : [])
                .Concat(Wrap("why: " + e.Reason, 90)))
            {
                sb.Append("    ").AppendLine(line);
            }

            sb.AppendLine();
        }

        if (queue.Queue.Count == 0)
        {
            sb.AppendLine("Nothing planned for this unit.");
        }

        return sb.ToString();
    }

    private static string Utc(DateTimeOffset t) => t.UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ssZ", Inv);

    private static string Num(double? v, string format) => v is { } x ? x.ToString(format, Inv) : "";

    private static string Fit(string s, int width) => s.Length <= width ? s : s[..(width - 1)] + "…";

    private static string Quote(string s) => "\"" + s.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";

    private static IEnumerable<string> Wrap(string text, int width)
    {
        var line = new StringBuilder();
        foreach (var word in text.Split(' ', StringSplitOptions.RemoveEmptyEntries))
        {
            if (line.Length > 0 && line.Length + 1 + word.Length > width)
            {
                yield return line.ToString();
                line.Clear().Append("    ");
            }

            if (line.Length > 0 && line.ToString().Trim().Length > 0)
            {
                line.Append(' ');
            }

            line.Append(word);
        }

        if (line.Length > 0)
        {
            yield return line.ToString();
        }
    }
}
