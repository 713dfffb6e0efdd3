using Triage.Core.Candidates;

namespace Triage.Core.LightCurves;

/// <summary>
/// What Triage knows about a candidate's light curve: per-band curves, the peak time and
/// the means to predict magnitude, phase and colour at any instant. This is what the planner calls.
/// </summary>
/// <remarks>
/// Phase is (t − t_peak)/(1 + z) in rest-frame days when the redshift is known, observer-frame days
/// otherwise. Magnitudes are AB. A band without its own curve is predicted from the neighbouring
/// bands by linear interpolation of magnitude in wavelength (flat beyond the observed range, with
/// <see cref="LightCurveOptions.WavelengthExtrapolationMagPer1000Angstrom"/> extra σ).
/// Uncertainties of different bands are combined as if independent.
/// </remarks>
public sealed class LightCurveState
{
    private readonly LightCurveOptions _options;

    internal LightCurveState(string candidateId, double? redshift, double? redshiftError, IReadOnlyList<BandCurve> curves,
        BandCurve? reference, BrokerState? brokerState, LightCurveOptions options)
    {
        CandidateId = candidateId;
        Redshift = redshift;
        RedshiftError = redshiftError;
        Curves = curves;
        Reference = reference;
        BrokerState = brokerState;
        _options = options;
    }

    /// <summary>Broker-scoped id of the candidate.</summary>
    public string CandidateId { get; }

    /// <summary>Host redshift, if known.</summary>
    public double? Redshift { get; }

    /// <summary>1σ error of the redshift, if given.</summary>
    public double? RedshiftError { get; }

    /// <summary>One curve per band with usable detections, by increasing wavelength.</summary>
    public IReadOnlyList<BandCurve> Curves { get; }

    /// <summary>The band curve that sets peak time and phase; null when no band could be modelled.</summary>
    public BandCurve? Reference { get; }

    /// <summary>The broker's own state, shown beside the computed one.</summary>
    public BrokerState? BrokerState { get; }

    /// <summary>True when at least one band could be modelled.</summary>
    public bool HasCurve => Reference is not null;

    /// <summary>Peak time (MJD, UTC) with 1σ in days; NaN/∞ when no curve.</summary>
    public Estimate PeakMjd => Reference?.PeakMjd ?? new(double.NaN, double.PositiveInfinity);

    /// <summary>Peak instant (UTC), or null when no curve.</summary>
    public DateTimeOffset? PeakUtc => Reference is null ? null : ModifiedJulianDate.ToUtc(Reference.PeakMjd.Value);

    /// <summary>True when phases are rest-frame days (redshift known).</summary>
    public bool PhaseIsRestFrame => Redshift is not null;

    /// <summary>Phase in days relative to peak at <paramref name="t"/>, with 1σ (rest frame when z is known).</summary>
    public Estimate PhaseDaysAt(DateTimeOffset t)
    {
        if (Reference is null)
        {
            return new(double.NaN, double.PositiveInfinity);
        }
        var peak = Reference.PeakMjd;
        double stretch = 1 + (Redshift ?? 0);
        double phase = (ModifiedJulianDate.FromUtc(t) - peak.Value) / stretch;
        double sigma = peak.Sigma / stretch;
        if (RedshiftError is { } zErr)
        {
            sigma = Math.Sqrt(sigma * sigma + Math.Pow(phase * zErr / stretch, 2));
        }
        return new(phase, sigma);
    }

    /// <summary>Rising, near peak or declining at <paramref name="t"/> (relative to the peak-time uncertainty); null when no curve.</summary>
    public Trend? TrendAt(DateTimeOffset t)
    {
        var phase = PhaseDaysAt(t);
        if (!double.IsFinite(phase.Value))
        {
            return null;
        }
        return phase.Value < -phase.Sigma ? Trend.Rising : phase.Value > phase.Sigma ? Trend.Declining : Trend.NearPeak;
    }

    /// <summary>Predicted AB magnitude with 1σ in a band at an instant.</summary>
    /// <param name="t">Instant (UTC).</param>
    /// <param name="band">Band name from <see cref="PhotometricBands"/>.</param>
    /// <exception cref="ArgumentException">Unknown band.</exception>
    public Estimate PredictMagnitude(DateTimeOffset t, string band)
    {
        var b = PhotometricBands.Get(band);
        var own = Curves.FirstOrDefault(c => c.Band.Name == b.Name);
        return own is not null ? own.MagnitudeAt(ModifiedJulianDate.FromUtc(t)) : PredictMagnitudeAtWavelength(t, b.EffectiveWavelengthAngstrom);
    }

    /// <summary>Predicted AB magnitude with 1σ at a wavelength (e.g. a spectrograph's reference wavelength).</summary>
    /// <param name="t">Instant (UTC).</param>
    /// <param name="wavelengthAngstrom">Wavelength, Å, &gt; 0.</param>
    /// <returns>(NaN, ∞) when no band could be modelled.</returns>
    public Estimate PredictMagnitudeAtWavelength(DateTimeOffset t, double wavelengthAngstrom)
    {
        if (!(wavelengthAngstrom > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(wavelengthAngstrom), "must be positive.");
        }
        double mjd = ModifiedJulianDate.FromUtc(t);
        var usable = Curves
            .Select(c => (Lambda: c.Band.EffectiveWavelengthAngstrom, Mag: c.MagnitudeAt(mjd)))
            .Where(x => double.IsFinite(x.Mag.Value))
            .ToArray();
        if (usable.Length == 0)
        {
            return new(double.NaN, double.PositiveInfinity);
        }
        var below = usable.Where(x => x.Lambda <= wavelengthAngstrom).OrderByDescending(x => x.Lambda).FirstOrDefault();
        var above = usable.Where(x => x.Lambda >= wavelengthAngstrom).OrderBy(x => x.Lambda).FirstOrDefault();
        bool hasBelow = below.Lambda > 0, hasAbove = above.Lambda > 0;
        if (hasBelow && hasAbove)
        {
            if (above.Lambda == below.Lambda)
            {
                return below.Mag;
            }
            double w = (wavelengthAngstrom - below.Lambda) / (above.Lambda - below.Lambda);
            double value = (1 - w) * below.Mag.Value + w * above.Mag.Value;
            double sigma = Math.Sqrt(Math.Pow((1 - w) * below.Mag.Sigma, 2) + Math.Pow(w * above.Mag.Sigma, 2));
            return new Estimate(value, sigma).WithExtraSigma(_options.ModelFloorMag);
        }
        var nearest = hasBelow ? below : above;
        double distance = Math.Abs(wavelengthAngstrom - nearest.Lambda) / 1000;
        return nearest.Mag.WithExtraSigma(_options.WavelengthExtrapolationMagPer1000Angstrom * distance);
    }

    /// <summary>Colour (bandA − bandB, AB mag) with 1σ at an instant.</summary>
    public Estimate ColourAt(DateTimeOffset t, string bandA, string bandB) => PredictMagnitude(t, bandA) - PredictMagnitude(t, bandB);

    /// <summary>Peak AB magnitude of the reference band with 1σ; (NaN, ∞) without a curve.</summary>
    public Estimate PeakMagnitude => Reference is null ? new(double.NaN, double.PositiveInfinity) : Reference.MagnitudeAt(Reference.PeakMjd.Value);

    /// <summary>A serialisable summary at an instant (for the API, the CLI and the store).</summary>
    public LightCurveSnapshot Snapshot(DateTimeOffset at) => LightCurveSnapshot.From(this, at);
}
