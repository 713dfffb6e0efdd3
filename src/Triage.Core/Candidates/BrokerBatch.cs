namespace Triage.Core.Candidates;

/// <summary>
/// The batch a broker posts: the JSON body of the intake endpoint and the file the CLI
/// verbs read. Every field is nullable so that a missing field is reported by
/// <see cref="BrokerBatchValidator"/> with its path rather than by the parser.
/// </summary>
/// <param name="Candidates">The candidates, at most <see cref="BatchLimits.MaxCandidates"/>.</param>
public sealed record BrokerBatch(IReadOnlyList<CandidateSubmission?>? Candidates);

/// <summary>One candidate as a broker sends it.</summary>
public sealed record CandidateSubmission
{
    /// <summary>Broker-scoped identifier, 1–64 characters of <c>A–Z a–z 0–9 . _ : -</c>.</summary>
    public string? Id { get; init; }

    /// <summary>Right ascension, ICRS, degrees in [0, 360).</summary>
    public double? RaDeg { get; init; }

    /// <summary>Declination, ICRS, degrees in [−90, 90].</summary>
    public double? DecDeg { get; init; }

    /// <summary>Discovery instant (UTC, ISO 8601).</summary>
    public DateTimeOffset? DiscoveredUtc { get; init; }

    /// <summary>Host redshift, 0 ≤ z ≤ 5 (optional).</summary>
    public double? Redshift { get; init; }

    /// <summary>1σ error of <see cref="Redshift"/>, 0 &lt; σ ≤ 1 (optional; only with a redshift).</summary>
    public double? RedshiftError { get; init; }

    /// <summary>Photometry points; at least one detection.</summary>
    public IReadOnlyList<PhotometrySubmission?>? Photometry { get; init; }

    /// <summary>Subtype probabilities keyed by taxonomy label (optional).</summary>
    public IReadOnlyDictionary<string, double>? SubtypeProbabilities { get; init; }

    /// <summary>Relative science weight, 0 &lt; w ≤ 100; absent means 1.</summary>
    public double? ScienceWeight { get; init; }

    /// <summary>Free text, at most 2,000 characters.</summary>
    public string? Notes { get; init; }

    /// <summary>The broker's own light-curve state, kept and shown beside Triage's.</summary>
    public BrokerState? BrokerState { get; init; }
}

/// <summary>One photometry point. Give exactly one of the two times and one of magnitude or flux.</summary>
public sealed record PhotometrySubmission
{
    /// <summary>Observation instant (UTC, ISO 8601); or use <see cref="Mjd"/>.</summary>
    public DateTimeOffset? TimeUtc { get; init; }

    /// <summary>Observation instant as a Modified Julian Date (UTC), 40000–80000.</summary>
    public double? Mjd { get; init; }

    /// <summary>Band letter from <see cref="PhotometricBands"/>.</summary>
    public string? Band { get; init; }

    /// <summary>AB magnitude (or the limiting magnitude for an upper limit), −2…35.</summary>
    public double? MagAb { get; init; }

    /// <summary>1σ error of <see cref="MagAb"/>, (0, 5] mag; required for a detection.</summary>
    public double? MagAbError { get; init; }

    /// <summary>Flux density in µJy (AB: m = 23.9 − 2.5 log₁₀ f). May be negative for a
    /// forced-photometry detection; for an upper limit it is the limiting flux (&gt; 0).</summary>
    public double? FluxMicroJy { get; init; }

    /// <summary>1σ error of <see cref="FluxMicroJy"/>, µJy, &gt; 0; required for a detection.</summary>
    public double? FluxMicroJyError { get; init; }

    /// <summary>True when the point is a non-detection and the value a limit.</summary>
    public bool? UpperLimit { get; init; }
}

/// <summary>Light-curve state a broker computed itself. Triage stores and shows it, never uses it in its own fit.</summary>
public sealed record BrokerState
{
    /// <summary>The broker's estimate of the time of peak (UTC).</summary>
    public DateTimeOffset? PeakUtc { get; init; }

    /// <summary>The broker's 1σ uncertainty of the peak time, days.</summary>
    public double? PeakSigmaDays { get; init; }

    /// <summary>The broker's peak AB magnitude.</summary>
    public double? PeakMagAb { get; init; }

    /// <summary>Band of <see cref="PeakMagAb"/>.</summary>
    public string? PeakBand { get; init; }

    /// <summary>The broker's own phase/trend wording (e.g. "rising").</summary>
    public string? Trend { get; init; }
}
