using Triage.Core.Candidates;
using Triage.Core.LightCurves;
using Triage.Storage.Candidates;

namespace Triage.Api.Candidates;

/// <summary>Settings of the candidate capability (section <c>Triage:Candidates</c>).</summary>
public sealed record CandidateOptions
{
    /// <summary>Subtype labels of the active taxonomy (default: the 14 standard labels).</summary>
    public string[] SubtypeLabels { get; init; } = [.. DefaultSubtypeLabels.All];

    /// <summary>Most candidates per batch (default 5,000).</summary>
    public int MaxCandidatesPerBatch { get; init; } = 5000;

    /// <summary>Largest batch body in bytes (default 48 MiB: 5,000 candidates with long histories).</summary>
    public long MaxBatchBytes { get; init; } = 48L * 1024 * 1024;

    /// <summary>Compute light-curve fits in the background after intake (default true).</summary>
    public bool FitInBackground { get; init; } = true;

    /// <summary>Candidates fitted per background batch (default 32).</summary>
    public int FitBatchSize { get; init; } = 32;

    /// <summary>
    /// Largest fraction of wall-clock time the background fitter computes (default 0.5): after a
    /// batch that took t it rests t × (1 − share) / share, leaving the cores to intake under load.
    /// </summary>
    public double FitWorkerShare { get; init; } = 0.5;
}

/// <summary>Answer to a stored batch.</summary>
public sealed record IntakeResponse(int Received, int Created, int Updated, int Unchanged, int PhotometryWritten, IReadOnlyList<BatchError> Notices);

/// <summary>A candidate in a list.</summary>
public sealed record CandidateSummaryResponse(
    Guid Id, string Broker, string BrokerCandidateId, double RaDeg, double DecDeg, DateTimeOffset DiscoveredUtc,
    double? Redshift, string State, string? ClassifiedLabel, double ScienceWeight,
    double? PredictedMagAb, DateTimeOffset? FittedUtc, bool FitCurrent, DateTimeOffset UpdatedUtc)
{
    /// <summary>Reference wavelength of <see cref="PredictedMagAb"/>, Å.</summary>
    public const double PredictionWavelengthAngstrom = 6200;

    public static CandidateSummaryResponse From(CandidateListRow r, DateTimeOffset at) => new(
        r.Id, r.Broker, r.BrokerCandidateId, r.RaDeg, r.DecDeg, r.DiscoveredAt, r.Redshift, r.State, r.ClassifiedLabel, r.ScienceWeight,
        r.PredictedMag is { } m && r.FittedAt is { } f ? Math.Round(m + (r.PredictedMagRate ?? 0) * (at - f).TotalDays, 3) : null,
        r.FittedAt, r.FitCurrent, r.UpdatedAt);
}

/// <summary>A page of candidates; pass <see cref="NextCursor"/> as <c>cursor</c> for the next page (null: last page).</summary>
public sealed record CandidatePageResponse(IReadOnlyList<CandidateSummaryResponse> Items, string? NextCursor);

/// <summary>One photometry point as stored (flux in µJy; the magnitude when it was sent as one).</summary>
public sealed record PhotometryResponse(DateTimeOffset TimeUtc, double Mjd, string Band, double FluxMicroJy, double FluxMicroJyError, bool UpperLimit, double? MagAb, double? MagAbError);

/// <summary>One candidate with everything Triage knows about it.</summary>
public sealed record CandidateDetailResponse(
    CandidateSummaryResponse Candidate,
    double? RedshiftError,
    string? Notes,
    IReadOnlyList<PhotometryResponse> Photometry,
    LightCurveSnapshot LightCurve,
    SubtypePriorResponse Prior,
    IReadOnlyDictionary<string, double>? BrokerSubtypeProbabilities,
    IReadOnlyList<CandidateEventRow> History,
    IReadOnlyList<ObservationReportRow> Observations);

/// <summary>A subtype prior.</summary>
public sealed record SubtypePriorResponse(string Source, IReadOnlyDictionary<string, double> Probabilities, IReadOnlyList<string> Evidence)
{
    public static SubtypePriorResponse From(SubtypePrior p) => new(
        p.Source switch { PriorSource.Broker => "broker", PriorSource.BaseRates => "base-rates", _ => "base-rates-with-light-curve" },
        p.Probabilities.ToDictionary(kv => kv.Key, kv => Math.Round(kv.Value, 6)),
        p.Evidence);
}

/// <summary>Body of a state change by a scheduler: <c>to</c> is new, planned, abandoned or stale; <c>force</c> re-plans a classified candidate.</summary>
public sealed record TransitionRequest(string? To, bool? Force, string? Reason);

/// <summary>Answer to a state change.</summary>
public sealed record TransitionResponse(Guid Id, string From, string To);

/// <summary>Body of an observation report. <c>outcome</c>: done (needs achievedSnr), weather, failed.</summary>
public sealed record ObservationReportRequest(Guid? SpectrographId, string? Outcome, double? AchievedSnr, string? ClassifiedLabel, DateTimeOffset? ObservedUtc);

/// <summary>Answer to an observation report.</summary>
public sealed record ObservationReportResponse(Guid ReportId, Guid CandidateId, string State)
{
    /// <summary>Why the report looks odd although it was accepted (far from its planned slot, not in the plan, another unit); empty when none.</summary>
    public IReadOnlyList<string> Warnings { get; init; } = [];
}
