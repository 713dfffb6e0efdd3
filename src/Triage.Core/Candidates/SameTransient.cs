// One transient, several posts. Brokers watch the same sky, so one new source is often posted by two or three of
// them, each under its own id and posting key. Planned as separate candidates, it would take two slots of scarce
// spectrograph time for one spectrum's worth of information. Before the pool is ranked, the posts are grouped:
//   two posts are the same transient when their ICRS positions are within a radius (default 1.5″, common practice
//   for matching optical survey detections) and their discovery instants within a gap (default 100 days, common
//   practice: a supernova's light curve lasts months; a new outburst at the same place a season later is a new
//   event); groups are the connected components of that relation.
//   Angular separation: θ = atan2(|u₁ × u₂|, u₁ · u₂) for unit vectors u₁, u₂, exact at every separation
//   (the small-angle form of the law of cosines loses digits below an arcsecond).
// In a group:
//   - if one post is already being observed, observed or classified, no other post is planned: the spectrum is
//     taken or coming, and its report is what the group waits for;
//   - otherwise one post stands for the group: the one the latest plan version holds (so a replan keeps it), then
//     one a labelled report left unsettled (it carries the posterior), then the highest science weight, then the
//     brightest known magnitude, then the smallest id (the same input always gives the same choice).
// Abandoned and stale posts take no part: giving up one broker's post does not give up another's.
using Triage.Core.Sky;

namespace Triage.Core.Candidates;

/// <summary>Where a post stands for the grouping.</summary>
public enum PostStanding
{
    /// <summary>Waiting for a first spectrum (new, or planned in a version).</summary>
    Waiting,

    /// <summary>Waiting for a sharper spectrum after a labelled report left it unsettled.</summary>
    Unsettled,

    /// <summary>A spectrum is being taken now (executing at the replanning instant).</summary>
    Executing,

    /// <summary>A spectrum was taken (observed, or classified).</summary>
    Observed,
}

/// <summary>One broker's post of a transient, as the grouping sees it.</summary>
/// <param name="Id">Candidate id (unique).</param>
/// <param name="RaDeg">ICRS right ascension, degrees.</param>
/// <param name="DecDeg">ICRS declination, degrees.</param>
/// <param name="DiscoveredAtUtc">When the broker first detected it.</param>
/// <param name="Standing">Waiting, unsettled, executing or observed.</param>
/// <param name="ScienceWeight">Science weight (used to choose among waiting posts).</param>
/// <param name="BrightestMagnitudeAB">Brightest AB magnitude known, null when none.</param>
public sealed record TransientPost(
    string Id, double RaDeg, double DecDeg, DateTimeOffset DiscoveredAtUtc, PostStanding Standing, double ScienceWeight, double? BrightestMagnitudeAB);

/// <summary>Settings of the grouping.</summary>
public sealed record SameTransientSettings
{
    /// <summary>Largest separation of two posts of one transient, arcseconds &gt; 0. Default 1.5″ (common practice).</summary>
    public double RadiusArcsec { get; init; } = 1.5;

    /// <summary>Largest gap between their discovery instants, days &gt; 0. Default 100 (common practice).</summary>
    public double MaxDiscoveryGapDays { get; init; } = 100;
}

/// <summary>The grouping's verdict on the waiting posts.</summary>
/// <param name="Kept">Waiting or unsettled posts that stand for their transient (every post alone in its group among them), in input order.</param>
/// <param name="StandsFor">Post left out → the post of the same transient that stands for it (kept, executing or observed).</param>
/// <param name="AlsoPostedAs">Kept post → the other posts of its transient (any standing), by id; only for groups of two or more.</param>
public sealed record SameTransientSelection(
    IReadOnlyList<string> Kept,
    IReadOnlyDictionary<string, string> StandsFor,
    IReadOnlyDictionary<string, IReadOnlyList<string>> AlsoPostedAs);

/// <summary>Groups the posts of one transient by several brokers and keeps one per transient.</summary>
public static class SameTransient
{
    /// <summary>Angle between two ICRS directions, arcseconds (exact at every separation).</summary>
    public static double SeparationArcsec(double ra1Deg, double dec1Deg, double ra2Deg, double dec2Deg) =>
        Vec3.AngleDeg(Direction(ra1Deg, dec1Deg), Direction(ra2Deg, dec2Deg)) * 3600;

