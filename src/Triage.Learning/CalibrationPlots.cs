using System.Globalization;
using ScottPlot;
using Triage.Core.Calibration;

namespace Triage.Learning;

/// <summary>
/// SVG plots of a calibration: recall-versus-R curves and a confusion heatmap (ScottPlot, DejaVu Sans),
/// in Triage's own look (<see cref="PlotStyle"/>). Legends sit outside the data area.
/// </summary>
public static class CalibrationPlots
{
    private const string FontName = "DejaVu Sans";

    /// <summary>
    /// Recall against log R for each subtype (phases pooled) at one S/N level (null: native), with
    /// object-level 95 % intervals as error bars, a thin grey line for the uniform-guess chance level and a
    /// thick ink line for the overall accuracy.
    /// </summary>
    /// <param name="subtypes">Subtypes to draw; null for all.</param>
    public static string RecallCurvesSvg(AccuracyModelDocument doc, double? snr, IReadOnlyList<string>? subtypes = null, int width = 900, int height = 600)
    {
        var plt = new Plot();
        PlotStyle.Apply(plt, FontName);
        int series = 0;
        foreach (var s in subtypes ?? doc.Subtypes)
        {
            var curve = doc.Cells.Where(c => c.Subtype == s && c.Snr == snr && c.PhaseBin == CalibrationSettings.AllPhases)
                .OrderBy(c => c.Resolution).ToArray();
            if (curve.Length == 0) continue;
            double[] x = curve.Select(c => Math.Log10(c.Resolution)).ToArray();
            double[] y = curve.Select(c => c.Recall).ToArray();
            var (color, marker) = PlotStyle.Series(series++);
            var line = plt.Add.Scatter(x, y, color);
            line.LegendText = s;
            line.MarkerShape = marker;
            line.MarkerSize = 8;
            line.LineWidth = 1.8f;
            for (int i = 0; i < curve.Length; i++)
            {
                var bar = plt.Add.Line(x[i], curve[i].RecallLow, x[i], curve[i].RecallHigh);
                bar.Color = color.WithAlpha(0.45);
                bar.LineWidth = 1.5f;
            }
        }
        var summary = doc.Summaries.Where(v => v.Snr == snr).OrderBy(v => v.Resolution).ToArray();
        if (summary.Length > 0)
        {
            var acc = plt.Add.Scatter(summary.Select(v => Math.Log10(v.Resolution)).ToArray(), summary.Select(v => v.Accuracy).ToArray(), Color.FromHex(PlotStyle.InkHex));
            acc.LineWidth = 3.5f;
            acc.MarkerShape = MarkerShape.FilledSquare;
            acc.MarkerSize = 6;
            acc.LegendText = "all spectra";
        }
        if (doc.Baselines is { } b)
        {
            var chance = plt.Add.HorizontalLine(b.UniformGuess, 1.5f, Color.FromHex(PlotStyle.RuleHex));
            chance.LegendText = "chance (uniform guess)";
        }
        string snrText = snr is double v2 ? v2.ToString(CultureInfo.InvariantCulture) : "native";
        plt.Title($"Recall vs resolving power, S/N {snrText} per element{(doc.Synthetic ? " (SYNTHETIC library)" : "")}");
        plt.XLabel("R (log scale)");
        plt.YLabel("recall (object-level 95% interval)");
        var ticks = doc.Resolutions.Select(r => new Tick(Math.Log10(r), r.ToString("0.#", CultureInfo.InvariantCulture))).ToArray();
        plt.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual(ticks);
        plt.Axes.SetLimitsY(0, 1.05);
        // Outside the data area, so that the legend never covers a curve or an error bar.
        plt.ShowLegend(Edge.Right);
        return plt.GetSvgXml(width, height);
    }

