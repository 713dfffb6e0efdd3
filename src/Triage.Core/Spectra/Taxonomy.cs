using System.Globalization;

namespace Triage.Core.Spectra;

/// <summary>A broad class and the subtype labels it groups.</summary>
public sealed record BroadClass(string Name, IReadOnlyList<string> Subtypes);

/// <summary>
/// The subtype labels a library may use, grouped into broad classes. Labels are
/// case-sensitive trade spellings (Ia, Ic-BL, IIn, ...).
/// </summary>
/// <remarks>
/// Text form (one broad class per line, <c>#</c> starts a comment):
/// <code>thermonuclear: Ia, Ia-91T-like, Ia-91bg-like, Iax, Ia-CSM</code>
/// The default is shipped as <c>config/taxonomy.txt</c>.
/// </remarks>
public sealed class Taxonomy
{
    private readonly Dictionary<string, string> _broadOf;

    /// <summary>Broad classes in file order.</summary>
    public IReadOnlyList<BroadClass> Classes { get; }

    /// <summary>Every subtype label in file order.</summary>
    public IReadOnlyList<string> Subtypes { get; }

    private Taxonomy(IReadOnlyList<BroadClass> classes)
    {
        Classes = classes;
        Subtypes = classes.SelectMany(c => c.Subtypes).ToArray();
        _broadOf = classes.SelectMany(c => c.Subtypes.Select(s => (s, c.Name)))
            .ToDictionary(p => p.s, p => p.Name, StringComparer.Ordinal);
    }

    /// <summary>The default grouping of the trade's subtype labels.</summary>
    public static Taxonomy Default { get; } = Parse(DefaultText);

    /// <summary>The text of the default taxonomy (identical to <c>config/taxonomy.txt</c>).</summary>
    public const string DefaultText = """
        # Triage subtype taxonomy: "broad class: label, label, ..." one class per line.
        thermonuclear: Ia, Ia-91T-like, Ia-91bg-like, Iax, Ia-CSM
        stripped-envelope: Ib, Ibn, Ic, Ic-BL, IIb
        hydrogen-rich: II, IIn
        superluminous: SLSN-I, SLSN-II

        """;

    /// <summary>True when <paramref name="subtype"/> is a known label.</summary>
    public bool Contains(string subtype) => _broadOf.ContainsKey(subtype);

    /// <summary>The broad class of a known label.</summary>
    /// <exception cref="KeyNotFoundException">The label is not in the taxonomy.</exception>
    public string BroadClassOf(string subtype) =>
        _broadOf.TryGetValue(subtype, out var b) ? b : throw new KeyNotFoundException($"Unknown subtype label '{subtype}'.");

    /// <summary>Parses the text form; throws <see cref="FormatException"/> naming the line.</summary>
    public static Taxonomy Parse(string text) =>
        TryParse(text, out var t, out var errors) ? t! : throw new FormatException(string.Join(Environment.NewLine, errors));

    /// <summary>Parses the text form, collecting every error as "line N: message".</summary>
    public static bool TryParse(string text, out Taxonomy? taxonomy, out IReadOnlyList<string> errors)
    {
        var errs = new List<string>();
        var classes = new List<BroadClass>();
        var seen = new Dictionary<string, int>(StringComparer.Ordinal);
        var lines = text.Replace("\r\n", "\n").Split('\n');
        for (int i = 0; i < lines.Length; i++)
        {
            int lineNo = i + 1;
            string line = lines[i];
            int hash = line.IndexOf('#');
            if (hash >= 0) line = line[..hash];
            line = line.Trim();
            if (line.Length == 0) continue;
            int colon = line.IndexOf(':');
            if (colon <= 0)
            {
                errs.Add(string.Create(CultureInfo.InvariantCulture, $"line {lineNo}: expected 'broad class: label, label, ...'"));
                continue;
            }
            string name = line[..colon].Trim();
            var labels = line[(colon + 1)..].Split(',').Select(s => s.Trim()).ToArray();
            if (labels.Any(l => l.Length == 0) || labels.Length == 0)
            {
                errs.Add(string.Create(CultureInfo.InvariantCulture, $"line {lineNo}: empty subtype label in class '{name}'"));
                continue;
            }
            if (classes.Any(c => c.Name == name))
                errs.Add(string.Create(CultureInfo.InvariantCulture, $"line {lineNo}: broad class '{name}' appears twice"));
            foreach (var l in labels)
            {
                if (l.Any(char.IsWhiteSpace))
                    errs.Add(string.Create(CultureInfo.InvariantCulture, $"line {lineNo}: label '{l}' contains white space"));
                if (seen.TryGetValue(l, out int first))
                    errs.Add(string.Create(CultureInfo.InvariantCulture, $"line {lineNo}: label '{l}' already listed on line {first}"));
                else seen[l] = lineNo;
            }
            classes.Add(new BroadClass(name, labels));
        }
        if (classes.Count == 0) errs.Add("line 1: the taxonomy lists no class");
        errors = errs;
        taxonomy = errs.Count == 0 ? new Taxonomy(classes) : null;
        return taxonomy is not null;
    }

    /// <summary>Writes the text form.</summary>
    public string ToText() =>
        "# Triage subtype taxonomy: \"broad class: label, label, ...\" one class per line.\n" +
        string.Concat(Classes.Select(c => $"{c.Name}: {string.Join(", ", c.Subtypes)}\n"));
}
