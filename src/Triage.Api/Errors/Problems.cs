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

    private static ProblemHttpResult Make(int status, string title, string detail, string field) =>
        TypedResults.Problem(detail: detail, statusCode: status, title: title,
            extensions: new Dictionary<string, object?> { ["field"] = field });
}

/// <summary>ETags are the row version in quotes (<c>"7"</c>).</summary>
public static class ETags
{
    public static string Of(int version) => $"\"{version}\"";

    /// <summary>What <see cref="TryParseIfMatch"/> returns for <c>If-Match: *</c>: any current version matches (RFC 9110 §13.1.1).</summary>
    public const int AnyVersion = -1;

    /// <summary>The version a conditional write expects: the current one for <c>If-Match: *</c>, else the one sent.</summary>
    public static int Expected(int ifMatch, int current) => ifMatch == AnyVersion ? current : ifMatch;

    /// <summary>Parses <c>If-Match</c>; false when absent or not one of our tags. <c>*</c> gives <see cref="AnyVersion"/>.</summary>
    public static bool TryParseIfMatch(HttpRequest request, out int version)
    {
        version = 0;
        var raw = request.Headers.IfMatch.ToString().Trim();
        if (raw == "*")
        {
            version = AnyVersion;
            return true;
        }
        if (raw.StartsWith("W/", StringComparison.Ordinal))
        {
            raw = raw[2..];
        }
        return raw.Length > 2 && raw[0] == '"' && raw[^1] == '"'
            && int.TryParse(raw.AsSpan(1, raw.Length - 2), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out version);
    }
}
