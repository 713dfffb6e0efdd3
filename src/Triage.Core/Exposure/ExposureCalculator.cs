// CCD signal-to-noise per resolution element of a slit spectrograph, and its inverse.
//
//   N_λ = f_ν / (h λ),  f_ν = 3631 Jy · 10^(−0.4 m_AB)                      photons s⁻¹ cm⁻² Å⁻¹
//   A = π (D/2)² (1 − obstructed area fraction),   Δλ = λ / R
//   s = N_λ(m) A T Δλ f_slit f_ext 10^(−0.4 k X),  f_slit = erf(w / (2√2 σ)),  f_ext = erf(L / (2√2 σ)),  σ = FWHM/2.3548
//   b = N_λ(μ_sky) A T Δλ · w L,   L = n_spatial × pixel scale,   n_pix = p_spectral × n_spatial
//   S/N(t) = s t / √[(s + b + n_pix D) t + n_exp n_pix RN²],   n_exp = ⌈t / t_max⌉ equal sub-exposures
//   t(S/N): s² t² − S/N² (s + b + n_pix D) t − S/N² n_exp n_pix RN² = 0, positive root, for n_exp = 1, 2, … until t ≤ n_exp t_max
//
// References
//   1. S. B. Howell, Handbook of CCD Astronomy, 2nd ed. (2006), §4.4 ("the CCD equation").
//   2. J. B. Oke, J. E. Gunn, "Secondary standard stars for absolute spectrophotometry", ApJ 266 (1983) 713 (AB system).
//   3. W. J. Merline, S. B. Howell, "A realistic model for point-sources imaged on array detectors", Exp. Astron. 6 (1995) 163.
//   4. K. Krisciunas, B. E. Schaefer, PASP 103 (1991) 1033 (moonlit sky, see MoonlitSky).
using MathNet.Numerics;
using Triage.Core.Roster;

namespace Triage.Core.Exposure;

/// <summary>
/// Exposure-time calculator for one spectrograph at its site.
/// </summary>
/// <remarks>
/// <para><b>S/N convention:</b> per resolution element (Δλ = λ/R) at the reference wavelength, on the
/// continuum of a source with flat f_ν; the element is summed over
/// <see cref="Spectrograph.PixelsPerResolutionElement"/> spectral pixels and the extraction length along the slit.</para>
/// <para>Assumptions: 1 detected photon = 1 e⁻ (gain 1, no digitisation noise); the PSF is a centred circular
/// Gaussian; the sky fills the slit uniformly; no sky-subtraction penalty (the Merline &amp; Howell factor
/// (1 + n_pix/n_B) is 1); throughput excludes the atmosphere, whose extinction k·X applies to the source only
/// (the sky brightness is as seen from the ground). Integrations longer than
/// <see cref="Spectrograph.MaxExposureSeconds"/> are split into equal sub-exposures, and read noise is
/// counted once per sub-exposure.</para>
/// <para>Reproduces the worked example of the reference notes (S/N 52.46 in 600 s, 29.89 s for S/N 10) to 1e-4.</para>
/// </remarks>
public sealed class ExposureCalculator
{
    /// <summary>Planck constant, erg s (exact, SI 2019).</summary>
    public const double PlanckErgSeconds = 6.62607015e-27;

    /// <summary>AB zero point, Jy (Oke &amp; Gunn 1983).</summary>
    public const double AbZeroPointJansky = 3631.0;

    private const double Fwhm = 2.3548200450309493;
    private const int MaxExposureCount = 1_000_000;

    private ExposureCalculator(Spectrograph spectrograph, Site site)
    {
        Spectrograph = spectrograph;
        Site = site;
        double radiusCm = spectrograph.ApertureM * 100 / 2;
        EffectiveAreaCm2 = Math.PI * radiusCm * radiusCm * (1 - spectrograph.CentralObstruction);
    }

    /// <summary>The spectrograph.</summary>
    public Spectrograph Spectrograph { get; }

