namespace Triage.Core.Candidates;

/// <summary>A validated candidate: every required field present, units fixed, priors normalised.</summary>
/// <param name="Id">Broker-scoped identifier.</param>
/// <param name="RaDeg">ICRS right ascension, degrees [0, 360).</param>
/// <param name="DecDeg">ICRS declination, degrees [−90, 90].</param>
/// <param name="DiscoveredUtc">Discovery instant (UTC).</param>
/// <param name="Redshift">Host redshift, if known.</param>
/// <param name="RedshiftError">1σ error of the redshift, if given.</param>
/// <param name="Photometry">Points sorted by time then band.</param>
/// <param name="SubtypeProbabilities">Broker probabilities normalised to sum 1, or null.</param>
/// <param name="ScienceWeight">Relative science weight (default 1).</param>
/// <param name="Notes">Free text.</param>
/// <param name="BrokerState">The broker's own state, unchanged.</param>
public sealed record Candidate(
    string Id,
    double RaDeg,
    double DecDeg,
    DateTimeOffset DiscoveredUtc,
    double? Redshift,
    double? RedshiftError,
    IReadOnlyList<PhotometryPoint> Photometry,
    IReadOnlyDictionary<string, double>? SubtypeProbabilities,
    double ScienceWeight,
    string? Notes,
    BrokerState? BrokerState);

/// <summary>A validated photometry point, always carried in flux space.</summary>
/// <param name="TimeUtc">Observation instant (UTC).</param>
/// <param name="Mjd">The same instant as a Modified Julian Date (UTC).</param>
/// <param name="Band">Band.</param>
/// <param name="FluxMicroJy">Flux density, µJy (the limit for an upper limit).</param>
/// <param name="FluxErrorMicroJy">1σ flux error, µJy (0 when an upper limit gave none).</param>
/// <param name="IsUpperLimit">Non-detection.</param>
/// <param name="MagAb">The magnitude as sent, when it was sent as a magnitude.</param>
/// <param name="MagAbError">Its error, when sent.</param>
public sealed record PhotometryPoint(
    DateTimeOffset TimeUtc,
    double Mjd,
    PhotometricBand Band,
    double FluxMicroJy,
    double FluxErrorMicroJy,
    bool IsUpperLimit,
    double? MagAb = null,
    double? MagAbError = null);
