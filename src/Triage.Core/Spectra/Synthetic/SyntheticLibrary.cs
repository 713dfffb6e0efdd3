// Synthetic labelled library of supernova spectra (demo data, labelled synthetic).
//
// Flux(λ_rest) = (1 − h) · S(λ) + h · G(λ), normalised at 6000 Å, where
//   S = B_λ(T(φ)) · b(λ) · exp(−Σ τ_l(λ)) + Σ e_l B_λ(T)(λ_l) · Gauss(λ; λ_l, σ_l)
//   τ_l(λ) = d_l s_l(φ) Σ_k w_k Gauss(λ; λ_k √((1−β)/(1+β)), λ_k σ_v/c)   (P-Cygni absorption at v = βc)
//   T(φ) = T_late + (T_peak − T_late) e^{−max(φ,0)/τ_c},  v(φ) = v₀ clamp(1 − 0.007 φ, 0.5, 1.15),
//   b(λ) = 1 / (1 + s_b (4000/λ)^8) (line blanketing in the blue), G a host spectrum diluting by h.
// Each object draws its own T, v₀, line strengths (log-normal), host fraction at peak h₀ and redshift z;
// the host fraction grows as the transient fades, h(φ) = h₀/(h₀ + (1 − h₀) 10^(−0.4 Δm(φ))).
// The spectrum is rendered finely, given a flux-calibration tilt, a chromatic slit loss and
// telluric residuals, degraded to the native R and sampled at 2 pixels per element. It is written
// noise-free with an error column σ(λ) = √2 f_6000/S (6000/λ)^β stating the native noise (S drawn
// per spectrum), so calibration draws all of the noise; the manifest redshift carries a broker-like
// error (spectroscopic or photometric), or no redshift for a chosen share of objects. Every knob is a SynthOptions default (docs/synthetic-library.md).
// References:
//  1. Filippenko, A. V., "Optical spectra of supernovae", ARA&A 35, 309 (1997) (features, velocities).
//  2. Jeffery, D. J. & Branch, D., "Analysis of supernova spectra", in Supernovae, Jerusalem Winter School (1990) (P-Cygni profiles).
//  3. Rybicki, G. B. & Lightman, A. P., "Radiative Processes in Astrophysics", eq. 1.51 (Planck B_λ).
namespace Triage.Core.Spectra.Synthetic;

/// <summary>
/// Options of the synthetic library generator. These defaults are the ONE source of the library's knobs:
/// docs/synthetic-library.md lists every one with its value, and a test reads that table back and
/// compares it with these defaults.
/// </summary>
public sealed record SynthOptions
{
    /// <summary>Number of objects. Default 400.</summary>
    public int Objects { get; init; } = 400;

    /// <summary>Seed of every random draw. Default 1.</summary>
    public int Seed { get; init; } = 1;

    /// <summary>Native resolving power of every spectrum. Default 6000 (above the highest R of the demo roster, 4000).</summary>
    public double NativeResolution { get; init; } = 6000;

    /// <summary>Observed blue limit (Å). Default 3500.</summary>
    public double FromAngstrom { get; init; } = 3500;

    /// <summary>Observed red limit (Å). Default 9200.</summary>
    public double ToAngstrom { get; init; } = 9200;

    /// <summary>Mean number of spectra per object (1 + Poisson(mean − 1), clamped to 2–16). Default 6.</summary>
    public double MeanSpectraPerObject { get; init; } = 6;

    /// <summary>Floor on objects per subtype, so rare classes appear in every fold. Default 8.</summary>
    public int MinObjectsPerSubtype { get; init; } = 8;

    /// <summary>Smallest redshift drawn. Default 0.005.</summary>
    public double MinRedshift { get; init; } = 0.005;

    /// <summary>Largest redshift drawn (z = min + (max − min)√U). Default 0.065 (keeps 8600 Å rest inside a 9200 Å red limit).</summary>
    public double MaxRedshift { get; init; } = 0.065;

    /// <summary>σ of ln v₀ across objects of a subtype. Default 0.22.</summary>
    public double VelocitySpreadLn { get; init; } = 0.22;