    /// <summary>The site (seeing, dark sky, extinction).</summary>
    public Site Site { get; }

    /// <summary>Unobstructed collecting area, cm².</summary>
    public double EffectiveAreaCm2 { get; }

    /// <summary>Builds a calculator, checking the instrument and site fields it uses.</summary>
    /// <exception cref="ArgumentException">A field is out of range; the message names it.</exception>
    public static ExposureCalculator For(Spectrograph spectrograph, Site site)
    {
        ArgumentNullException.ThrowIfNull(spectrograph);
        ArgumentNullException.ThrowIfNull(site);
        Require(spectrograph.ResolvingPower >= 1 && spectrograph.ResolvingPower <= 1e6, nameof(Spectrograph.ResolvingPower), "must be in [1, 1e6]");
        Require(spectrograph.ReferenceWavelengthAngstrom > 0, nameof(Spectrograph.ReferenceWavelengthAngstrom), "must be > 0");
        Require(spectrograph.ApertureM > 0 && spectrograph.ApertureM < 100, nameof(Spectrograph.ApertureM), "must be in (0, 100)");
        Require(spectrograph.CentralObstruction >= 0 && spectrograph.CentralObstruction < 1, nameof(Spectrograph.CentralObstruction), "must be in [0, 1)");
        Require(spectrograph.Throughput > 0 && spectrograph.Throughput <= 1, nameof(Spectrograph.Throughput), "must be in (0, 1]");
        Require(spectrograph.ReadNoiseElectrons >= 0, nameof(Spectrograph.ReadNoiseElectrons), "must be ≥ 0");
        Require(spectrograph.DarkCurrentElectronsPerSecond >= 0, nameof(Spectrograph.DarkCurrentElectronsPerSecond), "must be ≥ 0");
        Require(spectrograph.PixelsPerResolutionElement >= 1, nameof(Spectrograph.PixelsPerResolutionElement), "must be ≥ 1");
        Require(spectrograph.SpatialPixelScaleArcsec > 0, nameof(Spectrograph.SpatialPixelScaleArcsec), "must be > 0");
        Require(spectrograph.SlitWidthArcsec > 0, nameof(Spectrograph.SlitWidthArcsec), "must be > 0");
        Require(spectrograph.MaxExposureSeconds > 0, nameof(Spectrograph.MaxExposureSeconds), "must be > 0");
        Require(spectrograph.OverheadSeconds >= 0, nameof(Spectrograph.OverheadSeconds), "must be ≥ 0");
        Require(site.SeeingArcsec > 0, nameof(Site.SeeingArcsec), "must be > 0");
        Require(site.DarkSkyMagArcsec2 is > 10 and < 30, nameof(Site.DarkSkyMagArcsec2), "must be in (10, 30)");
        Require(site.ExtinctionMagPerAirmass is >= 0 and < 5, nameof(Site.ExtinctionMagPerAirmass), "must be in [0, 5)");
        return new ExposureCalculator(spectrograph, site);
    }

    /// <summary>Photon flux density of a flat-f_ν AB source, photons s⁻¹ cm⁻² Å⁻¹ (N_λ = f_ν / (h λ)).</summary>
    /// <param name="magAB">AB magnitude (or AB mag/arcsec² for a surface brightness, giving the value per arcsec²).</param>
    /// <param name="wavelengthAngstrom">Wavelength, Å.</param>
    public static double PhotonFluxDensity(double magAB, double wavelengthAngstrom) =>
        AbZeroPointJansky * 1e-23 * Math.Pow(10, -0.4 * magAB) / (PlanckErgSeconds * wavelengthAngstrom);

