using ScottPlot;

namespace Triage.Learning;

/// <summary>
/// Triage's own look for its plots: colours taken from the night view (web/src/style.css), darkened
/// to read on paper, a warm paper background, a frame open at the top and right, faint grid lines,
/// and per-series marker shapes and fills so that 14 subtypes stay apart even in grey print.
/// No dash patterns: the SVG backend draws every line solid (it drops path effects).
/// </summary>
public static class PlotStyle
{
    /// <summary>
    /// Series colours, each the night view's colour of the same name darkened for a light ground:
    /// teal (#8fd3c1), ochre (#e3a857), plum (#b79be0), rose (#e58a8a), twilight blue
    /// (rgba 120,150,200), ink (the view's #212826 ground) and muted sand (#b9b2a2).
    /// </summary>
    public static IReadOnlyList<string> SeriesHex { get; } =
        ["#2e7f6d", "#a8671a", "#6a4fa3", "#b04c55", "#3f6296", "#2b3330", "#857b63"];

    /// <summary>Filled marker shapes for the first round of colours, open ones for the second.</summary>
    private static readonly MarkerShape[] FilledMarkers =
    [
        MarkerShape.FilledCircle, MarkerShape.FilledSquare, MarkerShape.FilledTriangleUp, MarkerShape.FilledDiamond,
        MarkerShape.FilledTriangleDown, MarkerShape.FilledCircle, MarkerShape.FilledSquare,
    ];

    private static readonly MarkerShape[] OpenMarkers =
    [
        MarkerShape.OpenDiamond, MarkerShape.OpenTriangleDown, MarkerShape.OpenCircle, MarkerShape.OpenSquare,
        MarkerShape.OpenTriangleUp, MarkerShape.Eks, MarkerShape.Cross,
    ];

    /// <summary>Paper background of the figure.</summary>
    public const string PaperHex = "#f7f3ea";

    /// <summary>Background of the data area.</summary>
    public const string DataHex = "#fcfaf5";

    /// <summary>Text and frame colour (the night view's ground).</summary>
    public const string InkHex = "#232a28";

    /// <summary>Grid and reference-line colour.</summary>
    public const string RuleHex = "#b9b2a2";

    /// <summary>The look of series <paramref name="index"/> (0-based): colour and marker.</summary>
    /// <remarks>
    /// Colours repeat every 7 series; the first 7 carry filled markers, the next 7 open or line
    /// markers of another shape than the filled one of the same colour, so the first 14 series
    /// never share colour and marker. Beyond 14 the looks repeat.
    /// </remarks>
    public static (Color Colour, MarkerShape Marker) Series(int index)
    {
        int colour = index % SeriesHex.Count;
        var markers = index / SeriesHex.Count % 2 == 0 ? FilledMarkers : OpenMarkers;
        return (Color.FromHex(SeriesHex[colour]), markers[colour]);
    }

    /// <summary>Applies the frame, backgrounds, grid and font to <paramref name="plot"/>.</summary>
    public static void Apply(Plot plot, string fontName)
    {
        plot.Font.Set(fontName);
        var ink = Color.FromHex(InkHex);
        plot.FigureBackground.Color = Color.FromHex(PaperHex);
        plot.DataBackground.Color = Color.FromHex(DataHex);
        plot.Axes.Color(ink);
        plot.Axes.Top.FrameLineStyle.Width = 0;
        plot.Axes.Right.FrameLineStyle.Width = 0;
        plot.Axes.Bottom.FrameLineStyle.Width = 1.5f;
        plot.Axes.Left.FrameLineStyle.Width = 1.5f;
        plot.Grid.MajorLineColor = Color.FromHex(RuleHex).WithAlpha(0.4);
        plot.Legend.BackgroundColor = Color.FromHex(PaperHex);
        plot.Legend.OutlineColor = Color.FromHex(RuleHex);
        plot.Legend.FontColor = ink;
    }

    /// <summary>
    /// A sequential colormap built from the night view: its dark ground, deep teal, teal, ochre and a
    /// pale sand, with lightness rising monotonically so that the value reads in grey too.
    /// </summary>
    public static IColormap Sequential { get; } = new ScottPlot.Colormaps.CustomInterpolated(
    [
        Color.FromHex("#171c1b"), Color.FromHex("#1f4a42"), Color.FromHex("#2e7f6d"), Color.FromHex("#8fd3c1"),
        Color.FromHex("#e3c58a"), Color.FromHex("#fbf4e4"),
    ]);
}
