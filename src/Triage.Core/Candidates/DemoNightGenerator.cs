using Triage.Core.LightCurves;

namespace Triage.Core.Candidates;

/// <summary>Settings of the invented demo night. Defaults are documented per property.</summary>
public sealed record DemoNightOptions
{
    /// <summary>Seed of the generator. Default 20261203.</summary>
    public int Seed { get; init; } = 20261203;

    /// <summary>Number of candidates. Default 500.</summary>
    public int Count { get; init; } = 500;

    /// <summary>Start of the demo night (UTC): no photometry after it. Default 2026-12-03T00:00Z.</summary>
    public DateTimeOffset NightStartUtc { get; init; } = new(2026, 12, 3, 0, 0, 0, TimeSpan.Zero);

    /// <summary>Faintest predicted magnitude at night start. Default 22.</summary>
    public double FaintestMagAb { get; init; } = 22;

    /// <summary>Brightest predicted magnitude at night start. Default 16.</summary>
    public double BrightestMagAb { get; init; } = 16;
}

/// <summary>
/// Invents a night of broker candidates: random sky positions, subtypes drawn from the survey
/// base rates, Bazin-shaped light curves with typical rise/decline for the subtype, survey-like
/// cadence and depth, noisy photometry, sometimes broker probabilities, redshifts and a broker
/// peak estimate. Everything is invented and seeded: the same options give the same batch.
/// </summary>
/// <remarks>
/// Shape: τ_fall = 2.5/ln10 · 15 / Δm₁₅ (exponential tail), τ_rise from the half-flux rise time
/// t½ ≈ τ_rise · ln(τ_fall/τ_rise) solved by fixed point. Redshift from m_peak − M = μ(z)
/// (<see cref="LightCurveFeatures.DistanceModulus"/>). Depth 20.3–21.0 mag (5σ) per visit.
/// </remarks>
public static class DemoNightGenerator
{
    private static readonly string[] SurveyBands = ["g", "r"];

    /// <summary>Prefix of the invented candidate ids (<c>TG26-00001</c> ...).</summary>
    public const string IdPrefix = "TG26-";

    /// <summary>The only band letters the invented photometry uses (Sloan-like ugriz).</summary>
    public static IReadOnlyList<string> Bands { get; } = ["u", "g", "r", "i", "z"];

    /// <summary>Generates the batch.</summary>
    /// <param name="labels">Taxonomy labels to draw subtypes and probabilities over.</param>
    /// <param name="options">Options; defaults when null.</param>
    public static BrokerBatch Generate(IReadOnlyCollection<string> labels, DemoNightOptions? options = null)
    {
        options ??= new DemoNightOptions();
        var rng = new Random(options.Seed);
        var rates = SubtypePriors.BaseRates(labels);
        var list = new List<CandidateSubmission?>(options.Count);
        int serial = 0;
        while (list.Count < options.Count)
        {
            serial++;
            var candidate = TryOne(rng, rates, options, $"{IdPrefix}{serial:00000}");
            if (candidate is not null)
            {
                list.Add(candidate);
            }
        }
        return new BrokerBatch(list);
    }