    /// <summary>Count rates for a source of AB magnitude <paramref name="magAB"/> under <paramref name="conditions"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Magnitude or a condition out of range; the parameter name says which.</exception>
    public ExposureRates Rates(double magAB, ObservingConditions? conditions = null)
    {
        var c = conditions ?? new ObservingConditions();
        Require(magAB is > -5 and < 40, nameof(magAB), "must be in (−5, 40)");
        Require(c.Airmass is >= 1 and <= 40, nameof(ObservingConditions.Airmass), "must be in [1, 40]");
        double seeing = c.SeeingArcsec ?? Site.SeeingArcsec;
        Require(seeing is > 0 and < 30, nameof(ObservingConditions.SeeingArcsec), "must be in (0, 30)");
        double lambda = c.WavelengthAngstrom ?? Spectrograph.ReferenceWavelengthAngstrom;
        Require(c.WavelengthAngstrom is null
                || (lambda >= Spectrograph.MinWavelengthAngstrom && lambda <= Spectrograph.MaxWavelengthAngstrom),
            nameof(ObservingConditions.WavelengthAngstrom), "must lie inside the spectrograph's wavelength range");
        Require(c.SpatialExtractionPixels is null or >= 1, nameof(ObservingConditions.SpatialExtractionPixels), "must be ≥ 1");

        var sp = Spectrograph;
        int spatial = c.SpatialExtractionPixels ?? Math.Max(1, (int)Math.Round(2 * seeing / sp.SpatialPixelScaleArcsec));
        double extractionArcsec = spatial * sp.SpatialPixelScaleArcsec;
        double sigmaTimesSqrt2 = seeing / Fwhm * Math.Sqrt(2);
        double fSlit = SpecialFunctions.Erf(sp.SlitWidthArcsec / 2 / sigmaTimesSqrt2);
        double fExt = SpecialFunctions.Erf(extractionArcsec / 2 / sigmaTimesSqrt2);
        double dLambda = lambda / sp.ResolvingPower;
        double collecting = EffectiveAreaCm2 * sp.Throughput * dLambda;
        double k = Site.ExtinctionMagPerAirmass;
        double transmission = Math.Pow(10, -0.4 * k * c.Airmass);

        double zenithDeg = Math.Acos(1 / c.Airmass) * 180 / Math.PI;
        double skyMag = MoonlitSky.SkyMagArcsec2(Site.DarkSkyMagArcsec2, k, zenithDeg, c.Moon);

        double pixels = sp.PixelsPerResolutionElement * spatial;
        return new ExposureRates(
            SourceElectronsPerSecond: PhotonFluxDensity(magAB, lambda) * collecting * fSlit * fExt * transmission,
            SkyElectronsPerSecond: PhotonFluxDensity(skyMag, lambda) * collecting * sp.SlitWidthArcsec * extractionArcsec,
            DarkElectronsPerSecond: pixels * sp.DarkCurrentElectronsPerSecond,
            ReadNoiseVariancePerExposure: pixels * sp.ReadNoiseElectrons * sp.ReadNoiseElectrons,
            Pixels: pixels,
            SpatialPixels: spatial,
            ResolutionElementAngstrom: dLambda,
            WavelengthAngstrom: lambda,
            EffectiveAreaCm2: EffectiveAreaCm2,
            SlitTransmission: fSlit,
            ExtractionFraction: fExt,
            SkyMagArcsec2: skyMag);
    }

    /// <summary>S/N per resolution element reached in <paramref name="exposureSeconds"/> of open shutter.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Time not in (0, 1e7] s, or a bad magnitude/condition.</exception>
    public ExposureEstimate SignalToNoiseFor(double magAB, double exposureSeconds, ObservingConditions? conditions = null)
    {
        Require(exposureSeconds is > 0 and <= 1e7, nameof(exposureSeconds), "must be in (0, 1e7] s");
        var rates = Rates(magAB, conditions);
        return Estimate(rates, exposureSeconds, CountFor(exposureSeconds), reachable: true);
    }

