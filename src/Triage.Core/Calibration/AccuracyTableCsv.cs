using System.Globalization;

namespace Triage.Core.Calibration;

/// <summary>A problem in an imported accuracy table, with its 1-based line.</summary>
public sealed record TableError(int Line, string Column, string Message);

/// <summary>
/// Reads a ready-made accuracy table (computed elsewhere) into an accuracy-model document.
/// The CSV has a header and these columns, in any order:
/// <c>subtype, resolution, snr, phase_bin, recall, recall_low, recall_high</c>, and optionally
/// <c>precision, spectra, objects</c>. <c>snr</c> is S/N per resolution element, or <c>native</c>
/// for the library's own S/N; <c>phase_bin</c> is one of the default bins or <c>all</c>.
/// Lines starting with <c>#</c> are comments. Every error is reported with its line; a table with
/// any error yields no document.
/// </summary>
public static class AccuracyTableCsv
{
    private static readonly string[] Required = ["subtype", "resolution", "snr", "phase_bin", "recall", "recall_low", "recall_high"];

    /// <summary>
    /// Writes the cells in this table's format plus <c>achieved_snr</c> (realised S/N per element, empty when infinite or
    /// unknown), <c>reachable</c> and <c>reachable_snr</c>; <see cref="Parse"/> reads it back (cells marked unreachable are kept
    /// with their flag).
    /// </summary>
    public static string Write(IEnumerable<CalibrationCell> cells)
    {
        var inv = CultureInfo.InvariantCulture;
        var sb = new System.Text.StringBuilder("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high,precision,spectra,objects,achieved_snr,reachable,reachable_snr\n");
        foreach (var c in cells)
            sb.Append(string.Create(inv, $"{c.Subtype},{c.Resolution:R},{(c.Snr is double v ? v.ToString("R", inv) : "native")},{c.PhaseBin},{c.Recall:R},{c.RecallLow:R},{c.RecallHigh:R},{c.Precision:R},{c.Spectra},{c.Objects},{c.AchievedSnr?.ToString("R", inv)},{(c.Reachable ? "true" : "false")},{c.ReachableSnr?.ToString("R", inv)}\n"));
        return sb.ToString();
    }

    public static (AccuracyModelDocument? Document, IReadOnlyList<TableError> Errors) Parse(
        TextReader reader, IReadOnlyCollection<string> knownSubtypes, double snrReferenceWavelengthAngstrom = 6000)
    {
        var errors = new List<TableError>();
        var cells = new List<CalibrationCell>();
        var inv = CultureInfo.InvariantCulture;
        var bins = CalibrationSettings.DefaultPhaseBins.Select(b => b.Name).Append(CalibrationSettings.AllPhases).ToHashSet(StringComparer.Ordinal);
        string? line;
        var lineNo = 0;
        Dictionary<string, int>? columns = null;
        var seen = new HashSet<(string, double, double?, string)>();
        while ((line = reader.ReadLine()) is not null)
        {
            lineNo++;
            if (string.IsNullOrWhiteSpace(line) || line.TrimStart().StartsWith('#'))
            {
                continue;
            }
            var parts = line.Split(',').Select(p => p.Trim().Trim('"')).ToArray();
            if (columns is null)
            {
                columns = parts.Select((name, i) => (name.ToLowerInvariant(), i)).ToDictionary(p => p.Item1, p => p.i, StringComparer.Ordinal);
                foreach (var r in Required.Where(r => !columns.ContainsKey(r)))
                {
                    errors.Add(new TableError(lineNo, r, "missing column"));
                }
                if (errors.Count > 0)
                {
                    return (null, errors);
                }
                continue;
            }
            string Get(string name) => columns.TryGetValue(name, out var i) && i < parts.Length ? parts[i] : "";
            double? Number(string name, double min, double max, bool optional = false)
            {
                var text = Get(name);
                if (text.Length == 0 && optional)
                {
                    return null;
                }
                if (!double.TryParse(text, NumberStyles.Float, inv, out var v) || !double.IsFinite(v) || v < min || v > max)
                {
                    errors.Add(new TableError(lineNo, name, $"must be a number in [{min}, {max}]; got '{text}'"));
                    return null;
                }
                return v;
            }
            var subtype = Get("subtype");
            if (!knownSubtypes.Contains(subtype))
            {
                errors.Add(new TableError(lineNo, "subtype", $"'{subtype}' is not a label of the taxonomy"));
            }
            var resolution = Number("resolution", 1, 1_000_000);
            double? snr = null;
            var snrText = Get("snr");
            if (!snrText.Equals("native", StringComparison.OrdinalIgnoreCase))
            {
                snr = Number("snr", 0.1, 100_000);
            }
            var bin = Get("phase_bin");
            if (!bins.Contains(bin))
            {
                errors.Add(new TableError(lineNo, "phase_bin", $"must be one of {string.Join(", ", bins)}; got '{bin}'"));
            }
            var recall = Number("recall", 0, 1);
            var low = Number("recall_low", 0, 1);
            var high = Number("recall_high", 0, 1);
            if (recall is { } rc && low is { } lo && high is { } hi && !(lo <= rc && rc <= hi))
            {
                errors.Add(new TableError(lineNo, "recall", "must lie between recall_low and recall_high"));
            }
            var precision = Number("precision", 0, 1, optional: true);
            var spectra = Number("spectra", 0, int.MaxValue, optional: true);
            var objects = Number("objects", 0, int.MaxValue, optional: true);
            var achieved = Number("achieved_snr", 0, 1e9, optional: true);
            var reachableSnr = Number("reachable_snr", 0, 1e9, optional: true);
            bool reachable = !Get("reachable").Equals("false", StringComparison.OrdinalIgnoreCase);
            if (resolution is { } res && !seen.Add((subtype, res, snr, bin)))
            {
                errors.Add(new TableError(lineNo, "subtype", "duplicate (subtype, resolution, snr, phase_bin)"));
            }
            if (errors.Count == 0)
            {
                cells.Add(new CalibrationCell(subtype, resolution!.Value, snr, bin, recall!.Value, low!.Value, high!.Value,
                    precision ?? double.NaN, (int)(spectra ?? 0), (int)(objects ?? 0))
                    { AchievedSnr = achieved, Reachable = reachable, ReachableSnr = reachableSnr });
            }
        }
        if (columns is null)
        {
            errors.Add(new TableError(lineNo, "header", "the table is empty"));
        }
        else if (errors.Count == 0 && cells.Count == 0)
        {
            errors.Add(new TableError(lineNo, "header", "the table has no rows"));
        }
        if (errors.Count > 0)
        {
            return (null, errors);
        }
        var document = new AccuracyModelDocument(
            "S/N per resolution element (Δλ = λ/R) on the continuum at the reference wavelength, as stated by the importer",
            snrReferenceWavelengthAngstrom,
            cells.Select(c => c.Subtype).Distinct().ToList(),
            cells.Select(c => c.Resolution).Distinct().Order().ToList(),
            cells.Select(c => c.Snr).Distinct().OrderBy(s => s ?? double.MaxValue).ToList(),
            CalibrationSettings.DefaultPhaseBins,
            cells.Select(c => double.IsNaN(c.Precision) ? c with { Precision = 0 } : c).ToList(),
            []);
        return (document, errors);
    }
}
