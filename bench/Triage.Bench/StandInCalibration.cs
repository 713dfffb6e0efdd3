// A stand-in accuracy model (invented numbers, for demos and benchmarks only), shaped like the
// science notes describe: recall(s, R, n, φ) = c + (top_s·f_φ − c) · g(R) · h(n, R) with
//   c = 1/K (chance), g(R) = 1 / (1 + (R_s/R)^1.5) (knee R_s per subtype: hydrogen and thermonuclear
//   features are broad, stripped-envelope helium/oxygen lines need more resolution),
//   h(n, R) = 1 − exp(−n·√(R/100)/6) at a fixed S/N per element (fewer elements, less information; 1 when noiseless).
// Confusions put 70% of the errors inside the broad class and spread the rest evenly.
using Triage.Core.Calibration;

namespace Triage.Bench;

/// <summary>Builds the stand-in calibration document.</summary>
public static class StandInCalibration
{
    private static readonly (string Label, string Broad, double Top, double Knee, int Spectra)[] Classes =
    [
        ("Ia", "thermonuclear", 0.95, 15, 240), ("Ia-91T-like", "thermonuclear", 0.60, 60, 30), ("Ia-91bg-like", "thermonuclear", 0.65, 60, 24),
        ("Iax", "thermonuclear", 0.55, 80, 12), ("Ia-CSM", "thermonuclear", 0.50, 150, 10),
        ("Ib", "stripped", 0.60, 200, 30), ("Ibn", "stripped", 0.55, 150, 10), ("Ic", "stripped", 0.60, 250, 30),
        ("Ic-BL", "stripped", 0.70, 60, 16), ("IIb", "stripped", 0.55, 300, 24),
        ("II", "hydrogen", 0.92, 20, 120), ("IIn", "hydrogen", 0.80, 120, 30),
        ("SLSN-I", "superluminous", 0.75, 40, 12), ("SLSN-II", "superluminous", 0.60, 60, 10),
    ];

    private static readonly double[] Resolutions = [5, 10, 25, 50, 100, 200, 500, 1000, 2000, 4000];
    private static readonly double?[] SnrLevels = [5, 10, 20, null];

    private static readonly (PhaseBin Bin, double Factor)[] Bins =
    [
        (new PhaseBin("before-peak", -30, -3), 0.90), (new PhaseBin("around-peak", -3, 7), 1.00),
        (new PhaseBin("early-decline", 7, 30), 0.95), (new PhaseBin("late", 30, 200), 0.80),
    ];

    /// <summary>Recall of class <paramref name="k"/> (index into the class list).</summary>
    public static double Recall(int k, double r, double? snr, double phaseFactor)
    {
        var c = 1.0 / Classes.Length;
        var g = 1 / (1 + Math.Pow(Classes[k].Knee / r, 1.5));
        var h = snr is { } n ? 1 - Math.Exp(-n * Math.Sqrt(r / 100) / 6) : 1;
        return c + (Classes[k].Top * phaseFactor - c) * g * h;
    }

    /// <summary>The document.</summary>
    public static AccuracyModelDocument Create()
    {
        var labels = Classes.Select(c => c.Label).ToArray();
        var cells = new List<CalibrationCell>();
        var confusions = new List<ConfusionMatrix>();
        foreach (var r in Resolutions)
        {
            foreach (var snr in SnrLevels)
            {
                foreach (var (bin, factor) in Bins)
                {
                    var counts = new List<IReadOnlyList<int>>();
                    for (var k = 0; k < Classes.Length; k++)
                    {
                        var n = Classes[k].Spectra / 2;
                        var recall = Recall(k, r, snr, factor);
                        var hits = (int)Math.Round(recall * n);
                        var (low, high) = Wilson(hits, n);
                        cells.Add(new CalibrationCell(labels[k], r, snr, bin.Name, (double)hits / n, low, high, recall, n, Math.Max(1, n / 6)));
                        counts.Add(Row(k, hits, n));
                    }

                    confusions.Add(new ConfusionMatrix(r, snr, bin.Name, labels, counts));
                }
            }
        }

        return new AccuracyModelDocument("S/N per resolution element at 6000 Å on the continuum (stand-in, invented)", 6000,
            labels, Resolutions, SnrLevels, Bins.Select(b => b.Bin).ToArray(), cells, confusions);
    }

    private static int[] Row(int k, int hits, int n)
    {
        var row = new int[Classes.Length];
        row[k] = hits;
        var errors = n - hits;
        var siblings = Enumerable.Range(0, Classes.Length).Where(j => j != k && Classes[j].Broad == Classes[k].Broad).ToArray();
        var others = Enumerable.Range(0, Classes.Length).Where(j => j != k).ToArray();
        var inside = siblings.Length > 0 ? (int)Math.Round(0.7 * errors) : 0;
        for (var e = 0; e < inside; e++)
        {
            row[siblings[e % siblings.Length]]++;
        }

        for (var e = 0; e < errors - inside; e++)
        {
            row[others[(e * 5 + k) % others.Length]]++;
        }

        return row;
    }

    // Wilson score interval, z = 1.959964 (Wilson 1927).
    private static (double Low, double High) Wilson(int k, int n)
    {
        const double z = 1.959963984540054;
        var p = (double)k / n;
        var centre = (p + z * z / (2 * n)) / (1 + z * z / n);
        var half = z / (1 + z * z / n) * Math.Sqrt(p * (1 - p) / n + z * z / (4.0 * n * n));
        return (Math.Max(0, centre - half), Math.Min(1, centre + half));
    }
}
