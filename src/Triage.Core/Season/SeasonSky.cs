// A synthetic sky of transients for the season simulator (invented; no real objects):
//   subtype s ~ the survey base rates over the calibrated subtypes (a magnitude-limited sample);
//   peak apparent magnitude m_p = m_lim + ln(U)/(0.6 ln 10), U ~ U(0, 1], floored at 15
//        (Euclidean counts N(<m) ∝ 10^{0.6 m} [1]); peak absolute magnitude M ~ N(M_s, σ_s);
//   luminosity distance d_L = 10^{(m_p − M − 25)/5} Mpc, z = H₀ d_L / c (low-z, H₀ = 70 km/s/Mpc);
//   light curve (rest-frame phase t days, at the S/N reference wavelength):
//        t < 0: m = m_p + 1.5 (t/t_rise)²,  0 ≤ t: m = m_p + (Δm₁₅/15) t   (observer time × (1+z));
//   colours: g − r = 0 at peak reddening by 0.02 mag/day after it (the broker's second band);
//   discovery: the first observer day at which m < m_lim; positions uniform on the sphere for
//   −75° ≤ δ ≤ +55°; peak times uniform over the season and the 40 days before it.
// Default rate (a magnitude-limited, Euclidean estimate of how many transients the survey finds):
//   d_lim = 10^{(m_lim − M_Ia − 25)/5} Mpc,  N_Ia = R_Ia · (4π/3) d_lim³ / 365.25 per day over the whole sky,
//   peaks per day = N_Ia / f_Ia · Ω/4π,  Ω/4π = (sin 55° + sin 75°)/2 for the simulated band of declinations,
//   with R_Ia = 3.0 × 10⁻⁵ Mpc⁻³ yr⁻¹ [2], M_Ia = −19.3 [3], f_Ia = 0.72 the Ia share of a
//   magnitude-limited sample [4]. At m_lim = 19.5: d = 575 Mpc, 65.5 Ia per day, 81 per day in the band.
//   No time dilation, K-correction or cosmological volume (z ≈ 0.13 at the limit): an overestimate of
//   perhaps a few tens of per cent, stated as such.
// Broker probabilities: p(k) ∝ b(k) · exp(β [k = s] + σ_b ε_k), ε ~ N(0, 1): noisy, centred on the truth
// with quality β (β = 0: the base rates with noise). The planner's forecast is the truth with an
// object-level magnitude error N(0, σ_m) and a peak-time error N(0, σ_t) (a stand-in for the light-curve fit).
//
// References
// [1] common practice: the Euclidean source-count slope d log N / dm = 0.6 for a uniform population in flat space.
// [2] from memory: W. Li et al., MNRAS 412 (2011) 1473, local volumetric SN Ia rate ≈ 3.0 × 10⁻⁵ Mpc⁻³ yr⁻¹ (h = 0.7).
// [3] common practice: SN Ia peak absolute magnitude M_B ≈ −19.3.
// [4] from memory: C. Fremling et al., ApJ 895 (2020) 32 / D. Perley et al., ApJ 904 (2020) 35 (a bright
//     transient survey to 18.5 mag): about 72 % of its classified supernovae are Ia.
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Core.Sky;

namespace Triage.Core.Season;

/// <summary>Settings of the synthetic sky.</summary>
public sealed record SkySettings
{
    /// <summary>
    /// New transients peaking brighter than <see cref="SurveyLimitMag"/> per day in the simulated band of
    /// declinations. Default <see cref="SurveyRatePerDay"/> at 19.5 mag, rounded: 81.
    /// </summary>
    public double PeaksPerDay { get; init; } = Math.Round(SurveyRatePerDay(19.5));

    /// <summary>Survey detection limit, AB mag at the S/N reference wavelength. Default 19.5.</summary>
    public double SurveyLimitMag { get; init; } = 19.5;

    /// <summary>β: broker quality (weight of the truth in the broker's probabilities). Default 1.0.</summary>
    public double BrokerQuality { get; init; } = 1.0;

    /// <summary>σ_b: noise of the broker's log-probabilities. Default 0.7.</summary>
    public double BrokerNoise { get; init; } = 0.7;

    /// <summary>σ_m: error of the forecast magnitude, mag. Default 0.2.</summary>
    public double ForecastMagSigma { get; init; } = 0.2;

    /// <summary>σ_t: error of the forecast peak time, days. Default 3.</summary>
    public double ForecastPeakSigmaDays { get; init; } = 3;

    /// <summary>Days before the first night whose peaks are simulated (objects already in the pool). Default 40.</summary>
    public double LeadInDays { get; init; } = 40;

    /// <summary>Volumetric SN Ia rate R_Ia, Mpc⁻³ yr⁻¹ (from memory: Li et al. 2011).</summary>
    public const double IaRatePerMpc3Year = 3.0e-5;

