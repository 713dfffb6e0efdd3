namespace Triage.Core.LightCurves;

/// <summary>Modified Julian Date (UTC) ↔ <see cref="DateTimeOffset"/>.</summary>
/// <remarks>MJD = JD − 2400000.5; MJD 0 is 1858-11-17T00:00Z. Leap seconds are ignored
/// (the MJD here counts UTC days of 86,400 s), as brokers' MJD(UTC) columns do.</remarks>
public static class ModifiedJulianDate
{
    private static readonly DateTimeOffset Epoch = new(1858, 11, 17, 0, 0, 0, TimeSpan.Zero);

    /// <summary>MJD of a UTC instant.</summary>
    public static double FromUtc(DateTimeOffset utc) => (utc.UtcDateTime - Epoch.UtcDateTime).TotalDays;

    /// <summary>The UTC instant of an MJD (rounded to the tick).</summary>
    public static DateTimeOffset ToUtc(double mjd) => Epoch.AddTicks((long)Math.Round(mjd * TimeSpan.TicksPerDay));
}
