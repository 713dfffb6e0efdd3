using Triage.Core.Candidates;

namespace Triage.Core.LightCurves;

/// <summary>One band's light curve as fitted: predicts magnitude at any MJD.</summary>
public abstract class BandCurve
{
    private protected BandCurve(PhotometricBand band, int detections, double firstMjd, double lastMjd)
    {
        Band = band;
        Detections = detections;
        FirstMjd = firstMjd;
        LastMjd = lastMjd;
    }

    /// <summary>The band.</summary>
    public PhotometricBand Band { get; }

    /// <summary>Detections used.</summary>
    public int Detections { get; }

    /// <summary>MJD of the first detection used.</summary>
    public double FirstMjd { get; }

    /// <summary>MJD of the last detection used.</summary>
    public double LastMjd { get; }

    /// <summary>How the curve was obtained.</summary>
    public abstract CurveMethod Method { get; }

    /// <summary>Peak time (MJD) with 1σ.</summary>
    public abstract Estimate PeakMjd { get; }

    /// <summary>Predicted AB magnitude at an MJD with 1σ (NaN value when the model predicts no flux).</summary>
    public abstract Estimate MagnitudeAt(double mjd);

    /// <summary>Days between <paramref name="mjd"/> and the band's data span (0 inside it).</summary>
    protected double DaysOutside(double mjd) => Math.Max(0, Math.Max(FirstMjd - mjd, mjd - LastMjd));
}

/// <summary>A band with a <see cref="BazinFit"/>.</summary>
public sealed class BazinCurve : BandCurve
{
    private readonly LightCurveOptions _options;

    internal BazinCurve(PhotometricBand band, BazinFit fit, double firstMjd, double lastMjd, LightCurveOptions options)
        : base(band, fit.PointCount, firstMjd, lastMjd)
    {
        Fit = fit;
        _options = options;
        PeakMjd = fit.PeakMjd();
    }

    /// <summary>The fit.</summary>
    public BazinFit Fit { get; }

    /// <inheritdoc/>
    public override CurveMethod Method => CurveMethod.Bazin;

    /// <inheritdoc/>
    public override Estimate PeakMjd { get; }

    /// <summary>Model flux with 1σ, µJy.</summary>
    public Estimate FluxAt(double mjd) => Fit.FluxAt(mjd);

    /// <inheritdoc/>
    public override Estimate MagnitudeAt(double mjd)
    {
        var f = Fit.FluxAt(mjd);
        if (!(f.Value > 0))
        {
            return new(double.NaN, double.PositiveInfinity);
        }
        double sigma = AbMagnitude.MagErrorFromFluxError(f.Value, f.Sigma);
        double extra = _options.ExtrapolationMagPerDay * DaysOutside(mjd);
        return new Estimate(AbMagnitude.FromMicroJansky(f.Value), sigma)
            .WithExtraSigma(_options.ModelFloorMag)
            .WithExtraSigma(extra);
    }
}

/// <summary>A band with too few points of its own, scaled to another band's Bazin shape.</summary>
public sealed class ScaledShapeCurve : BandCurve
{
    private readonly BazinCurve _shape;
    private readonly Estimate _offsetMag;
    private readonly double[] _mjds;
    private readonly LightCurveOptions _options;

    internal ScaledShapeCurve(PhotometricBand band, BazinCurve shape, Estimate offsetMag, double[] mjds, LightCurveOptions options)
        : base(band, mjds.Length, mjds.Min(), mjds.Max())
    {
        _shape = shape;
        _offsetMag = offsetMag;
        _mjds = mjds;
        _options = options;
        // Redder bands peak a few days later than bluer ones: allow 3 d (common practice).
        PeakMjd = shape.PeakMjd.WithExtraSigma(3.0);
    }

    /// <summary>Band whose shape is borrowed.</summary>
    public PhotometricBand ShapeBand => _shape.Band;

    /// <summary>This band minus the shape band, mag, with 1σ.</summary>
    public Estimate OffsetMag => _offsetMag;

    /// <inheritdoc/>
    public override CurveMethod Method => CurveMethod.ScaledShape;

    /// <inheritdoc/>
    public override Estimate PeakMjd { get; }

    /// <inheritdoc/>
    public override Estimate MagnitudeAt(double mjd)
    {
        var m = _shape.MagnitudeAt(mjd);
        double nearest = _mjds.Min(t => Math.Abs(t - mjd));
        double colour = _options.ScaledShapeColourMag + _options.ExtrapolationMagPerDay * nearest;
        return new Estimate(m.Value + _offsetMag.Value, m.Sigma).WithExtraSigma(_offsetMag.Sigma).WithExtraSigma(colour);
    }
}