    /// <summary>
    /// Shortest open-shutter time reaching <paramref name="signalToNoise"/> per resolution element, split into
    /// sub-exposures no longer than the spectrograph's maximum. When the S/N cannot be reached within
    /// <see cref="ObservingConditions.MaxTotalSeconds"/> the result has <c>Reachable = false</c> and describes the
    /// best S/N available within that time.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">S/N not in (0, 1e5], or a bad magnitude/condition.</exception>
    public ExposureEstimate TimeFor(double magAB, double signalToNoise, ObservingConditions? conditions = null)
    {
        Require(signalToNoise is > 0 and <= 1e5, nameof(signalToNoise), "must be in (0, 1e5]");
        var c = conditions ?? new ObservingConditions();
        Require(c.MaxTotalSeconds is > 0 and <= 1e7, nameof(ObservingConditions.MaxTotalSeconds), "must be in (0, 1e7] s");
        var rates = Rates(magAB, c);
        double s = rates.SourceElectronsPerSecond;
        double tMax = Spectrograph.MaxExposureSeconds;
        double variancePerSecond = s + rates.SkyElectronsPerSecond + rates.DarkElectronsPerSecond;
        double sn2 = signalToNoise * signalToNoise;

        int maxCount = (int)Math.Min(MaxExposureCount, Math.Ceiling(c.MaxTotalSeconds / tMax - 1e-9));
        if (s > 0)
        {
            // s² t² − S/N² (s + b + dark) t − S/N² n RN²_pix = 0, positive root (both other coefficients ≤ 0).
            double b = sn2 * variancePerSecond;
            double Root(int n) => (b + Math.Sqrt(b * b + 4 * s * s * sn2 * n * rates.ReadNoiseVariancePerExposure)) / (2 * s * s);

            // t(n) grows with n, so no count below t(1)/t_max can hold its own time: start there.
            double t1 = Root(1);
            int first = (int)Math.Clamp(Math.Ceiling(t1 / tMax - 1e-9), 1, MaxExposureCount);
            for (int n = first; n <= maxCount; n++)
            {
                double t = Root(n);
                if (t > c.MaxTotalSeconds * (1 + 1e-12))
                {
                    break;
                }

                if (t <= n * tMax * (1 + 1e-12))
                {
                    return Estimate(rates, t, n, reachable: true);
                }
            }
        }

        return BestWithin(rates, c.MaxTotalSeconds);
    }

    private ExposureEstimate BestWithin(ExposureRates rates, double maxTotalSeconds)
    {
        double tMax = Spectrograph.MaxExposureSeconds;
        var atLimit = Estimate(rates, maxTotalSeconds, CountFor(maxTotalSeconds), reachable: false);
        double fullSubs = Math.Floor(maxTotalSeconds / tMax + 1e-9) * tMax;
        if (fullSubs > 0 && fullSubs < maxTotalSeconds)
        {
            var whole = Estimate(rates, fullSubs, CountFor(fullSubs), reachable: false);
            if (whole.SignalToNoise > atLimit.SignalToNoise)
            {
                return whole;
            }
        }

        return atLimit;
    }

    private int CountFor(double seconds) =>
        (int)Math.Min(MaxExposureCount, Math.Max(1, Math.Ceiling(seconds / Spectrograph.MaxExposureSeconds - 1e-9)));

    private ExposureEstimate Estimate(ExposureRates r, double seconds, int count, bool reachable)
    {
        var budget = new ElectronBudget(
            r.SourceElectronsPerSecond * seconds,
            r.SkyElectronsPerSecond * seconds,
            r.DarkElectronsPerSecond * seconds,
            count * r.ReadNoiseVariancePerExposure);
        double noise = budget.NoiseElectrons;
        double snr = noise > 0 ? budget.SourceElectrons / noise : 0;
        return new ExposureEstimate(reachable, snr, seconds, count, seconds / count, seconds + Spectrograph.OverheadSeconds, budget, r);
    }

    private static void Require(bool condition, string name, string rule)
    {
        if (!condition)
        {
            throw new ArgumentOutOfRangeException(name, $"{name} {rule}.");
        }
    }
}