    /// <summary>σ of ln(colour-temperature scale) across objects. Default 0.12.</summary>
    public double TemperatureSpreadLn { get; init; } = 0.12;

    /// <summary>σ of ln(line strength) per feature across objects. Default 0.6.</summary>
    public double LineStrengthSpreadLn { get; init; } = 0.6;

    /// <summary>Phase clock stretch drawn uniformly in [min, max]: lower end. Default 0.8.</summary>
    public double PhaseClockMin { get; init; } = 0.8;

    /// <summary>Phase clock stretch: upper end. Default 1.25.</summary>
    public double PhaseClockMax { get; init; } = 1.25;

    /// <summary>Host fraction at 6000 Å at peak drawn uniformly in [0, this]. Default 0.85.</summary>
    public double HostFractionAtPeakMax { get; init; } = 0.85;

    /// <summary>Share of star-forming hosts (narrow Balmer and [O III] emission). Default 0.5.</summary>
    public double StarFormingHostShare { get; init; } = 0.5;

    /// <summary>Decline of the transient after peak (mag per rest-frame day); the host fraction grows as it fades. Default 0.03.</summary>
    public double DeclineMagPerDay { get; init; } = 0.03;

    /// <summary>Rise of the transient before peak (mag per rest-frame day). Default 0.1.</summary>
    public double RiseMagPerDay { get; init; } = 0.1;

    /// <summary>Mean host reddening E(B−V) (mag), exponential distribution. Default 0.2.</summary>
    public double ReddeningMeanMag { get; init; } = 0.2;

    /// <summary>Native S/N per element at 6000 Å (observed), log-uniform per spectrum: lower end. Default 4.</summary>
    public double NativeSnrMin { get; init; } = 4;

    /// <summary>Native S/N per element at 6000 Å: upper end. Default 16.</summary>
    public double NativeSnrMax { get; init; } = 16;

    /// <summary>Noise per pixel grows to the blue as (6000/λ)^this (lower throughput and flux in the blue). Default 1.5.</summary>
    public double BlueNoiseSlope { get; init; } = 1.5;

    /// <summary>σ of the flux-calibration tilt: flux × (λ/6000)^t per spectrum, t ~ N(0, σ). Default 0.25.</summary>
    public double FluxCalibrationTiltSigma { get; init; } = 0.25;

    /// <summary>Chromatic slit loss: flux × exp(−ℓ((6000/λ)² − 1)), ℓ uniform in [0, this] per spectrum. Default 0.3.</summary>
    public double SlitLossMax { get; init; } = 0.3;

    /// <summary>σ of the telluric-correction residual exponent per band and spectrum: flux × T_band(λ)^ε, ε ~ N(0, σ). Default 0.15.</summary>
    public double TelluricResidualSigma { get; init; } = 0.15;

    /// <summary>Share of objects whose given redshift is a host spectroscopic redshift (the others have a photometric one). Default 0.6.</summary>
    public double SpectroscopicRedshiftShare { get; init; } = 0.6;

    /// <summary>σ of a spectroscopic redshift. Default 0.0005.</summary>
    public double SpectroscopicRedshiftSigma { get; init; } = 0.0005;

    /// <summary>σ of a photometric redshift, times (1 + z). Default 0.015.</summary>
    public double PhotometricRedshiftSigma { get; init; } = 0.015;

    /// <summary>
    /// Share of objects whose manifest row gives no redshift (calibration then estimates it from the spectrum). Drawn
    /// from a generator of its own, so changing it changes nothing else in the library. Default 0 (every object keeps
    /// its given redshift, as the measured figures of docs/calibration.md assume).
    /// </summary>
    public double WithoutRedshiftShare { get; init; } = 0;

    /// <summary>Write noise-free model flux with an error column stating the native noise (true), or add that noise to the flux (false). Default true.</summary>
    public bool NoiseFree { get; init; } = true;

    /// <summary>Every knob with its default, by name, in declaration order (what docs/synthetic-library.md must list).</summary>
    public static IReadOnlyList<(string Name, object Value)> Knobs()
    {
        var defaults = new SynthOptions();
        return typeof(SynthOptions).GetProperties().Select(p => (p.Name, p.GetValue(defaults)!)).ToArray();
    }
}

