using Triage.Core.Calibration;

namespace Triage.Core.Tests.Planning;

/// <summary>Small invented calibration documents whose recall follows a known formula.</summary>
internal static class CalibrationFixtures
{
    public static readonly string[] Subtypes = ["Ia", "Ic", "II"];
    public static readonly double[] Resolutions = [10, 100, 1000];
    public static readonly double?[] SnrLevels = [5, 20, null];

    public static readonly PhaseBin[] Bins =
    [
        new("before", -30, -3),
        new("peak", -3, 7),
        new("after", 7, 60),
    ];

    /// <summary>Recall rising with log R, with S/N and different per subtype and phase bin (all in (0, 1)).</summary>
    public static double Recall(int subtype, double r, double? snr, int bin)
    {
        var n = snr ?? 100;
        return Math.Clamp(0.2 + 0.15 * Math.Log10(r) + 0.1 * Math.Log10(n) - 0.08 * subtype + 0.03 * bin, 0.01, 0.99);
    }

    public static AccuracyModelDocument Document(int spectraPerCell = 40, bool withConfusions = false)
    {
        var cells = new List<CalibrationCell>();
        var confusions = new List<ConfusionMatrix>();
        foreach (var r in Resolutions)
        {
            foreach (var snr in SnrLevels)
            {
                for (var b = 0; b < Bins.Length; b++)
                {
                    for (var s = 0; s < Subtypes.Length; s++)
                    {
                        var recall = Recall(s, r, snr, b);
                        cells.Add(new CalibrationCell(Subtypes[s], r, snr, Bins[b].Name, recall, recall - 0.1, recall + 0.1, recall, spectraPerCell, spectraPerCell / 4));
                    }

                    if (withConfusions)
                    {
                        // Errors all go to the next subtype (cyclic), so rows sum to the spectra count.
                        var counts = new List<IReadOnlyList<int>>();
                        for (var s = 0; s < Subtypes.Length; s++)
                        {
                            var hits = (int)Math.Round(Recall(s, r, snr, b) * 100);
                            var row = new int[Subtypes.Length];
                            row[s] = hits;
                            row[(s + 1) % Subtypes.Length] = 100 - hits;
                            counts.Add(row);
                        }

                        confusions.Add(new ConfusionMatrix(r, snr, Bins[b].Name, Subtypes, counts));
                    }
                }
            }
        }

        return new AccuracyModelDocument("per resolution element", 6000, Subtypes, Resolutions, SnrLevels, Bins, cells, confusions);
    }
}