    /// <summary>SN Ia peak absolute magnitude M_Ia (common practice).</summary>
    public const double IaPeakAbsoluteMag = -19.3;

    /// <summary>f_Ia: the Ia share of a magnitude-limited sample (from memory: a bright transient survey, 2020).</summary>
    public const double IaShareOfMagnitudeLimitedSample = 0.72;

    /// <summary>
    /// Transients peaking brighter than <paramref name="limitMag"/> per day in the band −75° ≤ δ ≤ +55°:
    /// R_Ia (4π/3) d³ / 365.25 / f_Ia · Ω/4π with d = 10^{(m − M_Ia − 25)/5} Mpc (Euclidean, low z).
    /// </summary>
    /// <param name="limitMag">Survey limit, AB mag.</param>
    public static double SurveyRatePerDay(double limitMag)
    {
        var distanceMpc = Math.Pow(10, (limitMag - IaPeakAbsoluteMag - 25) / 5);
        var iaPerDay = IaRatePerMpc3Year * 4 * Math.PI / 3 * distanceMpc * distanceMpc * distanceMpc / 365.25;
        var band = (Math.Sin(55 * Math.PI / 180) + Math.Sin(75 * Math.PI / 180)) / 2;
        return iaPerDay / IaShareOfMagnitudeLimitedSample * band;
    }
}

/// <summary>One simulated transient.</summary>
/// <param name="Index">Index in the sky.</param>
/// <param name="Id">Invented id.</param>
/// <param name="Position">ICRS position.</param>
/// <param name="Subtype">Index of the true subtype in the calibration's order.</param>
/// <param name="Redshift">z.</param>
/// <param name="PeakUtc">Time of peak.</param>
/// <param name="PeakMag">Peak apparent magnitude (AB).</param>
/// <param name="RiseDays">Rest-frame rise time scale, days.</param>
/// <param name="DeclinePerDay">Rest-frame decline, mag/day.</param>
/// <param name="DiscoveredUtc">First time brighter than the survey limit.</param>
/// <param name="BrokerProbabilities">The broker's probabilities over the calibration's subtypes.</param>
/// <param name="ForecastMagError">Object-level error of the planner's magnitude forecast, mag.</param>
/// <param name="ForecastPeakErrorDays">Error of the planner's peak time, days.</param>
public sealed record Transient(
    int Index,
    string Id,
    SkyTarget Position,
    int Subtype,
    double Redshift,
    DateTimeOffset PeakUtc,
    double PeakMag,
    double RiseDays,
    double DeclinePerDay,
    DateTimeOffset DiscoveredUtc,
    double[] BrokerProbabilities,
    double ForecastMagError,
    double ForecastPeakErrorDays)
{
    /// <summary>Rest-frame days from peak at <paramref name="utc"/>.</summary>
    public double PhaseAt(DateTimeOffset utc) => (utc - PeakUtc).TotalDays / (1 + Redshift);

    /// <summary>True magnitude at <paramref name="utc"/>.</summary>
    public double MagnitudeAt(DateTimeOffset utc)
    {
        var t = PhaseAt(utc);
        return t < 0 ? PeakMag + 1.5 * (t / RiseDays) * (t / RiseDays) : PeakMag + DeclinePerDay * t;
    }
}

/// <summary>The planner's view of a simulated transient: forecast with errors, and the strategy's current subtype belief.</summary>
public sealed class SimulatedTarget(Transient transient, IReadOnlyDictionary<string, double> prior, double sigmaMag, double sigmaPeakDays) : ITargetForecast
{
    /// <summary>The transient behind it.</summary>
    public Transient Transient => transient;

    /// <inheritdoc/>
    public string Id => transient.Id;

    /// <inheritdoc/>
    public SkyTarget Position => transient.Position;

    /// <inheritdoc/>
    public double ScienceWeight => 1;

    /// <inheritdoc/>
    public IReadOnlyDictionary<string, double> SubtypePrior => prior;

    /// <inheritdoc/>
    public MagnitudeForecast MagnitudeAt(DateTimeOffset utc) => new(transient.MagnitudeAt(utc) + transient.ForecastMagError, sigmaMag);

    /// <inheritdoc/>
    public PhaseBelief PhaseAt(DateTimeOffset utc) =>
        new(transient.PhaseAt(utc.AddDays(-transient.ForecastPeakErrorDays)), sigmaPeakDays / (1 + transient.Redshift));
}

/// <summary>Draws the sky of a season.</summary>
public static class SeasonSky
{
    private const double SpeedOfLightKmS = 299792.458;
    private const double HubbleKmSMpc = 70;

