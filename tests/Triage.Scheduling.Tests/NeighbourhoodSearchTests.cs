using Triage.Core.Planning;

namespace Triage.Scheduling.Tests;

public class NeighbourhoodSearchTests
{
    public static TheoryData<int> Seeds => [11, 22, 33, 44, 55, 66];

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Improve_SeededRandomNight_StaysFeasibleAndNeverLosesValue(int seed)
    {
        var problem = SyntheticPlanningProblem.Create(seed, new SyntheticProblemSettings
        {
            Candidates = 150,
            Units = 5,
            NightHours = 4,
            BudgetShare = 0.7,
            NetworkCostCap = 500,
            PricePerCostUnit = 0.001,
        });
        var model = PlanningModel.Compile(problem);
        var greedy = GreedyPlanner.Solve(model);

        var improved = NeighbourhoodSearch.Improve(model, greedy, new NeighbourhoodSearchSettings { Rounds = 400, Seed = seed });

        var plan = model.ToObservations(improved);
        PlanChecks.AssertFeasible(problem, plan);
        Assert.Empty(PlanValidator.Violations(problem, plan));
        Assert.All(improved, p => Assert.InRange(p.StartTick, model.Choices[p.ChoiceIndex].EarliestTick, model.Choices[p.ChoiceIndex].LatestTick));
        Assert.True(model.ObjectiveOf(improved) >= model.ObjectiveOf(greedy) - 1e-9);
        Assert.Equal(PlanChecks.Objective(problem, plan), model.ObjectiveOf(improved), 6);
    }

    [Fact]
    public void Improve_OversubscribedNight_FindsMoreValueThanTheGreedy()
    {
        // 300 candidates for 3 hours: the density greedy leaves gaps that shifting and swapping fill.
        var problem = SyntheticPlanningProblem.Create(9, new SyntheticProblemSettings { Candidates = 300, NightHours = 3 });
        var model = PlanningModel.Compile(problem);
        var greedy = GreedyPlanner.Solve(model);

        var improved = NeighbourhoodSearch.Improve(model, greedy, new NeighbourhoodSearchSettings { Rounds = 1000 });

        PlanChecks.AssertFeasible(problem, model.ToObservations(improved));
        Assert.True(model.ObjectiveOf(improved) > model.ObjectiveOf(greedy) + 1e-6,
            $"search {model.ObjectiveOf(improved):F4} vs greedy {model.ObjectiveOf(greedy):F4}");
    }

    [Theory]
    [InlineData(3)]
    [InlineData(4)]
    public void Improve_SameSeedTwice_GivesTheSamePlan(int seed)
    {
        var settings = new SyntheticProblemSettings { Candidates = 200, NightHours = 4 };
        IReadOnlyList<PlacedChoice> Run()
        {
            var model = PlanningModel.Compile(SyntheticPlanningProblem.Create(seed, settings));
            return NeighbourhoodSearch.Improve(model, GreedyPlanner.Solve(model), new NeighbourhoodSearchSettings { Rounds = 300, Seed = seed });
        }

        Assert.Equal(Run().OrderBy(p => p.ChoiceIndex), Run().OrderBy(p => p.ChoiceIndex));
    }

    [Fact]
    public void Improve_BlockingEntry_IsShiftedToMakeRoom()
    {
        // One unit, grid 600 s, night of 10 ticks. X (4 ticks, may start at ticks 0…6, value 2) is denser
        // than Y (6 ticks, must start at tick 0, value 2.5), so the density greedy puts X at 0 and Y no
        // longer fits. Worked by hand: Y at 0 and X shifted to 6 is worth 4.5, the optimum.
        const double step = 600;
        var unit = new PlanningUnit("u", "Unit", "S", 1000, new SecondsWindow(0, 10 * step), 10 * step, 0);
        var candidates = new[] { new PlanningCandidate("X", 1), new PlanningCandidate("Y", 1) };
        var options = new[]
        {
            new PlanOption(0, 0, new SecondsWindow(0, 10 * step), [new ExposureLevel(10, 4 * step - 60, 4 * step, 0.5, 0.5, 2)], 1.1, 18),
            new PlanOption(1, 0, new SecondsWindow(0, 6 * step), [new ExposureLevel(10, 6 * step - 60, 6 * step, 0.6, 0.6, 2.5)], 1.1, 18),
        };
        var problem = new PlanningProblem(DateTimeOffset.UnixEpoch, [unit], candidates, options, PlanObjective.Accuracy, 0, null);
        var model = PlanningModel.Compile(problem, new PlanningSettings { StepSeconds = step });
        var greedy = GreedyPlanner.Solve(model, GreedyPlanner.Order.ValueDensity);
        Assert.Equal(2, model.ObjectiveOf(greedy), 9);

        var improved = NeighbourhoodSearch.Improve(model, greedy, new NeighbourhoodSearchSettings { Rounds = 50 });

        Assert.Equal(4.5, model.ObjectiveOf(improved), 9);
        var plan = model.ToObservations(improved);
        PlanChecks.AssertFeasible(problem, plan);
        Assert.Equal([0.0, 6 * step], plan.Select(o => o.StartSeconds).ToArray());
    }

    [Fact]
    public void Improve_CancelledBeforeStart_ReturnsTheStartPlan()
    {
        var problem = SyntheticPlanningProblem.Create(8, new SyntheticProblemSettings { Candidates = 100 });
        var model = PlanningModel.Compile(problem);
        var greedy = GreedyPlanner.Solve(model);

        var improved = NeighbourhoodSearch.Improve(model, greedy, null, new CancellationToken(canceled: true));

        Assert.Equal(greedy, improved);
    }

    [Fact]
    public void Improve_InfeasibleStartPlan_IsRejected()
    {
        var problem = SyntheticPlanningProblem.Create(5, new SyntheticProblemSettings { Candidates = 20 });
        var model = PlanningModel.Compile(problem);
        // Two entries for one candidate.
        var twice = Enumerable.Range(0, model.Choices.Count).GroupBy(j => model.Choices[j].Candidate).First(g => g.Count() > 1).Take(2).ToArray();

        Assert.Throws<ArgumentException>(() => NeighbourhoodSearch.Improve(model,
            twice.Select(j => new PlacedChoice(j, model.Choices[j].EarliestTick)).ToArray()));
    }

    [Fact]
    public void WithChoicesOf_AddsThePlansChoicesToAPrunedModelAndKeepsItsValue()
    {
        var problem = SyntheticPlanningProblem.Create(12, new SyntheticProblemSettings { Candidates = 120, NightHours = 4 });
        var full = PlanningModel.Compile(problem, new PlanningSettings { UnitsKeptByValue = int.MaxValue, UnitsKeptByDensity = 0, LevelsKeptPerOption = int.MaxValue });
        var pruned = PlanningModel.Compile(problem, new PlanningSettings { UnitsKeptByValue = 1, UnitsKeptByDensity = 0, LevelsKeptPerOption = 1 });
        var plan = NeighbourhoodSearch.Improve(full, GreedyPlanner.Solve(full), new NeighbourhoodSearchSettings { Rounds = 200 });

        var (merged, mapped) = pruned.WithChoicesOf(full, plan);

        Assert.Equal(full.ObjectiveOf(plan), merged.ObjectiveOf(mapped), 9);
        Assert.Equal(full.ToObservations(plan), merged.ToObservations(mapped));
        Assert.Equal(pruned.Choices, merged.Choices.Take(pruned.Choices.Count));
        // The tight pruning dropped choices the plan uses; they are now in the model.
        Assert.True(merged.Choices.Count > pruned.Choices.Count);
    }
}
