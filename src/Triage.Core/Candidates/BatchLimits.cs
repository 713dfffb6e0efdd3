namespace Triage.Core.Candidates;

/// <summary>Limits and tolerances the validator applies. Defaults are documented per property.</summary>
public sealed record BatchLimits
{
    /// <summary>Most candidates in one batch. Default 5,000.</summary>
    public int MaxCandidates { get; init; } = 5000;

    /// <summary>Most photometry points per candidate. Default 2,000.</summary>
    public int MaxPhotometryPerCandidate { get; init; } = 2000;

    /// <summary>
    /// How far the sum of subtype probabilities may stray from 1 and still be normalised
    /// (|Σp − 1| ≤ tolerance); beyond it the candidate is rejected. Default 0.05, which
    /// absorbs rounding of a dozen two-decimal numbers but not a missing class.
    /// </summary>
    public double ProbabilitySumTolerance { get; init; } = 0.05;

    /// <summary>
    /// Latest accepted photometry or discovery time, usually "now + a little" supplied by
    /// the host (the core never reads the clock). Null: no check. Default null.
    /// </summary>
    public DateTimeOffset? NotAfterUtc { get; init; }

    /// <summary>Earliest accepted photometry or discovery time. Default 1990-01-01 UTC.</summary>
    public DateTimeOffset NotBeforeUtc { get; init; } = new(1990, 1, 1, 0, 0, 0, TimeSpan.Zero);
}

/// <summary>One problem found in a batch.</summary>
/// <param name="Field">JSON path of the offending field, e.g. <c>candidates[3].photometry[2].band</c>.</param>
/// <param name="Message">What is wrong, in plain words.</param>
/// <param name="ItemIndex">Index of the candidate in the batch, when the problem belongs to one.</param>
/// <param name="ItemId">Its broker id, when it could be read.</param>
public sealed record BatchError(string Field, string Message, int? ItemIndex = null, string? ItemId = null);

/// <summary>The validator's answer.</summary>
/// <param name="Candidates">Valid candidates (all of them only when <see cref="Errors"/> is empty).</param>
/// <param name="Errors">Every problem found, in batch order.</param>
/// <param name="Notices">Harmless corrections made (e.g. probabilities normalised).</param>
public sealed record BatchValidationResult(
    IReadOnlyList<Candidate> Candidates,
    IReadOnlyList<BatchError> Errors,
    IReadOnlyList<BatchError> Notices)
{
    /// <summary>True when no error was found.</summary>
    public bool IsValid => Errors.Count == 0;
}