    /// <summary>
    /// The groups of <paramref name="posts"/> (indices, each ascending; groups ordered by their first index), singletons included.
    /// </summary>
    /// <exception cref="ArgumentException">A setting is out of range.</exception>
    public static IReadOnlyList<IReadOnlyList<int>> Groups(IReadOnlyList<TransientPost> posts, SameTransientSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(posts);
        settings ??= new SameTransientSettings();
        if (!(settings.RadiusArcsec > 0) || !(settings.MaxDiscoveryGapDays > 0))
        {
            throw new ArgumentException("RadiusArcsec and MaxDiscoveryGapDays must be > 0.", nameof(settings));
        }

        var n = posts.Count;
        var parent = Enumerable.Range(0, n).ToArray();
        int Root(int i)
        {
            while (parent[i] != i)
            {
                parent[i] = parent[parent[i]];
                i = parent[i];
            }
            return i;
        }

        // Sweep in declination: a partner lies within the radius in declination, so only those are compared.
        var directions = posts.Select(p => Direction(p.RaDeg, p.DecDeg)).ToArray();
        var byDec = Enumerable.Range(0, n).OrderBy(i => posts[i].DecDeg).ToArray();
        var radiusDeg = settings.RadiusArcsec / 3600;
        var gap = TimeSpan.FromDays(settings.MaxDiscoveryGapDays);
        for (var a = 0; a < n; a++)
        {
            var i = byDec[a];
            for (var b = a + 1; b < n && posts[byDec[b]].DecDeg - posts[i].DecDeg <= radiusDeg; b++)
            {
                var j = byDec[b];
                if ((posts[i].DiscoveredAtUtc - posts[j].DiscoveredAtUtc).Duration() <= gap
                    && Vec3.AngleDeg(directions[i], directions[j]) <= radiusDeg)
                {
                    parent[Root(i)] = Root(j);
                }
            }
        }

        return Enumerable.Range(0, n).GroupBy(Root).Select(g => (IReadOnlyList<int>)g.Order().ToList()).OrderBy(g => g[0]).ToList();
    }

    /// <summary>Keeps one waiting post per transient (see the file's notes for the rule).</summary>
    /// <param name="posts">Every post that can take part: waiting and unsettled ones, and those executing or observed.</param>
    /// <param name="heldByLatestVersion">Ids the latest plan version holds (kept first within their group).</param>
    /// <param name="settings">Radius and discovery gap.</param>
    public static SameTransientSelection Select(IReadOnlyList<TransientPost> posts, IReadOnlySet<string> heldByLatestVersion, SameTransientSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(heldByLatestVersion);
        var kept = new HashSet<int>();
        var standsFor = new Dictionary<string, string>(StringComparer.Ordinal);
        var also = new Dictionary<string, IReadOnlyList<string>>(StringComparer.Ordinal);
        foreach (var group in Groups(posts, settings))
        {
            var waiting = group.Where(i => posts[i].Standing is PostStanding.Waiting or PostStanding.Unsettled).ToList();
            if (group.Count == 1)
            {
                kept.UnionWith(waiting);
                continue;
            }

            // One post already has (or is getting) its spectrum: it stands for the group.
            var taken = group.Where(i => posts[i].Standing is PostStanding.Executing or PostStanding.Observed)
                .OrderBy(i => posts[i].Standing == PostStanding.Executing ? 0 : 1)
                .ThenBy(i => posts[i].Id, StringComparer.Ordinal)
                .Select(i => (int?)i).FirstOrDefault();
            var standing = taken ?? waiting
                .OrderByDescending(i => heldByLatestVersion.Contains(posts[i].Id))
                .ThenByDescending(i => posts[i].Standing == PostStanding.Unsettled)
                .ThenByDescending(i => posts[i].ScienceWeight)
                .ThenBy(i => posts[i].BrightestMagnitudeAB ?? double.PositiveInfinity)
                .ThenBy(i => posts[i].Id, StringComparer.Ordinal)
                .First();
            foreach (var i in waiting.Where(i => i != standing))
            {
                standsFor[posts[i].Id] = posts[standing].Id;
            }
            if (taken is null)
            {
                kept.Add(standing);
                also[posts[standing].Id] = group.Where(i => i != standing).Select(i => posts[i].Id).Order(StringComparer.Ordinal).ToList();
            }
        }

        return new SameTransientSelection(Enumerable.Range(0, posts.Count).Where(kept.Contains).Select(i => posts[i].Id).ToList(), standsFor, also);
    }

    private static Vec3 Direction(double raDeg, double decDeg) => Vec3.FromSpherical(raDeg * Angles.DegToRad, decDeg * Angles.DegToRad);
}
