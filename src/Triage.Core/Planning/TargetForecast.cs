using Triage.Core.Sky;

namespace Triage.Core.Planning;

/// <summary>A predicted AB magnitude with its 1σ uncertainty.</summary>
/// <param name="MagnitudeAB">Predicted AB magnitude at the reference wavelength of the S/N convention.</param>
/// <param name="SigmaMag">1σ uncertainty, mag (≥ 0).</param>
public readonly record struct MagnitudeForecast(double MagnitudeAB, double SigmaMag);

/// <summary>
/// What the planner needs to know about a candidate tonight: where it is, how bright it will be,
/// its phase and its subtype prior at any instant. Implemented over the light-curve state.
/// </summary>
public interface ITargetForecast
{
    /// <summary>Candidate id.</summary>
    string Id { get; }

    /// <summary>ICRS position.</summary>
    SkyTarget Position { get; }

    /// <summary>Science weight, ≥ 0 (1 = ordinary).</summary>
    double ScienceWeight { get; }

    /// <summary>Subtype probabilities (need not be normalised, must be ≥ 0).</summary>
    IReadOnlyDictionary<string, double> SubtypePrior { get; }

    /// <summary>Predicted magnitude at an instant.</summary>
    MagnitudeForecast MagnitudeAt(DateTimeOffset utc);

    /// <summary>Phase belief (rest-frame days from peak) at an instant.</summary>
    PhaseBelief PhaseAt(DateTimeOffset utc);
}

/// <summary>
/// A simple forecast: magnitude changing linearly in time from a reference instant, phase from
/// a peak time with an uncertainty. Used for demo files and tests.
/// </summary>
/// <param name="Id">Candidate id.</param>
/// <param name="Position">ICRS position.</param>
/// <param name="ScienceWeight">Weight ≥ 0.</param>
/// <param name="SubtypePrior">Subtype probabilities.</param>
/// <param name="ReferenceUtc">Instant of <paramref name="MagnitudeAB"/>.</param>
/// <param name="MagnitudeAB">AB magnitude at the reference instant.</param>
/// <param name="MagnitudePerDay">Change of magnitude per day (positive: fading).</param>
/// <param name="SigmaMag">Magnitude uncertainty, mag.</param>
/// <param name="PeakUtc">Estimated time of peak.</param>
/// <param name="PeakSigmaDays">Uncertainty of the peak time, days.</param>
/// <param name="TimeDilation">1 + z (observer days per rest-frame day); 1 when unknown.</param>
public sealed record LinearTargetForecast(
    string Id,
    SkyTarget Position,
    double ScienceWeight,
    IReadOnlyDictionary<string, double> SubtypePrior,
    DateTimeOffset ReferenceUtc,
    double MagnitudeAB,
    double MagnitudePerDay,
    double SigmaMag,
    DateTimeOffset PeakUtc,
    double PeakSigmaDays,
    double TimeDilation = 1) : ITargetForecast
{
    /// <inheritdoc/>
    public MagnitudeForecast MagnitudeAt(DateTimeOffset utc)
        => new(MagnitudeAB + MagnitudePerDay * (utc - ReferenceUtc).TotalDays, SigmaMag);

    /// <inheritdoc/>
    public PhaseBelief PhaseAt(DateTimeOffset utc)
        => new((utc - PeakUtc).TotalDays / TimeDilation, PeakSigmaDays / TimeDilation);
}