    /// <summary>
    /// The equal-exposure view: accuracy (thick line, filled markers) and mean per-subtype recall (thin line, open
    /// markers of the same colour) against log R along curves of
    /// fixed photons per Å, one per reference S/N at the highest grid R (S/N per element ∝ √(R_ref/R)); points
    /// whose S/N lies outside the measured levels are left out.
    /// </summary>
    public static string EqualExposureSvg(AccuracyModelDocument doc, int width = 900, int height = 600)
    {
        var points = doc.EqualExposure.Count > 0 ? doc.EqualExposure : EqualExposureView.Build(doc.Summaries);
        var plt = new Plot();
        PlotStyle.Apply(plt, FontName);
        int colour = 0;
        foreach (var curve in points.GroupBy(p => p.ReferenceSnr).OrderBy(g => g.Key))
        {
            var measured = curve.Where(p => p.Accuracy is not null).OrderBy(p => p.Resolution).ToArray();
            if (measured.Length == 0) continue;
            var (color, marker) = PlotStyle.Series(colour++);
            double[] x = measured.Select(p => Math.Log10(p.Resolution)).ToArray();
            var acc = plt.Add.Scatter(x, measured.Select(p => p.Accuracy!.Value).ToArray(), color);
            acc.LineWidth = 2.5f;
            acc.MarkerShape = marker;
            acc.MarkerSize = 8;
            acc.LegendText = string.Create(CultureInfo.InvariantCulture,
                $"S/N {curve.Key:0.#} at R = {measured[0].ReferenceResolution:0.#} (S/N {measured[^1].Snr:0.#}…{measured[0].Snr:0.#})");
            var bal = plt.Add.Scatter(x, measured.Select(p => p.BalancedAccuracy!.Value).ToArray(), color);
            bal.LineWidth = 1.2f;
            bal.MarkerShape = MarkerShape.OpenCircle;
            bal.MarkerSize = 7;
        }
        if (doc.Baselines is { } b)
        {
            var chance = plt.Add.HorizontalLine(b.UniformGuess, 1.5f, Color.FromHex(PlotStyle.RuleHex));
            chance.LegendText = "chance (uniform guess)";
        }
        plt.Title($"Equal exposure: accuracy vs R at fixed photons per Å{(doc.Synthetic ? " (SYNTHETIC library)" : "")}");
        plt.XLabel("R (log scale); S/N per element = S/N_ref·√(R_ref/R)");
        plt.YLabel("accuracy (thick, filled), mean recall (thin, open)");
        var ticks = doc.Resolutions.Select(r => new Tick(Math.Log10(r), r.ToString("0.#", CultureInfo.InvariantCulture))).ToArray();
        plt.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual(ticks);
        if (doc.Resolutions.Count > 0)
        {
            // Fixed limits: a table without equal-exposure points still draws its (empty) frame.
            double lo = Math.Log10(doc.Resolutions.Min()), hi = Math.Log10(doc.Resolutions.Max());
            double pad = Math.Max(0.05, 0.04 * (hi - lo));
            plt.Axes.SetLimitsX(lo - pad, hi + pad);
        }
        plt.Axes.SetLimitsY(0, 1.05);
        // Outside the data area, so that the legend never covers a curve or an error bar.
        if (colour > 0) plt.ShowLegend(Edge.Right);
        else plt.ShowLegend(Alignment.UpperRight); // nothing to cover (and ScottPlot draws nothing with an edge legend of one line)
        return plt.GetSvgXml(width, height);
    }

    /// <summary>Row-normalised confusion heatmap (true subtype down, predicted across) at one (R, S/N), phases pooled.</summary>
    /// <exception cref="ArgumentException">No confusion matrix at that grid point.</exception>
    public static string ConfusionSvg(AccuracyModelDocument doc, double resolution, double? snr, int width = 900, int height = 800)
    {
        var m = doc.Confusions.FirstOrDefault(c => Math.Abs(c.Resolution - resolution) < 1e-9 && c.Snr == snr && c.PhaseBin == CalibrationSettings.AllPhases)
                ?? throw new ArgumentException($"No confusion matrix at R = {resolution}, S/N = {snr?.ToString(CultureInfo.InvariantCulture) ?? "native"}.");
        int k = m.Labels.Count;
        var z = new double[k, k];
        for (int i = 0; i < k; i++)
        {
            double row = m.Counts[i].Sum();
            // ScottPlot draws row 0 at the top, so true labels read downwards as in a table.
            for (int j = 0; j < k; j++) z[i, j] = row == 0 ? double.NaN : m.Counts[i][j] / row;
        }
        var plt = new Plot();
        PlotStyle.Apply(plt, FontName);
        var hm = plt.Add.Heatmap(z);
        hm.Colormap = PlotStyle.Sequential;
        // One rectangle per cell: sharp in any SVG viewer (an embedded bitmap gets smoothed when scaled).
        hm.RenderStrategy = new ScottPlot.Plottables.Heatmap.RenderStrategies.Rectangles();
        hm.ManualRange = new ScottPlot.Range(0, 1);
        plt.Add.ColorBar(hm);
        for (int i = 0; i < k; i++)
            for (int j = 0; j < k; j++)
                if (m.Counts[i][j] > 0)
                {
                    var t = plt.Add.Text(m.Counts[i][j].ToString(CultureInfo.InvariantCulture), j, k - 1 - i);
                    t.LabelFontSize = 10;
                    t.LabelFontName = FontName;
                    t.LabelFontColor = z[i, j] > 0.5 ? Color.FromHex(PlotStyle.InkHex) : Colors.White;
                    t.LabelAlignment = Alignment.MiddleCenter;
                }
        plt.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual(
            Enumerable.Range(0, k).Select(j => new Tick(j, m.Labels[j])).ToArray());
        plt.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericManual(
            Enumerable.Range(0, k).Select(i => new Tick(k - 1 - i, m.Labels[i])).ToArray());
        plt.Axes.Bottom.TickLabelStyle.Rotation = 45;
        plt.Axes.Bottom.TickLabelStyle.Alignment = Alignment.MiddleLeft;
        plt.Axes.Bottom.MinimumSize = 110; // room for the longest rotated label
        plt.Axes.Left.MinimumSize = 100;
        string snrText = snr is double v ? v.ToString(CultureInfo.InvariantCulture) : "native";
        plt.Title(string.Create(CultureInfo.InvariantCulture, $"Confusion at R = {resolution:0.#}, S/N {snrText} (counts; colour = row fraction)"));
        plt.XLabel("predicted subtype");
        plt.YLabel("true subtype");
        return plt.GetSvgXml(width, height);
    }
}
