namespace Triage.Storage;

/// <summary>
/// Npgsql reads <c>timestamptz</c> as a UTC <see cref="DateTime"/>; the rest of Triage speaks
/// UTC <see cref="DateTimeOffset"/> only.
/// </summary>
internal static class Utc
{
    public static DateTimeOffset From(DateTime value) =>
        new(DateTime.SpecifyKind(value, DateTimeKind.Utc), TimeSpan.Zero);

    public static DateTimeOffset? From(DateTime? value) => value is { } v ? From(v) : null;
}