    /// <summary>Draws every transient peaking between <paramref name="firstNight"/> − lead-in and the end of the season.</summary>
    /// <param name="subtypes">Calibrated subtypes (truths are drawn among them).</param>
    /// <param name="firstNight">First night of the season.</param>
    /// <param name="nights">Number of nights.</param>
    /// <param name="seed">Seed.</param>
    /// <param name="settings">Sky settings.</param>
    public static IReadOnlyList<Transient> Draw(IReadOnlyList<string> subtypes, DateOnly firstNight, int nights, int seed, SkySettings settings)
    {
        ArgumentNullException.ThrowIfNull(subtypes);
        ArgumentNullException.ThrowIfNull(settings);
        var random = new Random(SeasonRandom.Derive(seed, "sky"));
        var baseRates = SubtypePriors.BaseRates(subtypes.ToArray());
        var rates = subtypes.Select(s => baseRates[s]).ToArray();
        var start = new DateTimeOffset(firstNight.ToDateTime(TimeOnly.MinValue), TimeSpan.Zero).AddDays(-settings.LeadInDays);
        var span = settings.LeadInDays + nights;
        var count = Poisson(random, settings.PeaksPerDay * span);
        var list = new List<Transient>(count);
        for (var i = 0; i < count; i++)
        {
            var s = Pick(random, rates);
            SubtypePriors.TryTypicalShape(subtypes[s], out var shape);
            if (shape == default)
            {
                shape = (10, 3, 1.0, 0.3, -18, 1);
            }

            var peakMag = Math.Max(15, settings.SurveyLimitMag + Math.Log(1 - random.NextDouble()) / (0.6 * Math.Log(10)));
            var absMag = shape.PeakAbs + shape.PeakAbsSd * Gaussian(random);
            var distanceMpc = Math.Pow(10, (peakMag - absMag - 25) / 5);
            var z = Math.Clamp(HubbleKmSMpc * distanceMpc / SpeedOfLightKmS, 0.001, 2);
            var rise = Math.Max(3, shape.Rise + shape.RiseSd * Gaussian(random));
            var decline = Math.Max(0.01, (shape.Decline15 + shape.Decline15Sd * Gaussian(random)) / 15);
            var peak = start.AddDays(random.NextDouble() * span);
            var dec = Math.Asin(random.NextDouble() * (Math.Sin(55 * Math.PI / 180) + Math.Sin(75 * Math.PI / 180)) - Math.Sin(75 * Math.PI / 180)) * 180 / Math.PI;
            var position = new SkyTarget(random.NextDouble() * 360, dec);

            // Discovery: m(t) = m_lim on the rise, t = −t_rise √((m_lim − m_p)/1.5) rest days.
            var riseToLimit = rise * Math.Sqrt(Math.Max(0, settings.SurveyLimitMag - peakMag) / 1.5);
            var discovered = peak.AddDays(-riseToLimit * (1 + z) + random.NextDouble());
            var broker = new double[subtypes.Count];
            for (var k = 0; k < broker.Length; k++)
            {
                broker[k] = rates[k] * Math.Exp((k == s ? settings.BrokerQuality : 0) + settings.BrokerNoise * Gaussian(random));
            }

            var total = broker.Sum();
            for (var k = 0; k < broker.Length; k++)
            {
                broker[k] /= total;
            }

            list.Add(new Transient(i, $"sim-{seed}-{i:D5}", position, s, z, peak, peakMag, rise, decline, discovered, broker,
                settings.ForecastMagSigma * Gaussian(random), settings.ForecastPeakSigmaDays * Gaussian(random)));
        }

        return list;
    }

    internal static int Pick(Random random, IReadOnlyList<double> weights)
    {
        var u = random.NextDouble() * weights.Sum();
        for (var i = 0; i < weights.Count; i++)
        {
            u -= weights[i];
            if (u < 0)
            {
                return i;
            }
        }

        return weights.Count - 1;
    }

    internal static double Gaussian(Random random)
    {
        // Box–Muller.
        var u1 = 1 - random.NextDouble();
        var u2 = random.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }

    private static int Poisson(Random random, double mean)
    {
        // Normal approximation for large means, exact product method otherwise.
        if (mean > 50)
        {
            return Math.Max(0, (int)Math.Round(mean + Math.Sqrt(mean) * Gaussian(random)));
        }

        var limit = Math.Exp(-mean);
        var k = 0;
        var p = random.NextDouble();
        while (p > limit)
        {
            k++;
            p *= random.NextDouble();
        }

        return k;
    }
}

/// <summary>Seeds derived from a user's seed with a fixed hash (never <see cref="HashCode"/>, which is randomised per process).</summary>
public static class SeasonRandom
{
    /// <summary>FNV-1a of the seed and the parts' text.</summary>
    public static int Derive(int seed, params object[] parts)
    {
        ArgumentNullException.ThrowIfNull(parts);
        unchecked
        {
            var h = 2166136261u;
            foreach (var c in string.Join("/", parts.Prepend(seed).Select(p => Convert.ToString(p, System.Globalization.CultureInfo.InvariantCulture))))
            {
                h = (h ^ c) * 16777619u;
            }

            return (int)(h & 0x7fffffff);
        }
    }
}