    private static CandidateSubmission? TryOne(Random rng, IReadOnlyDictionary<string, double> rates, DemoNightOptions o, string id)
    {
        string label = Draw(rng, rates);
        if (!SubtypePriors.TryTypicalShape(label, out var shape))
        {
            shape = (12, 5, 0.8, 0.4, -18, 1);
        }
        double night = ModifiedJulianDate.FromUtc(o.NightStartUtc);
        double peakMag = 16.3 + 5.2 * rng.NextDouble();
        double absMag = shape.PeakAbs + shape.PeakAbsSd * Gaussian(rng);
        double z = RedshiftFor(peakMag - absMag);
        double stretch = 1 + z;
        double decline = Math.Max(0.08, shape.Decline15 + shape.Decline15Sd * Gaussian(rng));
        double rise = Math.Max(2, shape.Rise + shape.RiseSd * Gaussian(rng)) * stretch;
        double tauFall = AbMagnitude.Pogson * 15 / decline * stretch;
        double tauRise = rise / 2;
        for (int i = 0; i < 20; i++)
        {
            tauRise = Math.Clamp(rise / Math.Max(0.5, Math.Log(tauFall / tauRise)), 0.5, tauFall / 1.5);
        }
        double peakMjd = night - 35 + 47 * rng.NextDouble();

        var bands = new List<(string Band, double Offset, double FallScale)> { ("g", 0.1 * Gaussian(rng), 0.85), ("r", 0, 1.0) };
        if (rng.NextDouble() < 0.3)
        {
            bands.Add(("i", 0.15 + 0.1 * Gaussian(rng), 1.15));
        }
        bool outerBands = rng.NextDouble() < 0.25;
        if (outerBands)
        {
            // Invented colours: fainter in u and z than in r, a faster u decline, a slower z one.
            bands.Add(("u", 0.45, 0.75));
            bands.Add(("z", 0.25, 1.2));
        }
        var phiFor = bands.ToDictionary(b => b.Band, b => Phi(AbMagnitude.ToMicroJansky(peakMag + b.Offset), peakMjd, tauRise, tauFall * b.FallScale));

        double nowMag = AbMagnitude.FromMicroJansky(BazinModel.Flux(phiFor["r"], night));
        if (!(nowMag >= o.BrightestMagAb && nowMag <= o.FaintestMagAb))
        {
            return null;
        }

        bool fluxMode = rng.NextDouble() < 0.3;
        var points = new List<PhotometrySubmission>();
        double firstDetection = double.NaN;
        var pendingLimits = new List<PhotometrySubmission>();
        foreach (var (band, _, _) in bands)
        {
            bool survey = Array.IndexOf(SurveyBands, band) >= 0 || band == "i";
            double cadence = survey ? 2 + 2 * rng.NextDouble() : 2;
            for (double t = night - 70 + cadence * rng.NextDouble(); t < night - 0.2; t += cadence * (0.7 + 0.6 * rng.NextDouble()))
            {
                if (rng.NextDouble() < 0.2)
                {
                    continue;
                }
                double depth = 20.3 + 0.7 * rng.NextDouble();
                double fluxError = AbMagnitude.ToMicroJansky(depth) / 5;
                double trueFlux = BazinModel.Flux(phiFor[band], t);
                double observed = trueFlux + fluxError * Gaussian(rng);
                var time = ModifiedJulianDate.ToUtc(Math.Round(t, 5));
                bool detected = observed > 5 * fluxError;
                if (detected && (double.IsNaN(firstDetection) || t < firstDetection))
                {
                    firstDetection = t;
                }
                if (fluxMode)
                {
                    if (trueFlux > 0.2 * fluxError)
                    {
                        points.Add(new PhotometrySubmission { Mjd = Math.Round(t, 5), Band = band, FluxMicroJy = Math.Round(observed, 3), FluxMicroJyError = Math.Round(fluxError, 3) });
                    }
                }
                else if (detected)
                {
                    double mag = AbMagnitude.FromMicroJansky(observed);
                    points.Add(new PhotometrySubmission { TimeUtc = time, Band = band, MagAb = Math.Round(mag, 3), MagAbError = Math.Round(AbMagnitude.MagErrorFromFluxError(observed, fluxError), 3) });
                }
                else
                {
                    pendingLimits.Add(new PhotometrySubmission { TimeUtc = time, Band = band, MagAb = Math.Round(depth, 2), UpperLimit = true });
                }
            }
        }
        if (double.IsNaN(firstDetection))
        {
            return null;
        }
        // Keep only the deepest recent non-detections before discovery, as brokers usually send.
        points.AddRange(pendingLimits
            .Where(l => l.TimeUtc is { } lt && ModifiedJulianDate.FromUtc(lt) < firstDetection && ModifiedJulianDate.FromUtc(lt) > firstDetection - 12)
            .OrderByDescending(l => l.TimeUtc).Take(3));
        points.Sort((a, b) => Time(a).CompareTo(Time(b)));

        double dec = Math.Asin(-0.97 + 1.95 * rng.NextDouble()) * 180 / Math.PI;
        return new CandidateSubmission
        {
            Id = id,
            RaDeg = Math.Round(360 * rng.NextDouble(), 5) % 360,
            DecDeg = Math.Round(dec, 5),
            DiscoveredUtc = ModifiedJulianDate.ToUtc(Math.Round(firstDetection, 5)),
            Redshift = rng.NextDouble() < 0.5 ? Math.Round(Math.Max(0.001, z + 0.003 * Gaussian(rng)), 4) : null,
            RedshiftError = null,
            Photometry = points,
            SubtypeProbabilities = rng.NextDouble() < 0.4 ? BrokerGuess(rng, rates, label) : null,
            ScienceWeight = rng.NextDouble() < 0.2 ? new[] { 0.5, 2.0, 3.0 }[rng.Next(3)] : null,
            Notes = rng.NextDouble() < 0.05 ? "invented demo object" : null,
            BrokerState = rng.NextDouble() < 0.25
                ? new BrokerState
                {
                    PeakUtc = ModifiedJulianDate.ToUtc(Math.Round(peakMjd + 3 * Gaussian(rng), 3)),
                    PeakSigmaDays = 3,
                    PeakMagAb = Math.Round(peakMag + 0.2 * Gaussian(rng), 2),
                    PeakBand = "r",
                    Trend = peakMjd > night ? "rising" : "fading",
                }
                : null,
        } is var c && c.Redshift is not null ? c with { RedshiftError = rng.NextDouble() < 0.5 ? 0.0005 : 0.01 } : c;
    }

