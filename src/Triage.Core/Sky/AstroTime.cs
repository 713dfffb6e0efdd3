// Julian date, modified Julian date and Terrestrial Time from UTC instants.
//
//   JD  = 2451544.5 + (days elapsed since 2000-01-01T00:00Z)     (proleptic Gregorian, like ERFA)
//   MJD = JD − 2400000.5
//   JD(TT) = JD(UTC) + (TAI−UTC + 32.184 s) / 86400, with TAI−UTC = 37 s (no leap second since 2017-01-01)
//   Calendar dates: Meeus eq. 7.1 with the Gregorian correction B = 2 − A + ⌊A/4⌋ applied at every date.
//
// References
//   1. J. Meeus, Astronomical Algorithms, 2nd ed. (1998), ch. 7 (Julian day), ch. 10 (dynamical time).
//   2. IAU SOFA/ERFA, iauCal2jd (proleptic Gregorian calendar for all dates).
//   3. IERS Bulletin C (TAI−UTC = 37 s since 2017-01-01).
namespace Triage.Core.Sky;

/// <summary>Conversions between UTC instants, Julian dates, MJD and Terrestrial Time.</summary>
/// <remarks>
/// <para>Calendar rule: the <b>proleptic Gregorian</b> calendar is used for every date, as ERFA and astropy
/// do. Meeus's algorithm 7.1 switches to the Julian calendar before 1582 October 15, so for earlier dates
/// the two differ (e.g. 333 January 27.5 is JD 1842712.0 here and 1842713.0 in Meeus example 7.b).</para>
/// <para>Time scales: UT1 is taken equal to UTC (|UT1−UTC| &lt; 0.9 s, i.e. under 14″ of hour angle).
/// TT = UTC + 69.184 s, which holds while TAI−UTC = 37 s (from 2017-01-01 until the next leap second);
/// before 2017 this constant is wrong by up to a minute, so historical checks should pass TT directly.</para>
/// </remarks>
public static class AstroTime
{
    /// <summary>Julian date of J2000.0 (2000 January 1, 12h TT).</summary>
    public const double J2000 = 2451545.0;

    /// <summary>Offset between JD and MJD: MJD = JD − 2400000.5.</summary>
    public const double MjdOffset = 2400000.5;

    /// <summary>Days per Julian century.</summary>
    public const double DaysPerJulianCentury = 36525.0;

    /// <summary>TT − UTC in seconds used for every instant (32.184 s + TAI−UTC of 37 s).</summary>
    public const double TtMinusUtcSeconds = 69.184;

    private const double JdOf2000Midnight = 2451544.5;
    private static readonly DateTime Epoch2000 = new(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc);

    /// <summary>Julian date (UTC-based) of an instant.</summary>
    public static double JulianDate(DateTimeOffset utc) =>
        JdOf2000Midnight + (utc.UtcDateTime - Epoch2000).Ticks / (double)TimeSpan.TicksPerDay;

    /// <summary>Modified Julian date (UTC-based) of an instant.</summary>
    public static double ModifiedJulianDate(DateTimeOffset utc) => JulianDate(utc) - MjdOffset;

    /// <summary>Julian date in Terrestrial Time of a UTC instant (adds <see cref="TtMinusUtcSeconds"/>).</summary>
    public static double JulianDateTT(DateTimeOffset utc) => JulianDate(utc) + TtMinusUtcSeconds / 86400.0;

    /// <summary>UTC instant of a Julian date (UTC-based); rounded to the nearest tick (100 ns).</summary>
    /// <exception cref="ArgumentOutOfRangeException">The date is outside years 1–9999.</exception>
    public static DateTimeOffset FromJulianDate(double jd)
    {
        double ticks = Math.Round((jd - JdOf2000Midnight) * TimeSpan.TicksPerDay);
        double minTicks = -(double)Epoch2000.Ticks;
        double maxTicks = DateTime.MaxValue.Ticks - (double)Epoch2000.Ticks;
        if (double.IsNaN(jd) || ticks < minTicks || ticks > maxTicks)
        {
            throw new ArgumentOutOfRangeException(nameof(jd), jd, "Julian date outside years 1–9999.");
        }

        return new DateTimeOffset(Epoch2000.AddTicks((long)ticks), TimeSpan.Zero);
    }

    /// <summary>UTC instant of a modified Julian date.</summary>
    public static DateTimeOffset FromModifiedJulianDate(double mjd) => FromJulianDate(mjd + MjdOffset);

    /// <summary>
    /// Julian date of a date of the proleptic Gregorian calendar, any year (astronomical numbering:
    /// year 0 = 1 BC). <paramref name="day"/> may carry a fraction (e.g. 4.81).
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">Month outside 1–12 or day outside 1–&lt;32.</exception>
    public static double JulianDateFromGregorian(int year, int month, double day)
    {
        if (month is < 1 or > 12)
        {
            throw new ArgumentOutOfRangeException(nameof(month), month, "Month must be 1–12.");
        }

        if (!(day >= 1 && day < 32))
        {
            throw new ArgumentOutOfRangeException(nameof(day), day, "Day must be in [1, 32).");
        }

        if (month <= 2)
        {
            year -= 1;
            month += 12;
        }

        double a = Math.Floor(year / 100.0);
        double b = 2 - a + Math.Floor(a / 4);
        return Math.Floor(365.25 * (year + 4716)) + Math.Floor(30.6001 * (month + 1)) + day + b - 1524.5;
    }

    /// <summary>Julian centuries of TT since J2000.0.</summary>
    public static double CenturiesSinceJ2000(double jdTT) => (jdTT - J2000) / DaysPerJulianCentury;
}