/// <summary>Straight line in magnitude through 2–4 detections, template rates beyond.</summary>
public sealed class MagnitudeSlopeCurve : BandCurve
{
    private readonly double _meanMjd, _magAtMean, _slope, _varMag, _varSlope;
    private readonly LightCurveOptions _options;
    private readonly Estimate _risingPeak;

    internal MagnitudeSlopeCurve(PhotometricBand band, double[] mjd, double[] mag, double[] magErr, double? redshift, LightCurveOptions options)
        : base(band, mjd.Length, mjd.Min(), mjd.Max())
    {
        _options = options;
        double sw = 0, swt = 0;
        for (int i = 0; i < mjd.Length; i++)
        {
            double w = 1 / (magErr[i] * magErr[i]);
            sw += w;
            swt += w * mjd[i];
        }
        _meanMjd = swt / sw;
        double sm = 0, stt = 0, stm = 0;
        for (int i = 0; i < mjd.Length; i++)
        {
            double w = 1 / (magErr[i] * magErr[i]);
            double dt = mjd[i] - _meanMjd;
            sm += w * mag[i];
            stt += w * dt * dt;
            stm += w * dt * mag[i];
        }
        _magAtMean = sm / sw;
        _slope = stm / stt;
        double chi2 = 0;
        for (int i = 0; i < mjd.Length; i++)
        {
            double r = (mag[i] - _magAtMean - _slope * (mjd[i] - _meanMjd)) / magErr[i];
            chi2 += r * r;
        }
        double scale = mjd.Length > 2 ? Math.Max(1, chi2 / (mjd.Length - 2)) : 1;
        _varMag = scale / sw;
        _varSlope = scale / stt;
        double slopeSigma = Math.Sqrt(_varSlope);

        if (_slope < -2 * slopeSigma)
        {
            Trend = Trend.Rising;
            // A young object rising now: peak ~16 d after first detection, not before the last point.
            PeakMjd = new(Math.Max(LastMjd, FirstMjd + 16), 7);
            _risingPeak = RisingPeak(redshift, options);
        }
        else if (_slope > 2 * slopeSigma)
        {
            Trend = Trend.Declining;
            PeakMjd = new(FirstMjd - 7, 8);
        }
        else
        {
            Trend = Trend.NearPeak;
            PeakMjd = new(_meanMjd, 10);
        }
    }

    /// <summary>Trend shown by the points themselves.</summary>
    public Trend Trend { get; }

    /// <summary>
    /// Peak magnitude of a rising curve with 1σ, bounded by the rise prior (see
    /// <see cref="MagnitudeSlopeCurve"/>); NaN for other trends.
    /// </summary>
    public Estimate RisingPeakMagnitude => Trend == Trend.Rising ? _risingPeak : new(double.NaN, double.PositiveInfinity);

    private Estimate LineAt(double mjd)
    {
        double dt = mjd - _meanMjd;
        return new(_magAtMean + _slope * dt, Math.Sqrt(_varMag + dt * dt * _varSlope));
    }

    // The brightening slows to zero at the peak (a parabola in magnitude tangent to the fitted line at
    // the last point), so the gain after the last point is half the straight line's, ±50 % for the
    // shape; with a redshift, combined with the absolute-magnitude prior (inverse-variance weights)
    // and never brighter than the brightest allowed peak. Never fainter than the last point.
    private Estimate RisingPeak(double? redshift, LightCurveOptions options)
    {
        var last = LineAt(LastMjd);
        double dt = PeakMjd.Value - LastMjd;
        double gain = -_slope * dt / 2;
        double gainSigma = Math.Sqrt(Math.Pow(0.5 * gain, 2) + _varSlope * dt * dt / 4);
        var peak = new Estimate(last.Value - gain, Math.Sqrt(last.Sigma * last.Sigma + gainSigma * gainSigma));
        if (redshift is double z && z > 0.001)
        {
            double mu = LightCurveFeatures.DistanceModulus(z);
            var prior = new Estimate(mu + options.RisingPeakAbsMag.Value, options.RisingPeakAbsMag.Sigma);
            double wData = 1 / (peak.Sigma * peak.Sigma), wPrior = 1 / (prior.Sigma * prior.Sigma);
            peak = new Estimate((wData * peak.Value + wPrior * prior.Value) / (wData + wPrior), Math.Sqrt(1 / (wData + wPrior)));
            peak = peak with { Value = Math.Max(peak.Value, mu + options.BrightestPeakAbsMag) };
        }
        return peak with { Value = Math.Min(peak.Value, last.Value) };
    }

