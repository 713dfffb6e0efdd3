namespace Triage.Api.Errors;

/// <summary>
/// Collects validation failures keyed by the JSON path of the offending field, in the shape
/// of RFC 9457 validation problems (<c>errors: { "field": ["message"] }</c>).
/// </summary>
public sealed class FieldChecks
{
    private readonly Dictionary<string, List<string>> _errors = new(StringComparer.Ordinal);
    private readonly string _prefix;

    public FieldChecks(string prefix = "")
    {
        _prefix = prefix;
    }

    public bool IsValid => _errors.Count == 0;

    public void Fail(string field, string message)
    {
        var key = _prefix.Length == 0 ? field : $"{_prefix}.{field}";
        if (!_errors.TryGetValue(key, out var list))
        {
            _errors[key] = list = [];
        }
        list.Add(message);
    }

    /// <summary>Requires a value; returns it (or 0) so callers can chain range checks.</summary>
    public double Number(string field, double? value, double min, double max, bool minExclusive = false, bool maxExclusive = false)
    {
        if (value is not { } v)
        {
            Fail(field, "is required");
            return 0;
        }
        if (!double.IsFinite(v))
        {
            Fail(field, "must be a finite number");
            return 0;
        }
        var belowMin = minExclusive ? v <= min : v < min;
        var aboveMax = maxExclusive ? v >= max : v > max;
        if (belowMin || aboveMax)
        {
            Fail(field, $"must be in {(minExclusive ? "(" : "[")}{min}, {max}{(maxExclusive ? ")" : "]")}; got {v}");
        }
        return v;
    }

    public string Text(string field, string? value, int maxLength = 100)
    {
        if (string.IsNullOrWhiteSpace(value))
        {
            Fail(field, "is required and must not be blank");
            return "";
        }
        var trimmed = value.Trim();
        if (trimmed.Length > maxLength)
        {
            Fail(field, $"must be at most {maxLength} characters");
        }
        if (trimmed.Any(char.IsControl))
        {
            Fail(field, "must not contain control characters");
        }
        if (trimmed.Any(TextHygiene.IsBidiControl))
        {
            Fail(field, "must not contain bidirectional override, embedding or isolate characters (U+202A–U+202E, U+2066–U+2069)");
        }
        return trimmed;
    }

    public T Choice<T>(string field, string? value, IReadOnlyDictionary<string, T> choices, T? fallback = null)
        where T : struct
    {
        if (value is null)
        {
            if (fallback is { } f)
            {
                return f;
            }
            Fail(field, "is required");
            return default;
        }
        if (choices.TryGetValue(value, out var c))
        {
            return c;
        }
        Fail(field, $"must be one of: {string.Join(", ", choices.Keys)}; got '{value}'");
        return default;
    }

    public IDictionary<string, string[]> ToDictionary() =>
        _errors.ToDictionary(kv => kv.Key, kv => kv.Value.ToArray(), StringComparer.Ordinal);
}
