using Triage.Core.Candidates;
using Triage.Core.Sky;

namespace Triage.Core.Planning;

/// <summary>
/// The planner's view of an assessed candidate: position, weight, prior, and magnitude and phase
/// from its fitted light curve at the wavelength of the S/N convention.
/// </summary>
public sealed class AssessedTargetForecast : ITargetForecast
{
    /// <summary>Phase uncertainty used when the light curve gives none (or an unbounded one), days.</summary>
    public const double UnknownPhaseSigmaDays = 60;

    private readonly CandidateAssessment _assessment;
    private readonly double _wavelengthAngstrom;

    /// <summary>Wraps an assessment.</summary>
    /// <param name="assessment">Candidate with light curve and prior.</param>
    /// <param name="wavelengthAngstrom">Wavelength of the predicted magnitude, Å (the calibration's S/N reference wavelength).</param>
    public AssessedTargetForecast(CandidateAssessment assessment, double wavelengthAngstrom)
    {
        ArgumentNullException.ThrowIfNull(assessment);
        if (!(wavelengthAngstrom > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(wavelengthAngstrom), wavelengthAngstrom, "Wavelength must be positive.");
        }

        _assessment = assessment;
        _wavelengthAngstrom = wavelengthAngstrom;
        Position = new SkyTarget(assessment.Candidate.RaDeg, assessment.Candidate.DecDeg);
    }

    /// <inheritdoc/>
    public string Id => _assessment.Candidate.Id;

    /// <inheritdoc/>
    public SkyTarget Position { get; }

    /// <inheritdoc/>
    public double ScienceWeight => _assessment.Candidate.ScienceWeight;

    /// <inheritdoc/>
    public IReadOnlyDictionary<string, double> SubtypePrior => _assessment.Prior.Probabilities;

    /// <inheritdoc/>
    /// <remarks>NaN when no band of the light curve could be modelled (the builder then plans nothing for it).</remarks>
    public MagnitudeForecast MagnitudeAt(DateTimeOffset utc)
    {
        var m = _assessment.LightCurve.PredictMagnitudeAtWavelength(utc, _wavelengthAngstrom);
        return new MagnitudeForecast(m.Value, double.IsFinite(m.Sigma) ? m.Sigma : double.NaN);
    }

    /// <inheritdoc/>
    /// <remarks>Without a light curve the phase is centred on peak with <see cref="UnknownPhaseSigmaDays"/>: every phase bin counts.</remarks>
    public PhaseBelief PhaseAt(DateTimeOffset utc)
    {
        var p = _assessment.LightCurve.PhaseDaysAt(utc);
        return double.IsFinite(p.Value)
            ? new PhaseBelief(p.Value, double.IsFinite(p.Sigma) ? Math.Min(p.Sigma, UnknownPhaseSigmaDays) : UnknownPhaseSigmaDays)
            : new PhaseBelief(0, UnknownPhaseSigmaDays);
    }
}