/// <summary>Per-object truth of a synthetic object, for tests and documentation.</summary>
public sealed record SyntheticObject(string ObjectId, string Subtype, double Redshift, double VelocityKmPerS,
    double TemperatureScale, double HostFraction, bool StarFormingHost, double NativeSnr, IReadOnlyList<double> LineStrengths)
{
    /// <summary>Host-galaxy reddening E(B−V) in magnitudes (0: none).</summary>
    public double ReddeningMag { get; init; }

    /// <summary>The redshift written to the manifest (the truth plus a broker-like error); null when the row gives none.</summary>
    public double? GivenRedshift { get; init; }
}

/// <summary>Generates the synthetic demo library.</summary>
public static class SyntheticLibrary
{
    /// <summary>Header comment stamped on manifests and spectra.</summary>
    public const string Label = "SYNTHETIC demo library generated by triage; invented spectra, not observations";

    /// <summary>Objects per subtype for <paramref name="objects"/> objects: shares with a floor, the remainder taken from the largest class.</summary>
    public static IReadOnlyDictionary<string, int> ObjectCounts(int objects, int minPerSubtype)
    {
        var models = SubtypeModels.All;
        double total = models.Sum(m => m.Share);
        var counts = models.ToDictionary(m => m.Subtype, m => Math.Max(minPerSubtype, (int)Math.Round(objects * m.Share / total)));
        int excess = counts.Values.Sum() - objects;
        var order = models.OrderByDescending(m => m.Share).Select(m => m.Subtype).ToArray();
        for (int i = 0; excess != 0; i = (i + 1) % 2)
        {
            string s = order[i];
            int step = Math.Sign(excess);
            if (counts[s] - step >= minPerSubtype) { counts[s] -= step; excess -= step; }
            else if (i == 1) break;
        }
        return counts;
    }

    /// <summary>Generates the library (in memory) and the per-object truth.</summary>
    public static (SpectralLibrary Library, IReadOnlyList<SyntheticObject> Objects) Generate(SynthOptions options)
    {
        var counts = ObjectCounts(options.Objects, options.MinObjectsPerSubtype);
        var plan = new List<SubtypeModel>();
        foreach (var m in SubtypeModels.All)
            for (int i = 0; i < counts[m.Subtype]; i++) plan.Add(m);
        // Interleave classes so object numbering does not reveal the label.
        var shuffle = new Random(options.Seed);
        var order = plan.OrderBy(_ => shuffle.Next()).ToArray();

        var perObject = new (SyntheticObject Truth, List<LibrarySpectrum> Spectra)[order.Length];
        Parallel.For(0, order.Length, i =>
        {
            var rng = new Random(unchecked(options.Seed * 1_000_003 + i * 7919 + 17));
            bool withoutRedshift = new Random(unchecked(options.Seed * 1_000_033 + i * 7927 + 29)).NextDouble() < options.WithoutRedshiftShare;
            perObject[i] = MakeObject(order[i], string.Create(System.Globalization.CultureInfo.InvariantCulture, $"SYN-{i + 1:0000}"), rng, options,
                withoutRedshift);
        });
        var lib = new SpectralLibrary(perObject.SelectMany(p => p.Spectra).ToArray(), Synthetic: true);
        return (lib, perObject.Select(p => p.Truth).ToArray());
    }

