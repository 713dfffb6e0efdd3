using Triage.Core.Candidates;
using Triage.Core.LightCurves;

namespace Triage.Core.Tests.LightCurves;

/// <summary>Builds candidates whose photometry follows a known Bazin curve (test fixture).</summary>
internal static class CurveSimulator
{
    public const double PeakMjd = 61377.0; // 2026-12-03T00:00Z

    /// <summary>φ for a curve with the given peak flux (µJy), peak time, rise and fall times.</summary>
    public static double[] Phi(double peakFlux, double peakMjd, double tauRise, double tauFall)
    {
        double a = Math.Log(tauRise), b = Math.Log(tauFall - tauRise);
        double t0 = peakMjd - tauRise * (b - a);
        double[] phi = [0, t0, a, b];
        double unit = BazinModel.Flux(phi, peakMjd);
        phi[0] = Math.Log(peakFlux / unit);
        return phi;
    }

    public static Candidate Candidate(string id, IEnumerable<PhotometryPoint> points, double? redshift = null) =>
        new(id, 10, 20, ModifiedJulianDate.ToUtc(points.Min(p => p.Mjd)), redshift, redshift is null ? null : 0.001,
            points.OrderBy(p => p.Mjd).ToArray(), null, 1, null, null);

    public static PhotometryPoint Point(double mjd, string band, double flux, double error, bool upper = false) =>
        new(ModifiedJulianDate.ToUtc(mjd), mjd, PhotometricBands.Get(band), flux, error, upper);

    /// <summary>Samples a curve at the given offsets from peak with Gaussian noise of fixed σ.</summary>
    public static List<PhotometryPoint> Sample(double[] phi, string band, IEnumerable<double> offsets, double sigma, Random? rng)
    {
        var list = new List<PhotometryPoint>();
        double peak = BazinModel.PeakTime(phi);
        foreach (double dt in offsets)
        {
            double t = peak + dt;
            double f = BazinModel.Flux(phi, t);
            if (rng is not null)
            {
                f += sigma * Gaussian(rng);
            }
            list.Add(Point(t, band, f, sigma));
        }
        return list;
    }

    public static double Gaussian(Random rng)
    {
        double u1 = 1 - rng.NextDouble(), u2 = rng.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
