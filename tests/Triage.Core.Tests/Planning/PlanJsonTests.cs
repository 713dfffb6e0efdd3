using Triage.Core.Planning;

namespace Triage.Core.Tests.Planning;

public class PlanJsonTests
{
    [Fact]
    public void Serialize_ThenDeserialize_GivesTheSameJson()
    {
        var problem = SyntheticPlanningProblem.Create(3, new SyntheticProblemSettings { Candidates = 20 });
        var model = PlanningModel.Compile(problem);
        var observations = model.ToObservations(GreedyPlanner.SolveBest(model));
        var plan = PlanReport.Build(problem, new PlanOutcome(observations, PlanStatus.Heuristic, model.ObjectiveOf(GreedyPlanner.SolveBest(model)),
            null, new double?[problem.Units.Count], model.ChoicesBeforePruning, model.Choices.Count, []));

        var json = PlanJson.Serialize(plan);
        var again = PlanJson.Serialize(PlanJson.Deserialize(json));

        Assert.Equal(json, again);
        Assert.Contains("\"advisory\": \"This plan is advisory.", json);
        Assert.Contains("\"status\": \"heuristic\"", json);
    }

    [Fact]
    public void Build_PlanFromGreedy_PassesTheValidatorAndExplainsEveryCandidate()
    {
        var problem = SyntheticPlanningProblem.Create(4, new SyntheticProblemSettings { Candidates = 60, NightHours = 3 });
        var model = PlanningModel.Compile(problem);
        var observations = model.ToObservations(GreedyPlanner.SolveBest(model));

        var plan = PlanReport.Build(problem, new PlanOutcome(observations, PlanStatus.Heuristic, 0, null, [], 0, 0, []));

        Assert.Empty(PlanValidator.Violations(problem, observations));
        Assert.Equal(problem.Candidates.Count, plan.Summary.Assigned + plan.Unassigned.Count);
        Assert.All(plan.Spectrographs.SelectMany(s => s.Queue), e => Assert.False(string.IsNullOrWhiteSpace(e.Reason)));
        Assert.All(plan.Unassigned, u => Assert.False(string.IsNullOrWhiteSpace(u.Detail)));
    }
}