    private static (SyntheticObject, List<LibrarySpectrum>) MakeObject(SubtypeModel m, string id, Random rng, SynthOptions o,
        bool withoutRedshift)
    {
        double z = o.MinRedshift + (o.MaxRedshift - o.MinRedshift) * Math.Sqrt(rng.NextDouble()); // more volume at larger z
        double v0 = m.VelocityKmPerS * Math.Exp(o.VelocitySpreadLn * SpectrumNoise.StandardNormal(rng));
        double tScale = Math.Exp(o.TemperatureSpreadLn * SpectrumNoise.StandardNormal(rng));
        var strengths = m.Lines.Select(_ => Math.Exp(o.LineStrengthSpreadLn * SpectrumNoise.StandardNormal(rng))).ToArray();
        double hostAtPeak = o.HostFractionAtPeakMax * rng.NextDouble();
        double reddening = -o.ReddeningMeanMag * Math.Log(1 - rng.NextDouble()); // E(B−V), exponential
        bool starForming = rng.NextDouble() < o.StarFormingHostShare;
        double evolution = o.PhaseClockMin + (o.PhaseClockMax - o.PhaseClockMin) * rng.NextDouble();
        // A broker's redshift: a host spectroscopic one, or a photometric one with σ ∝ (1 + z).
        bool specZ = rng.NextDouble() < o.SpectroscopicRedshiftShare;
        double zSigma = specZ ? o.SpectroscopicRedshiftSigma : o.PhotometricRedshiftSigma * (1 + z);
        double zGiven = Math.Max(0, z + zSigma * SpectrumNoise.StandardNormal(rng));

        int n = Math.Clamp(1 + Poisson(rng, o.MeanSpectraPerObject - 1), 2, 16);
        var phases = new SortedSet<double>();
        while (phases.Count < n)
            phases.Add(Math.Round(m.PhaseFromDays + (m.PhaseToDays - m.PhaseFromDays) * Math.Pow(rng.NextDouble(), 1.3), 2));

        var truth = new SyntheticObject(id, m.Subtype, z, v0, tScale, hostAtPeak, starForming, 0, strengths)
            { ReddeningMag = reddening, GivenRedshift = withoutRedshift ? null : Math.Round(zGiven, 5) };
        var fine = LogWavelengthGrid.ForResolution(o.FromAngstrom, o.ToAngstrom, o.NativeResolution, 6);
        var obs = fine.Centres();
        var spectra = new List<LibrarySpectrum>();
        int e = 0;
        foreach (double phase in phases)
        {
            e++;
            // The host's share grows as the transient fades (and is larger before peak).
            double fadeMag = o.DeclineMagPerDay * Math.Max(phase, 0) + o.RiseMagPerDay * Math.Max(-phase, 0);
            double host = hostAtPeak / (hostAtPeak + (1 - hostAtPeak) * Math.Pow(10, -0.4 * fadeMag));
            var flux = Render(m, truth with { HostFraction = host }, phase * evolution, obs);
            ApplyObservation(flux, obs, rng, o);
            var (grid, degraded) = Degradation.Degrade(new Spectrum(obs, flux), o.NativeResolution, null);
            double nativeSnr = o.NativeSnrMin * Math.Pow(o.NativeSnrMax / o.NativeSnrMin, rng.NextDouble());
            double level = Math.Abs(SpectrumNoise.ReferenceLevel(grid, degraded));
            var w = grid.Centres();
            // σ per pixel: √P f_ref / S at 6000 Å (2 pixels per element), rising to the blue.
            var error = w.Select(x => Math.Sqrt(2) * level / nativeSnr * Math.Pow(SpectrumNoise.ReferenceWavelengthAngstrom / x, o.BlueNoiseSlope)).ToArray();
            // Noise from its own generator, so a noisy library and its noise-free twin share every model draw.
            var noiseRng = new Random(unchecked(rng.Next() ^ 0x5eed));
            var written = o.NoiseFree ? degraded : degraded.Select((f, i) => f + error[i] * SpectrumNoise.StandardNormal(noiseRng)).ToArray();
            var keep = Enumerable.Range(0, w.Length).Where(i => !double.IsNaN(written[i])).ToArray();
            var sp = new Spectrum(keep.Select(i => Math.Round(w[i], 3)).ToArray(), keep.Select(i => written[i]).ToArray(),
                keep.Select(i => error[i]).ToArray());
            string file = string.Create(System.Globalization.CultureInfo.InvariantCulture, $"spectra/{id}_{e:00}.txt");
            spectra.Add(new LibrarySpectrum(file, id, m.Subtype, phase, truth.GivenRedshift, o.NativeResolution, sp) { NoiseFree = o.NoiseFree });
        }
        return (truth, spectra);
    }

