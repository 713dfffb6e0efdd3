using Triage.Core.Candidates;

namespace Triage.Core.LightCurves;

/// <summary>A light-curve state evaluated at one instant: the JSON the CLI prints and the API returns.</summary>
/// <remarks>Every number that cannot be computed is null (never NaN). Times are UTC; phases in days.</remarks>
public sealed record LightCurveSnapshot(
    DateTimeOffset AsOfUtc,
    string? Method,
    string? ReferenceBand,
    DateTimeOffset? PeakUtc,
    double? PeakSigmaDays,
    double? PeakMagAb,
    double? PeakMagAbSigma,
    double? PhaseDays,
    double? PhaseSigmaDays,
    bool PhaseIsRestFrame,
    Trend? Trend,
    IReadOnlyList<BandSnapshot> Bands,
    IReadOnlyList<ColourSnapshot> Colours,
    FeatureSnapshot? Features,
    BrokerState? BrokerState)
{
    internal static LightCurveSnapshot From(LightCurveState state, DateTimeOffset at)
    {
        double mjd = ModifiedJulianDate.FromUtc(at);
        var bands = state.Curves.Select(c =>
        {
            var m = c.MagnitudeAt(mjd);
            return new BandSnapshot(c.Band.Name, c.Band.EffectiveWavelengthAngstrom, Name(c.Method), c.Detections,
                ModifiedJulianDate.ToUtc(c.PeakMjd.Value), Finite(c.PeakMjd.Sigma), Finite(m.Value), Finite(m.Sigma),
                c is ScaledShapeCurve s ? s.ShapeBand.Name : null);
        }).ToArray();
        var colours = new List<ColourSnapshot>();
        for (int i = 0; i + 1 < state.Curves.Count; i++)
        {
            var a = state.Curves[i].MagnitudeAt(mjd);
            var b = state.Curves[i + 1].MagnitudeAt(mjd);
            var d = a - b;
            if (double.IsFinite(d.Value))
            {
                colours.Add(new ColourSnapshot(state.Curves[i].Band.Name, state.Curves[i + 1].Band.Name, Math.Round(d.Value, 5), Finite(d.Sigma)));
            }
        }
        var phase = state.PhaseDaysAt(at);
        var peakMag = state.PeakMagnitude;
        var features = LightCurveFeatures.From(state);
        return new LightCurveSnapshot(
            at,
            state.Reference is null ? null : Name(state.Reference.Method),
            state.Reference?.Band.Name,
            state.PeakUtc,
            state.Reference is null ? null : Finite(state.PeakMjd.Sigma),
            Finite(peakMag.Value),
            Finite(peakMag.Sigma),
            Finite(phase.Value),
            Finite(phase.Sigma),
            state.PhaseIsRestFrame,
            state.TrendAt(at),
            bands,
            colours,
            features is null ? null : new FeatureSnapshot(features.Band, Math.Round(features.RiseTimeDays.Value, 5), Finite(features.RiseTimeDays.Sigma),
                Math.Round(features.DeclineMag15Days.Value, 5), Finite(features.DeclineMag15Days.Sigma),
                Finite(features.PeakAbsoluteMag?.Value ?? double.NaN), features.PeakAbsoluteMag is { } abs ? Finite(abs.Sigma) : null),
            state.BrokerState);
    }

    /// <summary>Wire name of a curve method.</summary>
    public static string Name(CurveMethod method) => method switch
    {
        CurveMethod.Bazin => "bazin",
        CurveMethod.ScaledShape => "scaled-shape",
        CurveMethod.MagnitudeSlope => "magnitude-slope",
        _ => "template",
    };

    private static double? Finite(double v) => double.IsFinite(v) ? Math.Round(v, 5) : null;
}

/// <summary>One band at the snapshot instant.</summary>
public sealed record BandSnapshot(
    string Band,
    double EffectiveWavelengthAngstrom,
    string Method,
    int Detections,
    DateTimeOffset PeakUtc,
    double? PeakSigmaDays,
    double? PredictedMagAb,
    double? PredictedMagAbSigma,
    string? ShapeBand);

/// <summary>Colour between two adjacent bands (blue − red) at the snapshot instant.</summary>
public sealed record ColourSnapshot(string BlueBand, string RedBand, double ColourMag, double? ColourSigma);

/// <summary>Shape features (see <see cref="LightCurveFeatures"/>).</summary>
public sealed record FeatureSnapshot(
    string Band,
    double RiseTimeDays,
    double? RiseTimeSigmaDays,
    double DeclineMag15Days,
    double? DeclineMag15DaysSigma,
    double? PeakAbsoluteMag,
    double? PeakAbsoluteMagSigma);
