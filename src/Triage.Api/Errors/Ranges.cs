using System.Globalization;

namespace Triage.Api.Errors;

/// <summary>
/// The dates and instants the service accepts: the sky model's years (1900–2100, the range the
/// night endpoints have always stated). Checked in validation, so an extreme value is a 400
/// naming the field and never reaches the sky model or PostgreSQL.
/// </summary>
public static class Ranges
{
    public const int MinYear = 1900;
    public const int MaxYear = 2100;

    /// <summary>How a date is described in problems.</summary>
    public const string DateRule = "a date as YYYY-MM-DD in years 1900–2100";

    /// <summary>How an instant is described in problems.</summary>
    public const string InstantRule = "an ISO 8601 instant in years 1900–2100";

    public static bool Contains(DateOnly date) => date.Year is >= MinYear and <= MaxYear;

    public static bool Contains(DateTimeOffset instant) => instant.UtcDateTime.Year is >= MinYear and <= MaxYear;

    /// <summary>Parses a night (<c>yyyy-MM-dd</c>) inside the range.</summary>
    public static bool TryParseNight(string? text, out DateOnly night) =>
        DateOnly.TryParseExact(text, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out night) && Contains(night);

    /// <summary>
    /// The instants that fall in the night that starts on the evening of <paramref name="night"/>
    /// at some longitude: from 00:00 UTC of that date to 00:00 UTC two days later.
    /// </summary>
    public static (DateTimeOffset From, DateTimeOffset To) NightSpan(DateOnly night)
    {
        var start = new DateTimeOffset(night.ToDateTime(TimeOnly.MinValue), TimeSpan.Zero);
        return (start, start.AddDays(2));
    }

    /// <summary>Fails <paramref name="field"/> unless <paramref name="instant"/> is absent or inside the range.</summary>
    public static void Check(FieldChecks checks, string field, DateTimeOffset? instant)
    {
        if (instant is { } t && !Contains(t))
        {
            checks.Fail(field, $"must be {InstantRule}");
        }
    }
}