    /// <summary>
    /// Telluric absorption bands (observed frame, Å): centre, Gaussian σ and depth of T = 1 − d·G; O₂ B and A
    /// bands and three H₂O bands (positions from memory, depths rough; demo only).
    /// </summary>
    public static IReadOnlyList<(double CentreAngstrom, double SigmaAngstrom, double Depth)> TelluricBands { get; } =
    [
        (6875, 8, 0.5), (7605, 12, 0.8), (7250, 50, 0.25), (8230, 60, 0.3), (9100, 80, 0.4),
    ];

    /// <summary>
    /// Observing effects on an observed-frame model spectrum, in place: a flux-calibration tilt (λ/6000)^t, a
    /// chromatic slit loss exp(−ℓ((6000/λ)² − 1)) and telluric-correction residuals Π T_b(λ)^ε_b.
    /// </summary>
    private static void ApplyObservation(double[] flux, double[] observedAngstrom, Random rng, SynthOptions o)
    {
        double tilt = o.FluxCalibrationTiltSigma * SpectrumNoise.StandardNormal(rng);
        double slit = o.SlitLossMax * rng.NextDouble();
        var eps = TelluricBands.Select(_ => o.TelluricResidualSigma * SpectrumNoise.StandardNormal(rng)).ToArray();
        for (int i = 0; i < flux.Length; i++)
        {
            double x = observedAngstrom[i] / SpectrumNoise.ReferenceWavelengthAngstrom;
            double factor = Math.Pow(x, tilt) * Math.Exp(-slit * (1 / (x * x) - 1));
            for (int b = 0; b < eps.Length; b++)
            {
                var (c, sg, d) = TelluricBands[b];
                double u = (observedAngstrom[i] - c) / sg;
                if (Math.Abs(u) < 6) factor *= Math.Pow(1 - d * Math.Exp(-0.5 * u * u), eps[b]);
            }
            flux[i] *= factor;
        }
    }

    private static int Poisson(Random rng, double mean)
    {
        double l = Math.Exp(-mean), p = 1;
        int k = 0;
        do { k++; p *= rng.NextDouble(); } while (p > l);
        return k - 1;
    }

    /// <summary>
    /// Rest-frame model flux of <paramref name="m"/> for object <paramref name="obj"/> at phase
    /// <paramref name="phaseDays"/>, evaluated at observed wavelengths (λ_rest = λ_obs/(1+z)),
    /// normalised to 1 at 6000 Å rest.
    /// </summary>
    public static double[] Render(SubtypeModel m, SyntheticObject obj, double phaseDays, double[] observedAngstrom)
    {
        double t = (m.LateTemperatureK + (m.PeakTemperatureK - m.LateTemperatureK) * Math.Exp(-Math.Max(phaseDays, 0) / m.CoolingDays))
                   * obj.TemperatureScale;
        double v = obj.VelocityKmPerS * Math.Clamp(1 - 0.007 * phaseDays, 0.5, 1.15);
        int n = observedAngstrom.Length;
        var rest = new double[n];
        for (int i = 0; i < n; i++) rest[i] = observedAngstrom[i] / (1 + obj.Redshift);

        double norm = Continuum(6000, t, m.BlueSuppression);
        var cont = new double[n];
        var tau = new double[n];
        var emission = new double[n];
        for (int i = 0; i < n; i++) cont[i] = Continuum(rest[i], t, m.BlueSuppression) / norm;
        for (int l = 0; l < m.Lines.Count; l++)
        {
            var spec = m.Lines[l];
            double strength = spec.StrengthAt(phaseDays) * obj.LineStrengths[l];
            double vLine = v * spec.VelocityFactor;
            double sigmaV = spec.FixedSigmaKmPerS > 0 ? spec.FixedSigmaKmPerS : m.WidthFraction * vLine;
            foreach (var tr in spec.Feature.Transitions)
            {
                if (spec.Depth > 0)
                    AddGaussian(rest, tau, LineList.BlueshiftedAngstrom(tr.RestAngstrom, vLine),
                        tr.RestAngstrom * sigmaV / LineList.SpeedOfLightKmPerS, spec.Depth * strength * tr.Weight);
                if (spec.Emission > 0)
                {
                    double sigmaE = spec.FixedSigmaKmPerS > 0 ? spec.FixedSigmaKmPerS : Math.Max(sigmaV, 0.45 * vLine);
                    AddGaussian(rest, emission, tr.RestAngstrom, tr.RestAngstrom * sigmaE / LineList.SpeedOfLightKmPerS,
                        spec.Emission * strength * tr.Weight * Continuum(tr.RestAngstrom, t, 0) / norm);
                }
            }
        }
        var flux = new double[n];
        double hostNorm = Host(6000, obj.StarFormingHost);
        for (int i = 0; i < n; i++)
        {
            double sn = cont[i] * Math.Exp(-tau[i]) + emission[i];
            flux[i] = ((1 - obj.HostFraction) * sn + obj.HostFraction * Host(rest[i], obj.StarFormingHost) / hostNorm)
                      * Extinction(rest[i], obj.ReddeningMag) / Extinction(6000, obj.ReddeningMag);
        }
        return flux;
    }

