using System.Globalization;

namespace Triage.Cli.Verbs;

/// <summary>Small helpers shared by verbs.</summary>
internal static class VerbParsing
{
    /// <summary>Parses "5,10,20" into numbers; "native" (or "none") becomes null when allowed.</summary>
    public static IReadOnlyList<double?> NumberList(string text, string option, bool allowNative)
    {
        var result = new List<double?>();
        foreach (var part in text.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries))
        {
            if (allowNative && (part.Equals("native", StringComparison.OrdinalIgnoreCase) || part.Equals("none", StringComparison.OrdinalIgnoreCase)))
                result.Add(null);
            else if (double.TryParse(part, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) && v > 0 && double.IsFinite(v))
                result.Add(v);
            else
                throw new FormatException($"{option}: '{part}' is not a positive number{(allowNative ? " or 'native'" : "")}.");
        }
        if (result.Count == 0) throw new FormatException($"{option}: the list is empty.");
        return result;
    }

    /// <summary>The informational version of the CLI assembly.</summary>
    public static string CodeVersion =>
        typeof(VerbParsing).Assembly.GetCustomAttributes(typeof(System.Reflection.AssemblyInformationalVersionAttribute), false)
            .OfType<System.Reflection.AssemblyInformationalVersionAttribute>().FirstOrDefault()?.InformationalVersion ?? "unknown";
}
