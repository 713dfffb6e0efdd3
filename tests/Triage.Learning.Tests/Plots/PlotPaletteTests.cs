using System.Globalization;
using System.Text.RegularExpressions;
using ScottPlot;
using Triage.Core.Calibration;
using Triage.Learning;

namespace Triage.Learning.Tests.Plots;

/// <summary>
/// The calibration plots wear Triage's own look: no colour of a widely used default categorical
/// cycle, 14 subtypes told apart by colour and marker, and a legend outside the data area.
/// </summary>
public partial class PlotPaletteTests
{
    /// <summary>
    /// matplotlib's tab10, its default property cycle and the same ten colours as D3's category10.
    /// Source: Debian 12 python3-matplotlib 3.6.3, printed by default_cycles.py beside this file.
    /// </summary>
    private static readonly string[] Tab10 =
        ["#1f77b4", "#ff7f0e", "#2ca02c", "#d62728", "#9467bd", "#8c564b", "#e377c2", "#7f7f7f", "#bcbd22", "#17becf"];

    /// <summary>matplotlib's tab20 (D3's category20). Source: as <see cref="Tab10"/>.</summary>
    private static readonly string[] Tab20 =
    [
        "#1f77b4", "#aec7e8", "#ff7f0e", "#ffbb78", "#2ca02c", "#98df8a", "#d62728", "#ff9896", "#9467bd", "#c5b0d5",
        "#8c564b", "#c49c94", "#e377c2", "#f7b6d2", "#7f7f7f", "#c7c7c7", "#bcbd22", "#dbdb8d", "#17becf", "#9edae5",
    ];

    /// <summary>The plotting library's own default cycles, read from the library at test time.</summary>
    private static IEnumerable<(string Name, string[] Colours)> LibraryCycles()
    {
        yield return ("ScottPlot default (Plot.Add.Palette)", Hex(new Plot().Add.Palette));
        yield return ("ScottPlot Category10", Hex(new ScottPlot.Palettes.Category10()));
        yield return ("ScottPlot Category20", Hex(new ScottPlot.Palettes.Category20()));
    }

    private static string[] Hex(IPalette palette) => palette.Colors.Select(c => c.ToHex()[..7].ToLowerInvariant()).ToArray();

    private static AccuracyModelDocument Demo() =>
        CalibrationJson.Deserialize(File.ReadAllText(Path.Combine(RepoRoot(), "demo", "calibration.json")));

    // The demo calibration's highest numeric S/N level (it carries numeric levels only).
    private static double TopSnr(AccuracyModelDocument doc) => doc.SnrLevels.Where(s => s is not null).Max()!.Value;

    [Theory]
    [InlineData("recall")]
    [InlineData("equal-exposure")]
    [InlineData("confusion")]
    public void Plots_UseNoColourOfAKnownDefaultCycle(string plot)
    {
        var doc = Demo();
        Assert.True(doc.Subtypes.Count >= 14);
        string svg = plot switch
        {
            "recall" => CalibrationPlots.RecallCurvesSvg(doc, 10),
            "equal-exposure" => CalibrationPlots.EqualExposureSvg(doc),
            _ => CalibrationPlots.ConfusionSvg(doc, doc.Resolutions[^1], TopSnr(doc)),
        };
        var used = ColourRegex().Matches(svg).Select(m => m.Value[..7].ToLowerInvariant()).ToHashSet();
        if (plot == "recall")
        {
            // Every series colour of the palette shows up in the figure.
            Assert.Subset(used, PlotStyle.SeriesHex.Select(h => h.ToLowerInvariant()).ToHashSet());
        }

        var cycles = LibraryCycles().Append((Name: "tab10/category10", Colours: Tab10)).Append((Name: "tab20/category20", Colours: Tab20)).ToList();
        Assert.All(cycles, cycle => Assert.True(cycle.Colours.Length >= 10, cycle.Name));
        foreach (var (name, colours) in cycles)
        {
            var shared = used.Intersect(colours).ToList();
            Assert.True(shared.Count == 0, $"the plot uses {string.Join(", ", shared)} of the {name} cycle");
        }
    }

    [Fact]
    public void SeriesLooks_FourteenSubtypes_NoTwoAlike()
    {
        var looks = Enumerable.Range(0, 14).Select(PlotStyle.Series).Select(s => (s.Colour.ToHex(), s.Marker)).ToList();
        Assert.Equal(14, looks.Distinct().Count());
    }

    [Theory]
    [InlineData("recall", 900, 600)]
    [InlineData("recall", 640, 420)]
    [InlineData("equal-exposure", 900, 600)]
    public void Plot_LegendLiesOutsideTheDataArea(string plot, int width, int height)
    {
        string svg = plot == "recall"
            ? CalibrationPlots.RecallCurvesSvg(Demo(), TopSnr(Demo()), width: width, height: height)
            : CalibrationPlots.EqualExposureSvg(Demo(), width, height);
        var data = Rects(svg, PlotStyle.DataHex).Single();
        // The legend box is the paper-coloured rectangle that is not the whole figure.
        var legend = Rects(svg, PlotStyle.PaperHex).Single(r => r.W < width);
        bool overlaps = legend.X < data.X + data.W && data.X < legend.X + legend.W && legend.Y < data.Y + data.H && data.Y < legend.Y + legend.H;
        Assert.False(overlaps, $"legend {legend} overlaps data area {data}");
    }

    private static List<(double X, double Y, double W, double H)> Rects(string svg, string fill) =>
        RectRegex().Matches(svg).Where(m => m.Groups["fill"].Value.Equals(fill, StringComparison.OrdinalIgnoreCase))
            .Select(m => (Num(m, "x"), Num(m, "y"), Num(m, "w"), Num(m, "h"))).ToList();

    private static double Num(Match m, string group) =>
        m.Groups[group].Success ? double.Parse(m.Groups[group].Value, CultureInfo.InvariantCulture) : 0;

    [GeneratedRegex("#[0-9A-Fa-f]{6}(?:[0-9A-Fa-f]{2})?(?![0-9A-Fa-f])")]
    private static partial Regex ColourRegex();

    [GeneratedRegex("""<rect fill="(?<fill>#[0-9A-Fa-f]{6})"(?: x="(?<x>[-0-9.]+)" y="(?<y>[-0-9.]+)")? width="(?<w>[0-9.]+)" height="(?<h>[0-9.]+)"/>""")]
    private static partial Regex RectRegex();

    private static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Triage.sln"))) dir = dir.Parent;
        return dir?.FullName ?? throw new DirectoryNotFoundException("Triage.sln not found above the test binaries.");
    }
}
