using Triage.Core.Candidates;

namespace Triage.Api.Candidates;

/// <summary>What happened to a candidate after an observation report committed.</summary>
/// <param name="CandidateId">Candidate.</param>
/// <param name="SpectrographId">Unit that observed.</param>
/// <param name="ObservedUtc">When the spectrum was taken.</param>
/// <param name="State">State after the report.</param>
public sealed record ObservationFollowUp(Guid CandidateId, Guid SpectrographId, DateTimeOffset ObservedUtc, CandidateState State)
{
    /// <summary>True when the report left the subtype unsettled: a sharper spectrum is wanted (a replan may be due).</summary>
    public bool Unsettled => State == CandidateState.Unsettled;
}

/// <summary>
/// Hook called after every committed observation report (for example to replan the night when a
/// candidate is left unsettled). Failures are logged by the caller and never undo the report.
/// </summary>
public interface IObservationFollowUp
{
    /// <summary>Called once per committed report.</summary>
    Task ReportedAsync(ObservationFollowUp followUp, CancellationToken ct);
}

/// <summary>The default hook: nothing follows a report.</summary>
public sealed class NoObservationFollowUp : IObservationFollowUp
{
    /// <inheritdoc/>
    public Task ReportedAsync(ObservationFollowUp followUp, CancellationToken ct) => Task.CompletedTask;
}
