namespace Triage.Core.Spectra.Synthetic;

/// <summary>
/// Rest wavelengths (air, Å) of the transitions that identify supernova subtypes. Values
/// recalled from the NIST Atomic Spectra Database, from memory (see
/// shared/reference/check-values.md §5, where they are marked [M]); blends are given as their
/// members with weights.
/// </summary>
public static class LineList
{
    /// <summary>Speed of light (km/s), exact.</summary>
    public const double SpeedOfLightKmPerS = 299792.458;

    /// <summary>One transition (or blend member): rest wavelength and relative weight within its feature.</summary>
    public readonly record struct Transition(double RestAngstrom, double Weight);

    /// <summary>A named spectral feature made of one or more transitions.</summary>
    public sealed record Feature(string Name, IReadOnlyList<Transition> Transitions);

    private static Feature F(string name, params double[] restWeightPairs)
    {
        var list = new List<Transition>();
        for (int i = 0; i < restWeightPairs.Length; i += 2) list.Add(new Transition(restWeightPairs[i], restWeightPairs[i + 1]));
        return new Feature(name, list);
    }

    /// <summary>Hα 6562.79 (NIST, from memory).</summary>
    public static readonly Feature HAlpha = F("H-alpha", 6562.79, 1);
    /// <summary>Hβ 4861.35 (NIST, from memory).</summary>
    public static readonly Feature HBeta = F("H-beta", 4861.35, 1);
    /// <summary>Hγ 4340.47 (NIST, from memory; not in the shared table).</summary>
    public static readonly Feature HGamma = F("H-gamma", 4340.47, 1);
    /// <summary>He I 5875.62.</summary>
    public static readonly Feature HeI5876 = F("He I 5876", 5875.62, 1);
    /// <summary>He I 6678.15.</summary>
    public static readonly Feature HeI6678 = F("He I 6678", 6678.15, 1);
    /// <summary>He I 7065.19.</summary>
    public static readonly Feature HeI7065 = F("He I 7065", 7065.19, 1);
    /// <summary>He I 4471.48.</summary>
    public static readonly Feature HeI4471 = F("He I 4471", 4471.48, 1);
    /// <summary>He II 4685.7.</summary>
    public static readonly Feature HeII4686 = F("He II 4686", 4685.7, 1);
    /// <summary>Si II λλ6347.11, 6371.37 with gf weights 2:1 (the "6355" feature).</summary>
    public static readonly Feature SiII6355 = F("Si II 6355", 6347.11, 2.0 / 3, 6371.37, 1.0 / 3);
    /// <summary>Si II "5972" (λλ5957.56, 5978.93; from memory, not in the shared table).</summary>
    public static readonly Feature SiII5972 = F("Si II 5972", 5957.56, 0.4, 5978.93, 0.6);
    /// <summary>S II "W": 5453.86 and 5639.98 (two members of the blend).</summary>
    public static readonly Feature SIIW = F("S II W", 5453.86, 0.5, 5639.98, 0.5);
    /// <summary>Ca II H and K, 3968.47 and 3933.66.</summary>
    public static readonly Feature CaIIHK = F("Ca II H&K", 3933.66, 0.6, 3968.47, 0.4);
    /// <summary>Ca II infrared triplet 8498.02, 8542.09, 8662.14.</summary>
    public static readonly Feature CaIIIR = F("Ca II IR", 8498.02, 0.2, 8542.09, 0.45, 8662.14, 0.35);
    /// <summary>O I 7771.94, 7774.17, 7775.39.</summary>
    public static readonly Feature OI7774 = F("O I 7774", 7771.94, 0.4, 7774.17, 0.35, 7775.39, 0.25);
    /// <summary>Na I D2, D1 5889.95, 5895.92.</summary>
    public static readonly Feature NaID = F("Na I D", 5889.95, 0.6, 5895.92, 0.4);
    /// <summary>Fe II multiplet 42: 4923.93, 5018.44, 5169.03.</summary>
    public static readonly Feature FeII42 = F("Fe II 42", 4923.93, 0.25, 5018.44, 0.3, 5169.03, 0.45);
    /// <summary>Fe III "4404" blend (≈4395.8, 4419.6, 4431.0; from memory, not confirmable).</summary>
    public static readonly Feature FeIII4404 = F("Fe III 4404", 4395.8, 0.35, 4419.6, 0.35, 4431.0, 0.3);
    /// <summary>Fe III "5129" blend (≈5127.4, 5156.1; from memory, not confirmable).</summary>
    public static readonly Feature FeIII5129 = F("Fe III 5129", 5127.4, 0.5, 5156.1, 0.5);
    /// <summary>Ti II trough of cool thermonuclear events, modelled as a blend near 4300–4450 Å (from memory, approximate).</summary>
    public static readonly Feature TiIITrough = F("Ti II 4300", 4294.1, 0.3, 4395.0, 0.4, 4443.8, 0.3);
    /// <summary>O II "W" of hot superluminous events (blends near 4115, 4357, 4650 Å; from memory, approximate).</summary>
    public static readonly Feature OIIW = F("O II W", 4115.0, 0.25, 4357.0, 0.35, 4650.0, 0.4);
    /// <summary>Mg II 4481 (from memory).</summary>
    public static readonly Feature MgII4481 = F("Mg II 4481", 4481.2, 1);

    /// <summary>
    /// Observed wavelength of a transition emitted by gas approaching at <paramref name="velocityKmPerS"/>
    /// (positive = towards the observer, i.e. a blueshift): λ = λ₀ √((1−β)/(1+β)), the
    /// special-relativistic radial Doppler formula (check-values §5).
    /// </summary>
    public static double BlueshiftedAngstrom(double restAngstrom, double velocityKmPerS)
    {
        double beta = velocityKmPerS / SpeedOfLightKmPerS;
        return restAngstrom * Math.Sqrt((1 - beta) / (1 + beta));
    }
}