    /// <summary>Fitted slope with 1σ, mag/day (negative: brightening).</summary>
    public Estimate SlopeMagPerDay => new(_slope, Math.Sqrt(_varSlope));

    /// <inheritdoc/>
    public override CurveMethod Method => CurveMethod.MagnitudeSlope;

    /// <inheritdoc/>
    public override Estimate PeakMjd { get; }

    /// <inheritdoc/>
    public override Estimate MagnitudeAt(double mjd)
    {
        double peak = PeakMjd.Value;
        double m;
        double lineAt;
        switch (Trend)
        {
            case Trend.Rising when mjd > LastMjd:
                {
                    var last = LineAt(LastMjd);
                    double span = PeakMjd.Value - LastMjd;
                    double u = span > 0 ? Math.Min(1, (mjd - LastMjd) / span) : 1;
                    double f = 1 - (1 - u) * (1 - u);
                    double gainSigma = Math.Sqrt(Math.Max(0, _risingPeak.Sigma * _risingPeak.Sigma - last.Sigma * last.Sigma));
                    double after = Math.Max(0, mjd - peak);
                    return new Estimate(last.Value + (_risingPeak.Value - last.Value) * f + _options.TemplateDeclineMagPerDay * after,
                            Math.Sqrt(last.Sigma * last.Sigma + f * f * gainSigma * gainSigma))
                        .WithExtraSigma(0.05)
                        .WithExtraSigma(3 * _options.ExtrapolationMagPerDay * after);
                }
            case Trend.Rising:
                lineAt = mjd;
                m = _magAtMean + _slope * (lineAt - _meanMjd);
                break;
            case Trend.Declining:
                lineAt = mjd;
                m = _magAtMean + _slope * (mjd - _meanMjd);
                break;
            default:
                lineAt = Math.Clamp(mjd, FirstMjd, LastMjd);
                m = _magAtMean + _slope * (lineAt - _meanMjd)
                    + _options.TemplateDeclineMagPerDay * Math.Max(0, mjd - LastMjd)
                    + _options.TemplateRiseMagPerDay * Math.Max(0, FirstMjd - mjd);
                break;
        }
        double dt = lineAt - _meanMjd;
        double sigma = Math.Sqrt(_varMag + dt * dt * _varSlope);
        return new Estimate(m, sigma)
            .WithExtraSigma(0.05)
            .WithExtraSigma(3 * _options.ExtrapolationMagPerDay * DaysOutside(mjd));
    }
}

/// <summary>One epoch only: typical rates around it.</summary>
public sealed class TemplateCurve : BandCurve
{
    private readonly double _anchorMjd, _anchorMag, _anchorSigma;
    private readonly bool _risingEvidence;
    private readonly LightCurveOptions _options;

    internal TemplateCurve(PhotometricBand band, double anchorMjd, double anchorMag, double anchorSigma, int detections, bool risingEvidence, LightCurveOptions options)
        : base(band, detections, anchorMjd, anchorMjd)
    {
        _anchorMjd = anchorMjd;
        _anchorMag = anchorMag;
        _anchorSigma = anchorSigma;
        _risingEvidence = risingEvidence;
        _options = options;
        // With a recent deeper non-detection the object is young: peak ~8 d later. Otherwise
        // the epoch could be anywhere on the curve.
        PeakMjd = risingEvidence ? new(anchorMjd + 8, 6) : new(anchorMjd, 12);
    }

    /// <summary>True when an earlier, deeper non-detection shows the object was fainter before.</summary>
    public bool RisingEvidence => _risingEvidence;

    /// <inheritdoc/>
    public override CurveMethod Method => CurveMethod.Template;

    /// <inheritdoc/>
    public override Estimate PeakMjd { get; }

    /// <inheritdoc/>
    public override Estimate MagnitudeAt(double mjd)
    {
        double rise = _options.TemplateRiseMagPerDay, fall = _options.TemplateDeclineMagPerDay;
        double m;
        if (_risingEvidence)
        {
            double peak = PeakMjd.Value;
            m = mjd <= _anchorMjd
                ? _anchorMag + rise * (_anchorMjd - mjd)
                : _anchorMag - rise * (Math.Min(mjd, peak) - _anchorMjd) + fall * Math.Max(0, mjd - peak);
        }
        else
        {
            m = _anchorMag + fall * Math.Max(0, mjd - _anchorMjd) + rise * Math.Max(0, _anchorMjd - mjd);
        }
        double dt = Math.Abs(mjd - _anchorMjd);
        return new Estimate(m, _anchorSigma).WithExtraSigma(0.3).WithExtraSigma(4 * _options.ExtrapolationMagPerDay * dt);
    }
}
