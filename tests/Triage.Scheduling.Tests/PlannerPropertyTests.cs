using Triage.Core.Planning;

namespace Triage.Scheduling.Tests;

public class PlannerPropertyTests
{
    private static readonly SolverSettings Reproducible = new() { Deterministic = true, DeterministicTimeLimit = 0.2 };

    public static TheoryData<int> Seeds => [101, 202, 303, 404, 505];

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Solve_SeededRandomNight_RespectsEveryHardRule(int seed)
    {
        var problem = SyntheticPlanningProblem.Create(seed, new SyntheticProblemSettings
        {
            Candidates = 80,
            Units = 6,
            NightHours = 4,
            BudgetShare = 0.6,
            NetworkCostCap = 600,
            PricePerCostUnit = 0.001,
        });

        var outcome = NightPlanner.Solve(problem, Reproducible);

        Assert.NotEmpty(outcome.Observations);
        PlanChecks.AssertFeasible(problem, outcome.Observations);
        Assert.Empty(PlanValidator.Violations(problem, outcome.Observations));
        Assert.True(outcome.Bound >= outcome.Objective - 1e-9);
    }

    [Theory]
    [InlineData(606)]
    [InlineData(707)]
    public void Solve_WallClockRunWithParallelSearches_RespectsEveryHardRule(int seed)
    {
        // The service's path: two local searches in parallel under a wall-clock limit, then CP-SAT.
        var problem = SyntheticPlanningProblem.Create(seed, new SyntheticProblemSettings
        {
            Candidates = 150,
            Units = 6,
            NightHours = 4,
            BudgetShare = 0.6,
            NetworkCostCap = 600,
            PricePerCostUnit = 0.001,
        });

        var outcome = NightPlanner.Solve(problem, new SolverSettings { TimeLimitSeconds = 1.5, Workers = 2 });

        Assert.NotEmpty(outcome.Observations);
        PlanChecks.AssertFeasible(problem, outcome.Observations);
        Assert.Empty(PlanValidator.Violations(problem, outcome.Observations));
        Assert.True(outcome.Bound >= outcome.Objective - 1e-9);
    }

    [Theory]
    [InlineData(7)]
    [InlineData(8)]
    public void Solve_SameSeedTwice_GivesTheSamePlan(int seed)
    {
        var settings = new SyntheticProblemSettings { Candidates = 120, NightHours = 5 };

        var first = NightPlanner.Solve(SyntheticPlanningProblem.Create(seed, settings), Reproducible);
        var second = NightPlanner.Solve(SyntheticPlanningProblem.Create(seed, settings), Reproducible);

        Assert.Equal(first.Observations, second.Observations);
        Assert.Equal(first.Objective, second.Objective);
    }

    [Fact]
    public void Solve_OversubscribedNight_ReportsAGapAgainstTheRelaxation()
    {
        var problem = SyntheticPlanningProblem.Create(9, new SyntheticProblemSettings { Candidates = 300, NightHours = 3 });

        var outcome = NightPlanner.Solve(problem, Reproducible);
        var plan = PlanReport.Build(problem, outcome);

        Assert.NotNull(plan.Summary.Gap);
        Assert.InRange(plan.Summary.Gap!.Value, 0, 1);
        Assert.Contains(plan.Unassigned, u => u.Reason == UnassignedReason.Outbid);
        // Oversubscribed: at least one unit's time has a positive marginal value.
        Assert.Contains(plan.Spectrographs, s => s.MarginalValuePerHour > 0);
    }

    [Fact]
    public void Solve_CostCapZero_PlansNothingThatCosts()
    {
        var problem = SyntheticPlanningProblem.Create(5, new SyntheticProblemSettings { Candidates = 30, NetworkCostCap = 0 });

        var outcome = NightPlanner.Solve(problem, Reproducible);

        Assert.Empty(outcome.Observations);
    }

    [Fact]
    public void Solve_HeuristicOnly_IsFeasibleAndNotBetterThanTheSolver()
    {
        var problem = SyntheticPlanningProblem.Create(21, new SyntheticProblemSettings { Candidates = 150, NightHours = 4 });

        var greedy = NightPlanner.Solve(problem, Reproducible with { HeuristicOnly = true });
        var solved = NightPlanner.Solve(problem, Reproducible);

        PlanChecks.AssertFeasible(problem, greedy.Observations);
        Assert.Equal(PlanStatus.Heuristic, greedy.Status);
        Assert.True(solved.Objective >= greedy.Objective - 1e-9);
    }
}
