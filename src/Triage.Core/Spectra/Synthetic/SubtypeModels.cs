using static Triage.Core.Spectra.Synthetic.LineList;

namespace Triage.Core.Spectra.Synthetic;

/// <summary>
/// One line feature of a subtype model: absorption optical depth at the photospheric velocity
/// and emission near rest, each scaled with phase by <see cref="Evolution"/>.
/// </summary>
/// <param name="Depth">Peak optical depth τ of the blueshifted absorption (0: none).</param>
/// <param name="Emission">Peak emission relative to the continuum at the rest wavelength (0: none).</param>
/// <param name="VelocityFactor">Absorption velocity relative to the object's photospheric velocity.</param>
/// <param name="FixedSigmaKmPerS">When positive, a fixed Gaussian σ (km/s) for narrow lines instead of the photospheric width.</param>
/// <param name="Evolution">Strength multiplier at phase knots: pairs (phase days, multiplier), linear between, flat outside.</param>
public sealed record LineSpec(LineList.Feature Feature, double Depth, double Emission, double VelocityFactor, double FixedSigmaKmPerS,
    double[] Evolution)
{
    /// <summary>Strength multiplier at <paramref name="phaseDays"/>.</summary>
    public double StrengthAt(double phaseDays)
    {
        var e = Evolution;
        if (e.Length == 0) return 1;
        if (phaseDays <= e[0]) return e[1];
        for (int i = 2; i < e.Length; i += 2)
            if (phaseDays <= e[i])
                return e[i - 1] + (e[i + 1] - e[i - 1]) * (phaseDays - e[i - 2]) / (e[i] - e[i - 2]);
        return e[^1];
    }
}

/// <summary>
/// Parameters of one subtype of the synthetic library. Typical values recalled from the
/// supernova literature (from memory; demo only): temperatures, velocities and line lists
/// follow Filippenko, "Optical spectra of supernovae", ARA&amp;A 35, 309 (1997), and
/// Gal-Yam, "Observational and physical classification of supernovae" (2017).
/// </summary>
/// <param name="Share">Fraction of a magnitude-limited sample (from memory, rounded; normalised over all subtypes).</param>
/// <param name="PeakTemperatureK">Colour temperature at peak.</param>
/// <param name="LateTemperatureK">Temperature approached at late phases.</param>
/// <param name="CoolingDays">e-folding time of the cooling after peak.</param>
/// <param name="BlueSuppression">Strength of line blanketing below ~4000 Å (0 none, 1 strong).</param>
/// <param name="VelocityKmPerS">Photospheric velocity at peak.</param>
/// <param name="WidthFraction">Gaussian σ of absorption features as a fraction of the velocity.</param>
/// <param name="PhaseFromDays">Earliest phase sampled.</param>
/// <param name="PhaseToDays">Latest phase sampled.</param>
public sealed record SubtypeModel(
    string Subtype,
    double Share,
    double PeakTemperatureK,
    double LateTemperatureK,
    double CoolingDays,
    double BlueSuppression,
    double VelocityKmPerS,
    double WidthFraction,
    double PhaseFromDays,
    double PhaseToDays,
    IReadOnlyList<LineSpec> Lines);

/// <summary>The built-in subtype models of the synthetic demo library (documented in docs/synthetic-library.md).</summary>
public static class SubtypeModels
{
    private static LineSpec A(Feature f, double depth, params double[] evo) => new(f, depth, 0, 1, 0, evo);
    private static LineSpec P(Feature f, double depth, double emission, params double[] evo) => new(f, depth, emission, 1, 0, evo);
    private static LineSpec N(Feature f, double emission, double sigmaKmPerS, params double[] evo) => new(f, 0, emission, 1, sigmaKmPerS, evo);

