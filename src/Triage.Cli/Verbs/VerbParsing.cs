using System.CommandLine;
using System.CommandLine.Parsing;
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

    /// <summary>
    /// Writes a bad-argument error naming the command-line option (never a property name of the
    /// core) and returns 2. The option is the one of <paramref name="parse"/>'s command whose name
    /// matches the argument's parameter name, with or without its unit suffix
    /// (<c>LatitudeDeg</c> → <c>--latitude</c>); without a match the message names no option.
    /// </summary>
    public static int FailArgument(TextWriter error, ParseResult parse, ArgumentException ex)
    {
        string message = ex.Message;
        int cut = message.IndexOf(" (Parameter '", StringComparison.Ordinal);
        if (cut >= 0) message = message[..cut];
        message = message.Split('\n')[0].Trim();
        if (ex is ArgumentOutOfRangeException { ActualValue: IFormattable v })
            message = message.TrimEnd('.') + " (got " + v.ToString(null, CultureInfo.InvariantCulture) + ").";
        string? option = OptionFor(parse.CommandResult.Command, ex.ParamName);
        return CliJson.Fail(error, option is null ? message : $"{option}: {message}");
    }

    /// <summary>The option of <paramref name="command"/> a core parameter name stands for, or null.</summary>
    public static string? OptionFor(Command command, string? parameter)
    {
        if (string.IsNullOrEmpty(parameter)) return null;
        var words = new List<string>();
        int start = 0;
        for (int i = 1; i <= parameter.Length; i++)
        {
            if (i == parameter.Length || char.IsUpper(parameter[i]))
            {
                words.Add(parameter[start..i].ToLowerInvariant());
                start = i;
            }
        }
        for (int n = words.Count; n >= 1; n--)
        {
            string name = "--" + string.Join('-', words.Take(n));
            if (command.Options.Any(o => o.Name == name || o.Aliases.Contains(name))) return name;
        }
        return null;
    }

    /// <summary>
    /// Prints parse errors without the help text: one line per error and where the help is, then 2.
    /// </summary>
    public static int ReportUsageErrors(ParseResult parse, TextWriter error)
    {
        var names = new List<string>();
        for (SymbolResult? r = parse.CommandResult; r is not null; r = r.Parent)
        {
            if (r is CommandResult c) names.Insert(0, c.Command.Name);
        }
        string path = string.Join(' ', names);
        foreach (var e in parse.Errors) error.WriteLine($"error: {e.Message}");
        error.WriteLine($"See '{path} --help'.");
        return 2;
    }

    /// <summary>The informational version of the CLI assembly.</summary>
    public static string CodeVersion =>
        typeof(VerbParsing).Assembly.GetCustomAttributes(typeof(System.Reflection.AssemblyInformationalVersionAttribute), false)
            .OfType<System.Reflection.AssemblyInformationalVersionAttribute>().FirstOrDefault()?.InformationalVersion ?? "unknown";
}
