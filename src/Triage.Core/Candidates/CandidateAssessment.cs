using Triage.Core.LightCurves;

namespace Triage.Core.Candidates;

/// <summary>A validated candidate with its computed light-curve state and subtype prior.</summary>
/// <param name="Candidate">The candidate.</param>
/// <param name="LightCurve">Its light-curve state (predict magnitude, phase, colour at any instant).</param>
/// <param name="Prior">Its subtype prior over the taxonomy.</param>
public sealed record CandidateAssessment(Candidate Candidate, LightCurveState LightCurve, SubtypePrior Prior)
{
    /// <summary>Fits the light curve and derives the prior.</summary>
    public static CandidateAssessment Assess(Candidate candidate, IReadOnlyCollection<string> labels, LightCurveOptions? options = null)
    {
        var state = LightCurveFitter.Fit(candidate, options);
        return new CandidateAssessment(candidate, state, SubtypePriors.For(candidate, state, labels));
    }

    /// <summary>Parses and validates batch JSON in one step (a parse error becomes the only error).</summary>
    public static BatchValidationResult ReadBatch(string json, IReadOnlySet<string> labels, BatchLimits? limits = null)
    {
        if (!BrokerBatchJson.TryParse(json, out var batch, out var error))
        {
            return new BatchValidationResult([], [error!], []);
        }
        return BrokerBatchValidator.Validate(batch, labels, limits);
    }
}

/// <summary>The subtype labels used when no taxonomy file is given.</summary>
public static class DefaultSubtypeLabels
{
    /// <summary>Ia, Ia-91T-like, Ia-91bg-like, Iax, Ia-CSM, Ib, Ibn, Ic, Ic-BL, IIb, II, IIn, SLSN-I, SLSN-II.</summary>
    public static IReadOnlyList<string> All { get; } =
        ["Ia", "Ia-91T-like", "Ia-91bg-like", "Iax", "Ia-CSM", "Ib", "Ibn", "Ic", "Ic-BL", "IIb", "II", "IIn", "SLSN-I", "SLSN-II"];

    /// <summary>The same as a set.</summary>
    public static IReadOnlySet<string> Set { get; } = new HashSet<string>(All, StringComparer.Ordinal);
}
