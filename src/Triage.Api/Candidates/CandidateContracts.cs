using Triage.Core.Candidates;
using Triage.Core.LightCurves;
using Triage.Storage.Candidates;

namespace Triage.Api.Candidates;

/// <summary>Settings of the candidate capability (section <c>Triage:Candidates</c>).</summary>
public sealed record CandidateOptions
{
    /// <summary>Subtype labels of the active taxonomy (default: the 14 standard labels).</summary>
    public string[] SubtypeLabels { get; init; } = [.. DefaultSubtypeLabels.All];

    /// <summary>
    /// Posterior probability of one subtype at which a labelled report identifies the candidate
    /// (default 0.9); below it the candidate becomes unsettled.
    /// </summary>
    public double IdentificationConfidence { get; init; } = Triage.Core.Identification.PosteriorUpdate.DefaultConfidence;

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
    IReadOnlyList<ObservationReportRow> Observations)
{
    /// <summary>Subtype probabilities after the labelled reports (null: none weighed yet).</summary>
    public IReadOnlyDictionary<string, double>? Posterior { get; init; }

    /// <summary>
    /// The posterior's most probable subtype and its probability (null: no posterior): the label the candidate would
    /// get if its books were closed now, for example when an unsettled candidate leaves observability before a
    /// sharper spectrum is taken. Nothing changes state: an unsettled candidate stays unsettled.
    /// </summary>
    public BestLabelResponse? BestLabel { get; init; }

    /// <summary>
    /// Other brokers' posts of the same transient (within the planner's same-transient radius and discovery gap), any
    /// state; the plan takes one post per transient (docs/planner.md §10a).
    /// </summary>
    public IReadOnlyList<SameTransientPostResponse> SameTransient { get; init; } = [];
}

/// <summary>Another post of the same transient.</summary>
/// <param name="Id">Its candidate id.</param>
/// <param name="Broker">The broker (posting key) it came from.</param>
/// <param name="BrokerCandidateId">The broker's own id.</param>
/// <param name="State">Its lifecycle state.</param>
/// <param name="SeparationArcsec">Angle between the two positions, arcseconds.</param>
public sealed record SameTransientPostResponse(Guid Id, string Broker, string BrokerCandidateId, string State, double SeparationArcsec);

/// <summary>The most probable subtype of a posterior (the first in the posterior's order on a tie).</summary>
/// <param name="Label">Subtype.</param>
/// <param name="Probability">Its posterior probability.</param>
/// <param name="AtConfidence">True when the probability reaches the identification confidence τ (the candidate is identified by it).</param>
public sealed record BestLabelResponse(string Label, double Probability, bool AtConfidence)
{
    /// <summary>The best label of <paramref name="posterior"/>, or null when there is none.</summary>
    public static BestLabelResponse? Of(IReadOnlyDictionary<string, double>? posterior, double confidence)
    {
        if (posterior is null || posterior.Count == 0)
        {
            return null;
        }

        var best = posterior.First();
        foreach (var kv in posterior)
        {
            if (kv.Value > best.Value)
            {
                best = kv;
            }
        }

        return new BestLabelResponse(best.Key, best.Value, best.Value >= confidence - 1e-12);
    }
}

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

/// <summary>Body of a confirmed identification by a scheduler or admin: the subtype <c>label</c> and an optional reason.</summary>
public sealed record IdentificationRequest(string? Label, string? Reason);

/// <summary>Answer to a state change.</summary>
public sealed record TransitionResponse(Guid Id, string From, string To)
{
    /// <summary>After a confirmed label: other brokers' waiting posts of the same transient classified with it too.</summary>
    public int OtherPostsClassified { get; init; }
}

/// <summary>
/// Body of an observation report. <c>outcome</c>: done (needs achievedSnr &gt; 0), weather, failed.
/// With outcome done, <c>classifiedLabel</c> (a subtype or a broad class), optional
/// <c>classProbabilities</c> (label → probability, summing to 1 ± 0.05) and optional
/// <c>phaseDays</c> (rest-frame days from peak; default: the fitted light curve's phase) say what
/// the spectrum showed.
/// </summary>
public sealed record ObservationReportRequest(Guid? SpectrographId, string? Outcome, double? AchievedSnr, string? ClassifiedLabel, DateTimeOffset? ObservedUtc)
{
    /// <summary>Reported probabilities per label (subtypes or broad classes), summing to 1 ± 0.05.</summary>
    public IReadOnlyDictionary<string, double>? ClassProbabilities { get; init; }

    /// <summary>Phase of the spectrum, rest-frame days from peak (−100…1000).</summary>
    public double? PhaseDays { get; init; }
}

/// <summary>Answer to an observation report. <c>state</c> is classified, unsettled, observed, new...</summary>
public sealed record ObservationReportResponse(Guid ReportId, Guid CandidateId, string State)
{
    /// <summary>Subtype probabilities after a weighed label (null without a label or calibration).</summary>
    public IReadOnlyDictionary<string, double>? Posterior { get; init; }

    /// <summary>The history line: cell used, probability moved, verdict.</summary>
    public string? Detail { get; init; }

    /// <summary>Why the report looks odd although it was accepted (far from its planned slot, not in the plan, another unit); empty when none.</summary>
    public IReadOnlyList<string> Warnings { get; init; } = [];

    /// <summary>When the report classified the candidate: other brokers' waiting posts of the same transient classified with it.</summary>
    public int OtherPostsClassified { get; init; }
}