    /// <summary>All models, in taxonomy order.</summary>
    public static IReadOnlyList<SubtypeModel> All { get; } =
    [
        new("Ia", 0.48, 11000, 6500, 18, 0.85, 11000, 0.28, -15, 45,
        [
            P(SiII6355, 0.9, 0.25, -15, 1.2, 10, 1, 30, 0.5),
            A(SiII5972, 0.2),
            A(SIIW, 0.4, -10, 1, 8, 0.8, 20, 0.1),
            P(CaIIHK, 1.3, 0.2),
            P(CaIIIR, 0.6, 0.3, -10, 0.5, 20, 1.5),
            A(OI7774, 0.3),
            P(FeII42, 0.2, 0.1, 0, 0.3, 25, 1.5),
            A(FeIII4404, 0.25, -10, 0.6, 10, 0.5),
            A(MgII4481, 0.3),
        ]),
        new("Ia-91T-like", 0.06, 12500, 7000, 20, 0.7, 10500, 0.28, -14, 40,
        [
            P(SiII6355, 0.4, 0.15, -12, 0.3, 5, 0.9, 25, 0.6),
            A(SIIW, 0.15, 0, 1, 15, 0.2),
            P(CaIIHK, 0.5, 0.1, -10, 0.4, 10, 1.2),
            P(CaIIIR, 0.3, 0.2, 0, 0.4, 20, 1.4),
            A(FeIII4404, 0.9, -10, 1, 10, 0.4),
            A(FeIII5129, 0.6, -10, 1, 10, 0.3),
            P(FeII42, 0.1, 0.1, 5, 0.5, 25, 1.5),
        ]),
        new("Ia-91bg-like", 0.03, 8200, 5200, 12, 1.0, 10000, 0.25, -8, 35,
        [
            P(SiII6355, 1.1, 0.2),
            A(SiII5972, 0.7),
            A(TiIITrough, 1.2),
            P(CaIIHK, 1.3, 0.2),
            P(CaIIIR, 1.0, 0.3),
            A(OI7774, 0.6),
            A(SIIW, 0.2, 0, 1, 10, 0.1),
        ]),
        new("Iax", 0.01, 10000, 6000, 12, 0.7, 6000, 0.3, -12, 35,
        [
            P(SiII6355, 0.35, 0.15, -10, 0.8, 10, 0.5),
            A(FeIII4404, 0.6, -10, 1, 10, 0.3),
            A(FeIII5129, 0.4, -10, 1, 10, 0.3),
            P(FeII42, 0.4, 0.2, -5, 0.3, 15, 1.4),
            P(CaIIIR, 0.6, 0.4, -5, 0.4, 20, 1.4),
            P(CaIIHK, 0.7, 0.1),
            P(NaID, 0.3, 0.1, 5, 0.3, 25, 1.2),
        ]),
        new("Ia-CSM", 0.005, 9500, 6500, 35, 0.6, 10000, 0.3, -8, 60,
        [
            P(SiII6355, 0.35, 0.1),
            P(CaIIHK, 0.5, 0.1),
            A(FeIII4404, 0.2),
            P(CaIIIR, 0.3, 0.2),
            N(HAlpha, 0.8, 700, -10, 0.6, 30, 1.3),
            N(HAlpha, 0.4, 2500, -10, 0.6, 30, 1.3),
            N(HBeta, 0.2, 900),
        ]),
        new("Ib", 0.025, 9500, 5500, 15, 0.7, 9000, 0.27, -12, 50,
        [
            P(HeI5876, 0.6, 0.2, -10, 0.6, 10, 1.2),
            P(HeI6678, 0.3, 0.1, -10, 0.5, 10, 1.2),
            P(HeI7065, 0.3, 0.1, -10, 0.5, 10, 1.2),
            A(HeI4471, 0.3),
            P(CaIIIR, 0.8, 0.4, -5, 0.6, 25, 1.5),
            P(CaIIHK, 1.0, 0.1),
            A(OI7774, 0.45),
            P(FeII42, 0.4, 0.1),
        ]),
        new("Ibn", 0.005, 14000, 8000, 10, 0.3, 1500, 0.5, -8, 30,
        [
            N(HeI5876, 1.0, 900),
            N(HeI6678, 0.4, 900),
            N(HeI7065, 0.5, 900),
            N(HeI4471, 0.35, 900),
            A(HeI5876, 0.2),
            P(CaIIIR, 0.2, 0.2, 0, 0.3, 20, 1.5),
        ]),
        new("Ic", 0.03, 8500, 5000, 14, 0.9, 10000, 0.28, -12, 50,
        [
            P(OI7774, 0.9, 0.2),
            P(CaIIIR, 1.0, 0.4, -5, 0.7, 25, 1.4),
            P(CaIIHK, 1.2, 0.1),
            P(FeII42, 0.6, 0.1),
            A(SiII6355, 0.3),
            P(NaID, 0.4, 0.15, 0, 0.6, 25, 1.3),
            A(HeI5876, 0.08),
        ]),
        new("Ic-BL", 0.015, 9000, 5200, 12, 0.9, 19000, 0.4, -12, 45,
        [
            P(OI7774, 0.8, 0.2),
            P(CaIIIR, 0.9, 0.3),
            P(CaIIHK, 1.0, 0.1),
            P(FeII42, 0.8, 0.15),
            A(SiII6355, 0.4),
            A(NaID, 0.3),
        ]),
        new("IIb", 0.03, 9500, 5500, 15, 0.7, 9000, 0.27, -12, 50,
        [
            P(HAlpha, 0.5, 0.5, -10, 1.2, 10, 0.7, 30, 0.4),
            P(HBeta, 0.35, 0.15, -10, 1.2, 20, 0.4),
            P(HeI5876, 0.5, 0.15, -10, 0.3, 15, 1.2),
            P(HeI6678, 0.2, 0.05, -10, 0.3, 15, 1.2),
            P(HeI7065, 0.2, 0.05, -10, 0.3, 15, 1.2),
            P(CaIIIR, 0.8, 0.4, -5, 0.6, 25, 1.4),
            P(CaIIHK, 1.0, 0.1),
            A(OI7774, 0.3),
        ]),
        new("II", 0.21, 11000, 5800, 25, 0.6, 8000, 0.3, -5, 80,
        [
            P(HAlpha, 0.5, 1.2, -5, 0.7, 20, 1.1, 60, 1.4),
            P(HBeta, 0.6, 0.3),
            A(HGamma, 0.4),
            P(FeII42, 0.5, 0.1, 0, 0.1, 20, 1, 60, 1.2),
            P(NaID, 0.5, 0.3, 0, 0.1, 30, 1, 60, 1.3),
            P(CaIIIR, 0.6, 0.5, 0, 0.2, 30, 1.2),
            P(CaIIHK, 0.8, 0.1),
        ]),
        new("IIn", 0.05, 12500, 7500, 50, 0.2, 2000, 0.5, -10, 90,
        [
            N(HAlpha, 2.0, 350),
            N(HAlpha, 1.0, 2000),
            N(HBeta, 0.6, 350),
            N(HBeta, 0.3, 2000),
            N(HGamma, 0.25, 350),
            N(HeI5876, 0.15, 500),
            A(HAlpha, 0.1),
        ]),
        new("SLSN-I", 0.015, 15500, 8000, 40, 0.4, 11000, 0.3, -25, 70,
        [
            A(OIIW, 1.0, -20, 1, 5, 0.6, 20, 0),
            A(CaIIHK, 0.5, 0, 0.3, 30, 1.2),
            P(FeII42, 0.4, 0.1, 0, 0, 30, 1.2),
            P(OI7774, 0.4, 0.1, 0, 0.2, 30, 1.2),
            P(CaIIIR, 0.5, 0.2, 0, 0.1, 40, 1.2),
            A(SiII6355, 0.2, 0, 0.3, 20, 1),
        ]),
        new("SLSN-II", 0.005, 14000, 8000, 45, 0.3, 8000, 0.35, -20, 80,
        [
            N(HAlpha, 0.9, 2500),
            N(HAlpha, 0.3, 600),
            N(HBeta, 0.3, 2500),
            P(HAlpha, 0.15, 0.0),
            A(HeI5876, 0.1),
            A(CaIIHK, 0.3, 0, 0.3, 30, 1),
        ]),
    ];
}
