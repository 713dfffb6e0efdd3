using ScottPlot;
using Triage.Core.Season;

namespace Triage.Learning;

/// <summary>SVG plots of a simulated season (ScottPlot, DejaVu Sans).</summary>
public static class SeasonPlots
{
    private const string FontName = "DejaVu Sans";

    /// <summary>Correct final labels accumulated night by night, one line per strategy (closed labels on the night they are given).</summary>
    public static string IdentificationsSvg(SeasonResult season, int width = 900, int height = 560)
    {
        ArgumentNullException.ThrowIfNull(season);
        var plt = new Plot();
        plt.Font.Set(FontName);
        var palette = new ScottPlot.Palettes.Category10();
        var nights = Enumerable.Range(1, season.Nights).Select(n => (double)n).ToArray();
        for (var i = 0; i < season.Strategies.Count; i++)
        {
            var s = season.Strategies[i];
            var line = plt.Add.Scatter(nights, s.CumulativeCorrectByNight.Select(v => (double)v).ToArray(), palette.GetColor(i));
            line.LineWidth = 2;
            line.LegendText = s.Name;
        }

        plt.Title($"Correct final labels over the season (seed {season.Seed}, SIMULATED)");
        plt.XLabel("night (sequential strategies: candidates still unsettled are closed on the last night)");
        plt.YLabel("correct final labels (cumulative)");
        plt.ShowLegend(Alignment.UpperLeft);
        return plt.GetSvgXml(width, height);
    }

    /// <summary>High-R hours by how settled the object was (top subtype probability before the spectrum), grouped by strategy.</summary>
    public static string HighResolutionHoursSvg(SeasonResult season, int width = 900, int height = 560)
    {
        ArgumentNullException.ThrowIfNull(season);
        var plt = new Plot();
        plt.Font.Set(FontName);
        var palette = new ScottPlot.Palettes.Category10();
        var bands = season.Strategies.Count > 0 ? season.Strategies[0].HighResolutionHoursBySettledness : [];
        var groupWidth = season.Strategies.Count + 1;
        for (var i = 0; i < season.Strategies.Count; i++)
        {
            var s = season.Strategies[i];
            var bars = s.HighResolutionHoursBySettledness.Select((h, b) => new Bar
            {
                Position = b * groupWidth + i,
                Value = h.Hours,
                FillColor = palette.GetColor(i),
            }).ToArray();
            var plot = plt.Add.Bars(bars);
            plot.LegendText = s.Name;
        }

        var ticks = bands.Select((h, b) => new Tick(b * groupWidth + (season.Strategies.Count - 1) / 2.0,
            FormattableString.Invariant($"top p {h.From:0.0}–{h.To:0.0}"))).ToArray();
        plt.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual(ticks);
        plt.Title($"High-R hours by how settled the object was (seed {season.Seed}, SIMULATED)");
        plt.YLabel("hours on units with R ≥ threshold");
        plt.Axes.Margins(bottom: 0);
        plt.ShowLegend(Alignment.UpperLeft);
        return plt.GetSvgXml(width, height);
    }
}
