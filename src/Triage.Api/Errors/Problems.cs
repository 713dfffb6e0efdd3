using Microsoft.AspNetCore.Http.HttpResults;

namespace Triage.Api.Errors;

/// <summary>The recurring non-validation problems, each naming the field or header at fault.</summary>
public static class Problems
{
    public static ProblemHttpResult Forbidden(string field, string detail) =>
        Make(StatusCodes.Status403Forbidden, "Not allowed for this key", detail, field);

    public static ProblemHttpResult NotFound(string field, string detail) =>
        Make(StatusCodes.Status404NotFound, "Not found", detail, field);

    public static ProblemHttpResult Conflict(string field, string detail) =>
        Make(StatusCodes.Status409Conflict, "Conflict", detail, field);

    public static ProblemHttpResult PreconditionRequired() =>
        Make(StatusCodes.Status428PreconditionRequired, "If-Match required",
            "Send the ETag you last read as 'If-Match' so that concurrent changes are not lost.", "If-Match");

    public static ProblemHttpResult Stale() =>
        Make(StatusCodes.Status412PreconditionFailed, "Stale write",
            "The resource changed since the ETag in 'If-Match' was read; read it again and retry.", "If-Match");

    public static ProblemHttpResult BadQuery(string field, string detail) =>
        Make(StatusCodes.Status400BadRequest, "Invalid query", detail, field);

    public static ProblemHttpResult BadHeader(string field, string detail) =>
        Make(StatusCodes.Status400BadRequest, "Invalid header", detail, field);

    private static ProblemHttpResult Make(int status, string title, string detail, string field) =>
        TypedResults.Problem(detail: detail, statusCode: status, title: title,
            extensions: new Dictionary<string, object?> { ["field"] = field });
}

/// <summary>ETags are the row version in quotes (<c>"7"</c>), always strong.</summary>
public static class ETags
{
    public static string Of(int version) => $"\"{version}\"";

    /// <summary>
    /// Reads <c>If-Match</c> (every field line of it, as one list). False with 428 when it is absent or
    /// empty, false with 400 when it is neither <c>*</c> nor a comma-separated list of entity tags.
    /// </summary>
    public static bool TryReadIfMatch(HttpRequest request, [System.Diagnostics.CodeAnalysis.NotNullWhen(true)] out IfMatch? condition,
        [System.Diagnostics.CodeAnalysis.NotNullWhen(false)] out ProblemHttpResult? problem)
    {
        condition = null;
        problem = null;
        var lines = request.Headers.IfMatch;
        if (lines.Count == 0 || lines.All(string.IsNullOrWhiteSpace))
        {
            problem = Problems.PreconditionRequired();
            return false;
        }
        condition = IfMatch.Parse(string.Join(",", lines.Select(l => l ?? "")));
        if (condition is null)
        {
            problem = Problems.BadHeader("If-Match",
                "If-Match must be * or a comma-separated list of entity tags such as \"3\" (RFC 9110 section 13.1.1).");
            return false;
        }
        return true;
    }
}

/// <summary>
/// An <c>If-Match</c> condition (RFC 9110 §13.1.1): <c>*</c> matches whatever version exists now; a list of entity
/// tags matches when one of them equals the current ETag by strong comparison (§8.8.3.2): neither tag weak and the
/// opaque tags identical character by character, so <c>W/"3"</c> never matches and <c>"03"</c> does not match <c>"3"</c>.
/// </summary>
public sealed class IfMatch
{
    /// <summary>The version no row ever has: a conditional write expecting it is refused as stale (412).</summary>
    public const int NoVersion = -1;

    private IfMatch(bool any, IReadOnlyList<string> strongTags)
    {
        Any = any;
        StrongTags = strongTags;
    }

    /// <summary>True for <c>If-Match: *</c>.</summary>
    public bool Any { get; }

    /// <summary>The strong entity tags of the list, quotes included (weak ones are dropped: they never match).</summary>
    public IReadOnlyList<string> StrongTags { get; }

    /// <summary>True when the condition holds for a resource whose current version is <paramref name="current"/>.</summary>
    public bool Matches(int current) => Any || StrongTags.Contains(ETags.Of(current), StringComparer.Ordinal);

    /// <summary>
    /// The version a conditional write expects: the current one when the condition holds (the write still checks,
    /// atomically, that it is current), else <see cref="NoVersion"/> so that the write answers 412.
    /// </summary>
    public int Expected(int current) => Matches(current) ? current : NoVersion;

    /// <summary>Parses a field value; null when it is not <c>*</c> nor a list of entity tags. Empty list elements are ignored (§5.6.1.2).</summary>
    public static IfMatch? Parse(string value)
    {
        var trimmed = value.Trim(' ', '\t');
        if (trimmed == "*")
        {
            return new IfMatch(true, []);
        }
        var strong = new List<string>();
        var seen = 0;
        var i = 0;
        while (true)
        {
            SkipWhitespace(value, ref i);
            if (i < value.Length && value[i] == ',')
            {
                i++;
                continue; // an empty list element
            }
            if (i >= value.Length)
            {
                break;
            }
            var weak = false;
            if (string.CompareOrdinal(value, i, "W/", 0, 2) == 0)
            {
                weak = true;
                i += 2;
            }
            if (i >= value.Length || value[i] != '"')
            {
                return null;
            }
            var start = i++;
            while (i < value.Length && value[i] != '"')
            {
                if (!IsTagChar(value[i]))
                {
                    return null;
                }
                i++;
            }
            if (i >= value.Length)
            {
                return null; // unterminated
            }
            i++;
            seen++;
            if (!weak)
            {
                strong.Add(value[start..i]);
            }
            SkipWhitespace(value, ref i);
            if (i < value.Length && value[i] != ',')
            {
                return null;
            }
        }
        return seen == 0 ? null : new IfMatch(false, strong);
    }

    // etagc = %x21 / %x23-7E / obs-text (RFC 9110 §8.8.3)
    private static bool IsTagChar(char c) => c == 0x21 || (c >= 0x23 && c <= 0x7E) || (c >= 0x80 && c <= 0xFF);

    private static void SkipWhitespace(string value, ref int i)
    {
        while (i < value.Length && (value[i] == ' ' || value[i] == '\t'))
        {
            i++;
        }
    }
}