    private static double Time(PhotometrySubmission p) => p.Mjd ?? ModifiedJulianDate.FromUtc(p.TimeUtc!.Value);

    private static Dictionary<string, double> BrokerGuess(Random rng, IReadOnlyDictionary<string, double> rates, string truth)
    {
        var raw = rates.ToDictionary(kv => kv.Key, kv => kv.Value * Math.Exp(Gaussian(rng)) * (kv.Key == truth ? 2 + 18 * rng.NextDouble() : 1));
        double sum = raw.Values.Sum();
        // Rounded to three decimals like a broker's export: sums stray from 1 by a little and get normalised.
        return raw.Where(kv => kv.Value / sum >= 0.0005).ToDictionary(kv => kv.Key, kv => Math.Round(kv.Value / sum, 3));
    }

    private static double[] Phi(double peakFlux, double peakMjd, double tauRise, double tauFall)
    {
        double a = Math.Log(tauRise), b = Math.Log(tauFall - tauRise);
        double[] phi = [0, peakMjd - tauRise * (b - a), a, b];
        phi[0] = Math.Log(peakFlux / BazinModel.Flux(phi, peakMjd));
        return phi;
    }

    private static double RedshiftFor(double distanceModulus)
    {
        double lo = 1e-4, hi = 3;
        for (int i = 0; i < 60; i++)
        {
            double mid = (lo + hi) / 2;
            if (LightCurveFeatures.DistanceModulus(mid) < distanceModulus)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }
        return (lo + hi) / 2;
    }

    private static string Draw(Random rng, IReadOnlyDictionary<string, double> p)
    {
        double u = rng.NextDouble(), acc = 0;
        foreach (var (label, value) in p)
        {
            acc += value;
            if (u < acc)
            {
                return label;
            }
        }
        return p.Keys.Last();
    }

    private static double Gaussian(Random rng)
    {
        double u1 = 1 - rng.NextDouble(), u2 = rng.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
