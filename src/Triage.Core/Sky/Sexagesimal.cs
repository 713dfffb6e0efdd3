// Sexagesimal notation of ICRS coordinates:
//   RA  α° → hours h = α/15, written HH:MM:SS.ss (0 ≤ h < 24);
//   Dec δ° → sign, DD:MM:SS.s of |δ|.
// Rounding is done on the smallest unit first (hundredths of a second of time, tenths of an arcsecond) and carried
// upwards, so that 59.999 s never prints as "60.00".
//
// References
// [1] IAU, "Recommendations concerning designations", sexagesimal notation of right ascension and declination.
namespace Triage.Core.Sky;

/// <summary>Right ascension and declination in sexagesimal notation.</summary>
public static class Sexagesimal
{
    /// <summary>Right ascension as <c>HH:MM:SS.ss</c>.</summary>
    /// <param name="raDeg">Right ascension, degrees (any value; reduced to 0…360).</param>
    public static string RightAscension(double raDeg)
    {
        var hundredths = (long)Math.Round(Angles.Normalize360(raDeg) / 15.0 * 3600.0 * 100.0, MidpointRounding.AwayFromZero);
        hundredths %= 24L * 3600 * 100;
        var h = hundredths / (3600 * 100);
        var m = hundredths / (60 * 100) % 60;
        var s = hundredths % (60 * 100);
        return FormattableString.Invariant($"{h:00}:{m:00}:{s / 100:00}.{s % 100:00}");
    }

    /// <summary>Declination as <c>±DD:MM:SS.s</c>.</summary>
    /// <param name="decDeg">Declination, degrees, −90…90.</param>
    public static string Declination(double decDeg)
    {
        var tenths = (long)Math.Round(Math.Abs(decDeg) * 3600.0 * 10.0, MidpointRounding.AwayFromZero);
        var d = tenths / (3600 * 10);
        var m = tenths / (60 * 10) % 60;
        var s = tenths % (60 * 10);
        var sign = decDeg < 0 && tenths > 0 ? '-' : '+';
        return FormattableString.Invariant($"{sign}{d:00}:{m:00}:{s / 10:00}.{s % 10:0}");
    }
}
