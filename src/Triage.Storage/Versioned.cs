namespace Triage.Storage;

/// <summary>A stored value with its row version (the basis of ETags) and last change time.</summary>
public sealed record Versioned<T>(T Value, int Version, DateTimeOffset UpdatedAt);

/// <summary>How a conditional write ended.</summary>
public enum WriteOutcome
{
    Done,
    NotFound,
    VersionMismatch,
    Conflict,
}

/// <summary>Result of a conditional write: the outcome, and the new version when it was done.</summary>
public readonly record struct WriteResult(WriteOutcome Outcome, int Version = 0, string? Detail = null)
{
    public static WriteResult NotFound { get; } = new(WriteOutcome.NotFound);
    public static WriteResult Stale { get; } = new(WriteOutcome.VersionMismatch);
    public static WriteResult Clash(string detail) => new(WriteOutcome.Conflict, 0, detail);
}