    /// <summary>
    /// Dust transmission 10^(−0.4 A_λ) with A_λ = 3.1 E(B−V) (5500/λ)^1.2, a power-law approximation of a
    /// Milky-Way-like extinction curve in the optical (from memory; demo only).
    /// </summary>
    public static double Extinction(double lambdaAngstrom, double reddeningMag) =>
        Math.Pow(10, -0.4 * 3.1 * reddeningMag * Math.Pow(5500 / lambdaAngstrom, 1.2));

    /// <summary>Adds amplitude·exp(−½((λ−centre)/σ)²) within ±5σ.</summary>
    private static void AddGaussian(double[] lambda, double[] target, double centre, double sigma, double amplitude)
    {
        int lo = LowerBound(lambda, centre - 5 * sigma), hi = LowerBound(lambda, centre + 5 * sigma);
        for (int i = lo; i < hi; i++)
        {
            double d = (lambda[i] - centre) / sigma;
            target[i] += amplitude * Math.Exp(-0.5 * d * d);
        }
    }

    private static int LowerBound(double[] a, double x)
    {
        int i = Array.BinarySearch(a, x);
        return i >= 0 ? i : ~i;
    }

    /// <summary>Planck B_λ(T) (arbitrary units) times the blue line-blanketing factor 1/(1 + s (4000/λ)^8).</summary>
    public static double Continuum(double lambdaAngstrom, double temperatureK, double blueSuppression)
    {
        const double hcOverK = 1.438777e8; // h c / k in Å K (CODATA, from memory)
        double x = hcOverK / (lambdaAngstrom * temperatureK);
        double planck = 1.0 / (Math.Pow(lambdaAngstrom / 5000.0, 5) * (Math.Exp(x) - 1));
        return planck / (1 + blueSuppression * Math.Pow(4000.0 / lambdaAngstrom, 8));
    }

    /// <summary>
    /// Host-galaxy light: a 4800 K continuum with a 4000 Å break, Ca II H&amp;K, Mg b and Na D
    /// absorption, and for star-forming hosts narrow Hα, [N II] 6583, Hβ and [O III] 5007 emission
    /// (wavelengths from memory).
    /// </summary>
    public static double Host(double lambdaAngstrom, bool starForming)
    {
        double c = Continuum(lambdaAngstrom, 4800, 0) * (0.55 + 0.45 / (1 + Math.Exp(-(lambdaAngstrom - 4000) / 40)));
        double a = 0.35 * G(lambdaAngstrom, 3933.66, 6) + 0.3 * G(lambdaAngstrom, 3968.47, 6)
                   + 0.12 * G(lambdaAngstrom, 5175.4, 8) + 0.1 * G(lambdaAngstrom, 5892.9, 5);
        double f = c * (1 - a);
        if (starForming)
            f += Continuum(6563, 4800, 0) * (0.9 * G(lambdaAngstrom, 6562.79, 2.5) + 0.3 * G(lambdaAngstrom, 6583.45, 2.5)
                                              + 0.3 * G(lambdaAngstrom, 4861.35, 2.0) + 0.35 * G(lambdaAngstrom, 5006.84, 2.0));
        return f;

        static double G(double x, double c, double s) => Math.Exp(-0.5 * (x - c) * (x - c) / (s * s));
    }
}
