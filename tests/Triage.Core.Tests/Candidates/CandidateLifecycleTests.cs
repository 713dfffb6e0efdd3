using Triage.Core.Candidates;

namespace Triage.Core.Tests.Candidates;

public class CandidateLifecycleTests
{
    [Theory]
    [InlineData(CandidateState.New, CandidateState.Planned, false, true)]
    [InlineData(CandidateState.Planned, CandidateState.New, false, true)]
    [InlineData(CandidateState.Classified, CandidateState.Planned, false, false)]
    [InlineData(CandidateState.Classified, CandidateState.Planned, true, true)]
    [InlineData(CandidateState.Classified, CandidateState.New, true, false)]
    [InlineData(CandidateState.Abandoned, CandidateState.Planned, false, false)]
    [InlineData(CandidateState.Abandoned, CandidateState.New, false, true)]
    [InlineData(CandidateState.Stale, CandidateState.Planned, false, true)]
    [InlineData(CandidateState.New, CandidateState.Classified, true, false)]
    [InlineData(CandidateState.Unsettled, CandidateState.Planned, false, true)]
    [InlineData(CandidateState.Unsettled, CandidateState.Classified, true, false)]
    public void CanTransition_Table(CandidateState from, CandidateState to, bool force, bool expected) =>
        Assert.Equal(expected, CandidateLifecycle.CanTransition(from, to, force));

    [Theory]
    [InlineData(CandidateState.Planned, ObservationOutcome.Done, true, CandidateState.Classified)]
    [InlineData(CandidateState.Planned, ObservationOutcome.Done, false, CandidateState.Observed)]
    [InlineData(CandidateState.Planned, ObservationOutcome.Weather, false, CandidateState.New)]
    [InlineData(CandidateState.Observed, ObservationOutcome.Failed, false, CandidateState.Observed)]
    [InlineData(CandidateState.New, ObservationOutcome.Done, true, CandidateState.Classified)]
    public void AfterReport_MovesState(CandidateState from, ObservationOutcome outcome, bool classified, CandidateState expected) =>
        Assert.Equal(expected, CandidateLifecycle.AfterReport(from, outcome, classified));

    [Theory]
    [InlineData(CandidateState.Planned, true, CandidateState.Classified)]
    [InlineData(CandidateState.Planned, false, CandidateState.Unsettled)]
    [InlineData(CandidateState.Unsettled, true, CandidateState.Classified)]
    [InlineData(CandidateState.Unsettled, false, CandidateState.Unsettled)]
    public void AfterReport_LabelSettledOrNot(CandidateState from, bool settled, CandidateState expected) =>
        Assert.Equal(expected, CandidateLifecycle.AfterReport(from, ObservationOutcome.Done, classified: true, settled));

    [Fact]
    public void AfterReport_Abandoned_Refused() =>
        Assert.Null(CandidateLifecycle.AfterReport(CandidateState.Abandoned, ObservationOutcome.Done, classified: true));

    [Fact]
    public void TryParse_RoundTripsEveryName()
    {
        foreach (var s in Enum.GetValues<CandidateState>())
        {
            Assert.True(CandidateLifecycle.TryParse(CandidateLifecycle.Name(s), out var parsed));
            Assert.Equal(s, parsed);
        }
        Assert.False(CandidateLifecycle.TryParse("New", out _));
    }
}
