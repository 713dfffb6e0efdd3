// One transient, several posts. Brokers watch the same sky, so one new source is often posted by two or three of
// them, each under its own id and posting key. Planned as separate candidates, it would take two slots of scarce
// spectrograph time for one spectrum's worth of information. Before the pool is ranked, the posts are grouped:
//   two posts are *linked* when their ICRS positions are within a radius (default 1.5″, common practice for matching
//   optical survey detections) and their discovery instants within a gap (default 100 days, common practice: a
//   supernova's light curve lasts months; a new outburst at the same place a season later is a new event).
//   Angular separation: θ = atan2(|u₁ × u₂|, u₁ · u₂) for unit vectors u₁, u₂, exact at every separation
//   (the small-angle form of the law of cosines loses digits below an arcsecond).
// Groups are stars, not chains: posts are taken in order of standing, and each post not yet in a group opens one and
// takes every linked post not yet in a group. So every post is linked to the post that stands for its group, and no
// two posts that stand for groups are linked; a chain of posts each 1.5″ from the next (a crowded field) is not merged
// into one transient, which would leave a real one unplanned. Order of standing:
//   a post being observed, then one observed or classified (the spectrum is taken or coming: no other post of the
//   transient is planned), then the one the latest plan version holds (a replan keeps it), then one a labelled
//   report left unsettled (it carries the posterior), then the highest science weight, the brightest known
//   magnitude, the smallest id (the same input always gives the same groups).
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
/// <param name="AlsoPostedAs">Post that stands for a group of two or more (kept, executing or observed) → the other posts of its transient (any standing), by id.</param>
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
    /// The groups of <paramref name="posts"/> with no post held by a plan version (indices, each ascending; groups
    /// ordered by their first index), singletons included.
    /// </summary>
    /// <exception cref="ArgumentException">A setting is out of range.</exception>
    public static IReadOnlyList<IReadOnlyList<int>> Groups(IReadOnlyList<TransientPost> posts, SameTransientSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(posts);
        var centre = Centres(posts, new HashSet<string>(StringComparer.Ordinal), settings ?? new SameTransientSettings());
        return Enumerable.Range(0, posts.Count).GroupBy(i => centre[i]).Select(g => (IReadOnlyList<int>)g.Order().ToList()).OrderBy(g => g[0]).ToList();
    }

    /// <summary>Keeps one waiting post per transient (see the file's notes for the rule).</summary>
    /// <param name="posts">Every post that can take part: waiting and unsettled ones, and those executing or observed.</param>
    /// <param name="heldByLatestVersion">Ids the latest plan version holds.</param>
    /// <param name="settings">Radius and discovery gap.</param>
    /// <exception cref="ArgumentException">A setting is out of range.</exception>
    public static SameTransientSelection Select(IReadOnlyList<TransientPost> posts, IReadOnlySet<string> heldByLatestVersion, SameTransientSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(posts);
        ArgumentNullException.ThrowIfNull(heldByLatestVersion);
        var centre = Centres(posts, heldByLatestVersion, settings ?? new SameTransientSettings());
        static bool Waiting(TransientPost p) => p.Standing is PostStanding.Waiting or PostStanding.Unsettled;
        var standsFor = new Dictionary<string, string>(StringComparer.Ordinal);
        var members = new Dictionary<int, List<int>>();
        for (var i = 0; i < posts.Count; i++)
        {
            if (centre[i] == i)
            {
                continue;
            }
            if (Waiting(posts[i]))
            {
                standsFor[posts[i].Id] = posts[centre[i]].Id;
            }
            if (!members.TryGetValue(centre[i], out var list))
            {
                members[centre[i]] = list = [];
            }
            list.Add(i);
        }

        var kept = Enumerable.Range(0, posts.Count).Where(i => centre[i] == i && Waiting(posts[i])).ToList();
        var also = members.Keys.Order().ToDictionary(
            i => posts[i].Id,
            i => (IReadOnlyList<string>)members[i].Select(m => posts[m].Id).Order(StringComparer.Ordinal).ToList(),
            StringComparer.Ordinal);
        return new SameTransientSelection(kept.Select(i => posts[i].Id).ToList(), standsFor, also);
    }

    /// <summary>For each post, the index of the post that stands for its group (itself when it stands).</summary>
    private static int[] Centres(IReadOnlyList<TransientPost> posts, IReadOnlySet<string> held, SameTransientSettings settings)
    {
        if (!(settings.RadiusArcsec > 0) || !(settings.MaxDiscoveryGapDays > 0))
        {
            throw new ArgumentException("RadiusArcsec and MaxDiscoveryGapDays must be > 0.", nameof(settings));
        }

        var n = posts.Count;
        var directions = posts.Select(p => Direction(p.RaDeg, p.DecDeg)).ToArray();
        // Declinations sorted: a linked post lies in the band δ ± r, found by binary search.
        var byDec = Enumerable.Range(0, n).OrderBy(i => posts[i].DecDeg).ToArray();
        var decs = byDec.Select(i => posts[i].DecDeg).ToArray();
        var radiusDeg = settings.RadiusArcsec / 3600;
        // cos θ ≥ cos r on unit vectors: at r ~ 1″ the dot product resolves the angle to microarcseconds
        // (δθ = δ(cos θ)/sin θ ≈ 1e−16 / 7e−6 rad), far below any radius worth setting.
        var cosRadius = Math.Cos(radiusDeg * Angles.DegToRad);
        var gap = TimeSpan.FromDays(settings.MaxDiscoveryGapDays);

        int Rank(TransientPost p) => p.Standing switch
        {
            PostStanding.Executing => 0,
            PostStanding.Observed => 1,
            _ when held.Contains(p.Id) => 2,
            PostStanding.Unsettled => 3,
            _ => 4,
        };
        var order = Enumerable.Range(0, n)
            .OrderBy(i => Rank(posts[i]))
            .ThenByDescending(i => posts[i].ScienceWeight)
            .ThenBy(i => posts[i].BrightestMagnitudeAB ?? double.PositiveInfinity)
            .ThenBy(i => posts[i].Id, StringComparer.Ordinal);

        var centre = Enumerable.Repeat(-1, n).ToArray();
        foreach (var c in order)
        {
            if (centre[c] >= 0)
            {
                continue;
            }

            centre[c] = c;
            var from = Array.BinarySearch(decs, posts[c].DecDeg - radiusDeg) is var lo && lo < 0 ? ~lo : lo;
            while (from > 0 && decs[from - 1] >= posts[c].DecDeg - radiusDeg)
            {
                from--; // equal declinations before the one the search found
            }
            for (var b = from; b < n && decs[b] <= posts[c].DecDeg + radiusDeg; b++)
            {
                var j = byDec[b];
                if (centre[j] < 0 && (posts[c].DiscoveredAtUtc - posts[j].DiscoveredAtUtc).Duration() <= gap
                    && directions[c].Dot(directions[j]) >= cosRadius)
                {
                    centre[j] = c;
                }
            }
        }

        return centre;
    }

    private static Vec3 Direction(double raDeg, double decDeg) => Vec3.FromSpherical(raDeg * Angles.DegToRad, decDeg * Angles.DegToRad);
}
