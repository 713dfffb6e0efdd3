using Triage.Core.Candidates;

namespace Triage.Core.LightCurves;

/// <summary>
/// Builds a <see cref="LightCurveState"/> from a validated candidate: a curve per band with
/// detections, by the best method the data allow.
/// </summary>
/// <remarks>
/// Per band: ≥ 5 detections → robust Bazin fit (<see cref="BazinFitter"/>); otherwise, when some
/// band has a Bazin fit, its shape scaled to this band (one flux ratio, weighted least squares);
/// otherwise 2–4 detections spanning ≥ 0.5 d → straight line in magnitude; otherwise a single
/// epoch with template rates. Upper limits are not fitted; a non-detection deeper than the first
/// detection within 20 days before it counts as evidence of a rise. The reference band (which
/// sets the peak time and phase) is the Bazin band with the sharpest peak, else the band with
/// the most detections (ties: nearest to 6,200 Å).
/// </remarks>
public static class LightCurveFitter
{
    /// <summary>Fits every band of a candidate.</summary>
    public static LightCurveState Fit(Candidate candidate, LightCurveOptions? options = null)
    {
        options ??= new LightCurveOptions();
        var detectionsByBand = candidate.Photometry
            .Where(p => !p.IsUpperLimit && p.FluxErrorMicroJy > 0)
            .GroupBy(p => p.Band.Name)
            .ToDictionary(g => g.Key, g => g.OrderBy(p => p.Mjd).ToArray());
        var limits = candidate.Photometry.Where(p => p.IsUpperLimit).ToArray();

        var curves = new Dictionary<string, BandCurve>();
        foreach (var (name, points) in detectionsByBand)
        {
            if (points.Length < options.MinPointsForBazin)
            {
                continue;
            }
            if (BazinFitter.TryFit(points.Select(p => p.Mjd).ToArray(), points.Select(p => p.FluxMicroJy).ToArray(),
                    points.Select(p => p.FluxErrorMicroJy).ToArray(), options.HuberThreshold, out var fit))
            {
                var curve = new BazinCurve(points[0].Band, fit, points[0].Mjd, points[^1].Mjd, options);
                var peak = curve.PeakMjd;
                if (peak.Sigma <= options.MaxBazinPeakSigmaDays && peak.Value > points[0].Mjd - 100 && peak.Value < points[^1].Mjd + 100
                    && !BrighterThanAllowed(curve, candidate.Redshift, options))
                {
                    curves[name] = curve;
                }
            }
        }
        var shapeSource = curves.Values.OfType<BazinCurve>().OrderBy(c => c.PeakMjd.Sigma).FirstOrDefault();

        foreach (var (name, points) in detectionsByBand)
        {
            if (curves.ContainsKey(name))
            {
                continue;
            }
            BandCurve? curve = shapeSource is not null ? TryScaledShape(points, shapeSource, options) : null;
            curve ??= TrySlope(points, candidate.Redshift, options);
            curve ??= TryTemplate(points, limits, options);
            if (curve is not null)
            {
                curves[name] = curve;
            }
        }

        var reference = shapeSource as BandCurve ?? curves.Values
            .OrderBy(c => c.Method)
            .ThenByDescending(c => c.Detections)
            .ThenBy(c => Math.Abs(c.Band.EffectiveWavelengthAngstrom - 6200))
            .FirstOrDefault();
        return new LightCurveState(candidate.Id, candidate.Redshift, candidate.RedshiftError,
            curves.Values.OrderBy(c => c.Band.EffectiveWavelengthAngstrom).ToArray(), reference, candidate.BrokerState, options);
    }

    /// <summary>
    /// A Bazin fit whose peak lies after the data (rising only) and is brighter than the brightest
    /// allowed peak at the known redshift is an unphysical extrapolation: the cruder, bounded methods
    /// take over.
    /// </summary>
    private static bool BrighterThanAllowed(BazinCurve curve, double? redshift, LightCurveOptions options) =>
        redshift is double z && z > 0.001 && curve.PeakMjd.Value > curve.LastMjd
        && curve.MagnitudeAt(curve.PeakMjd.Value).Value < LightCurveFeatures.DistanceModulus(z) + options.BrightestPeakAbsMag;

    private static ScaledShapeCurve? TryScaledShape(PhotometryPoint[] points, BazinCurve shape, LightCurveOptions options)
    {
        // Weighted least squares for f = k·g with g the shape band's model flux.
        double sgg = 0, sgy = 0;
        foreach (var p in points)
        {
            double g = shape.FluxAt(p.Mjd).Value;
            double w = 1 / (p.FluxErrorMicroJy * p.FluxErrorMicroJy);
            sgg += w * g * g;
            sgy += w * g * p.FluxMicroJy;
        }
        if (!(sgg > 0))
        {
            return null;
        }
        double k = sgy / sgg;
        double chi2 = points.Sum(p =>
        {
            double r = (p.FluxMicroJy - k * shape.FluxAt(p.Mjd).Value) / p.FluxErrorMicroJy;
            return r * r;
        });
        double scale = points.Length > 1 ? Math.Max(1, chi2 / (points.Length - 1)) : 1;
        double sigmaK = Math.Sqrt(scale / sgg);
        if (!(k > 2 * sigmaK))
        {
            return null;
        }
        var offset = new Estimate(-2.5 * Math.Log10(k), AbMagnitude.Pogson * sigmaK / k);
        return new ScaledShapeCurve(points[0].Band, shape, offset, points.Select(p => p.Mjd).ToArray(), options);
    }

    private static MagnitudeSlopeCurve? TrySlope(PhotometryPoint[] points, double? redshift, LightCurveOptions options)
    {
        var positive = points.Where(p => p.FluxMicroJy > 2 * p.FluxErrorMicroJy).ToArray();
        if (positive.Length < 2 || positive[^1].Mjd - positive[0].Mjd < 0.5)
        {
            return null;
        }
        return new MagnitudeSlopeCurve(positive[0].Band,
            positive.Select(p => p.Mjd).ToArray(),
            positive.Select(p => AbMagnitude.FromMicroJansky(p.FluxMicroJy)).ToArray(),
            positive.Select(p => Math.Max(0.01, AbMagnitude.MagErrorFromFluxError(p.FluxMicroJy, p.FluxErrorMicroJy))).ToArray(),
            redshift, options);
    }

    private static TemplateCurve? TryTemplate(PhotometryPoint[] points, PhotometryPoint[] limits, LightCurveOptions options)
    {
        var positive = points.Where(p => p.FluxMicroJy > 0).ToArray();
        if (positive.Length == 0)
        {
            return null;
        }
        double sw = 0, swf = 0, swt = 0;
        foreach (var p in positive)
        {
            double w = 1 / (p.FluxErrorMicroJy * p.FluxErrorMicroJy);
            sw += w;
            swf += w * p.FluxMicroJy;
            swt += w * p.Mjd;
        }
        double flux = swf / sw;
        if (!(flux > 0))
        {
            return null;
        }
        double mjd = swt / sw;
        double mag = AbMagnitude.FromMicroJansky(flux);
        double magSigma = Math.Min(2, AbMagnitude.MagErrorFromFluxError(flux, Math.Sqrt(1 / sw)));
        bool rising = limits.Any(l => l.Mjd < mjd - 0.5 && l.Mjd > mjd - 20 && AbMagnitude.FromMicroJansky(l.FluxMicroJy) > mag + 0.3);
        return new TemplateCurve(positive[0].Band, mjd, mag, magSigma, positive.Length, rising, options);
    }
}
