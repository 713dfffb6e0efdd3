using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Core.Tests.Sky;

/// <summary>The invented site of check-values §2: −30.5°, −70.8° (east-positive), 2400 m (WGS84).</summary>
internal static class ReferenceSite
{
    public static Site Site(double minAltitudeDeg = 0, double sunAvoidanceDeg = 0, double moonAvoidanceDeg = 0) => new(
        Guid.Empty, "check-values site", -30.5, -70.8, 2400, minAltitudeDeg, sunAvoidanceDeg, moonAvoidanceDeg,
        1.0, 21.5, 5500, 0.15, SiteStatus.Open);

    public static Observer Observer => new(-30.5, -70.8, 2400);

    public static SkyTarget Target(int raH, int raM, int decSign, int decD, int decM) =>
        new((raH + raM / 60.0) * 15.0, decSign * (decD + decM / 60.0));
}
