using Triage.Core.Planning;

namespace Triage.Scheduling.Tests;

public class BruteForceTests
{
    private const double Step = 600;

    // Exhaustive optimum on the same start grid: every candidate takes one of its (option, level)
    // pairs or none; a unit's set is feasible iff some order, each job started as early as
    // possible, meets every window (for a fixed order, earliest start is optimal).
    private static double BruteForceOptimum(PlanningProblem problem)
    {
        var jobs = new List<(int Candidate, int Unit, long Earliest, long Latest, long Ticks, double Net, double Cost)>();
        foreach (var option in problem.Options)
        {
            foreach (var level in option.Levels)
            {
                var ticks = (long)Math.Ceiling(level.DurationSeconds / Step - 1e-9);
                var earliest = (long)Math.Ceiling(option.Window.FromSeconds / Step - 1e-9);
                var latest = (long)Math.Floor(option.Window.ToSeconds / Step + 1e-9) - ticks;
                var cost = problem.Units[option.Unit].CostPerHour * ticks * Step / 3600;
                var net = level.Value - problem.PricePerCostUnit * problem.Units[option.Unit].CostPerHour * level.DurationSeconds / 3600;
                if (latest >= earliest && net > 0)
                {
                    jobs.Add((option.Candidate, option.Unit, earliest, latest, ticks, net, cost));
                }
            }
        }

        var perCandidate = Enumerable.Range(0, problem.Candidates.Count).Select(c => jobs.Where(j => j.Candidate == c).ToArray()).ToArray();
        var best = 0.0;
        var chosen = new List<(int Candidate, int Unit, long Earliest, long Latest, long Ticks, double Net, double Cost)>();

        bool UnitFeasible(int unit)
        {
            var set = chosen.Where(j => j.Unit == unit).ToArray();
            if (set.Sum(j => j.Ticks) * Step > problem.Units[unit].BudgetSeconds + 1e-6)
            {
                return false;
            }

            return Permutations(set.Length).Any(order =>
            {
                long t = long.MinValue;
                foreach (var i in order)
                {
                    var start = Math.Max(t, set[i].Earliest);
                    if (start > set[i].Latest)
                    {
                        return false;
                    }

                    t = start + set[i].Ticks;
                }

                return true;
            });
        }

        void Recurse(int c, double value)
        {
            if (c == perCandidate.Length)
            {
                if ((problem.NetworkCostCap is not { } cap || chosen.Sum(j => j.Cost) <= cap + 1e-9)
                    && Enumerable.Range(0, problem.Units.Count).All(UnitFeasible))
                {
                    best = Math.Max(best, value);
                }

                return;
            }

            Recurse(c + 1, value);
            foreach (var job in perCandidate[c])
            {
                chosen.Add(job);
                Recurse(c + 1, value + job.Net);
                chosen.RemoveAt(chosen.Count - 1);
            }
        }

        Recurse(0, 0);
        return best;
    }

    private static IEnumerable<int[]> Permutations(int n)
    {
        if (n == 0)
        {
            yield return [];
            yield break;
        }

        foreach (var rest in Permutations(n - 1))
        {
            for (var i = 0; i <= rest.Length; i++)
            {
                var p = new int[n];
                rest.AsSpan(0, i).CopyTo(p);
                p[i] = n - 1;
                rest.AsSpan(i).CopyTo(p.AsSpan(i + 1));
                yield return p;
            }
        }
    }

    private static PlanningProblem TinyProblem(int seed)
    {
        var rng = new Random(seed);
        var units = new[]
        {
            new PlanningUnit("lo", "Low", "A", 100, new SecondsWindow(0, 3 * 3600), 2.5 * 3600, 50),
            new PlanningUnit("hi", "High", "B", 2000, new SecondsWindow(1800, 4 * 3600), 1.5 * 3600, 200),
        };
        var candidates = Enumerable.Range(0, 5).Select(i => new PlanningCandidate($"c{i}", 1 + rng.Next(2))).ToArray();
        var options = new List<PlanOption>();
        for (var c = 0; c < candidates.Length; c++)
        {
            for (var u = 0; u < units.Length; u++)
            {
                if (rng.NextDouble() < 0.2)
                {
                    continue;
                }

                var from = units[u].Available.FromSeconds + rng.Next(0, 6) * 900;
                var window = new SecondsWindow(from, Math.Min(units[u].Available.ToSeconds, from + (1 + rng.Next(4)) * 1800));
                var baseMinutes = 10 + rng.Next(30);
                var levels = new[] { 1.0, 2.0, 3.5 }.Select((f, i) =>
                {
                    var exposure = baseMinutes * 60 * f;
                    var accuracy = Math.Min(0.95, (0.3 + 0.2 * i) * (u == 1 ? 1.3 : 1.0) * (0.6 + 0.4 * rng.NextDouble()));
                    return new ExposureLevel(5 * (i + 1), exposure, exposure + 120, accuracy, accuracy, candidates[c].ScienceWeight * accuracy);
                }).ToArray();
                options.Add(new PlanOption(c, u, window, levels, 1.2, 18));
            }
        }

        return new PlanningProblem(DateTimeOffset.UnixEpoch, units, candidates, options, PlanObjective.Accuracy,
            PricePerCostUnit: seed % 2 == 0 ? 0 : 0.002, NetworkCostCap: seed % 3 == 0 ? 300 : null);
    }

    private static readonly SolverSettings Exact = new()
    {
        Deterministic = true,
        DeterministicTimeLimit = 20,
        Planning = new PlanningSettings { StepSeconds = Step, UnitsKeptByValue = 10, LevelsKeptPerOption = 10 },
    };

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(4)]
    [InlineData(5)]
    [InlineData(6)]
    [InlineData(7)]
    [InlineData(8)]
    public void Solve_TinyInstance_MatchesExhaustiveOptimum(int seed)
    {
        var problem = TinyProblem(seed);
        var optimum = BruteForceOptimum(problem);

        var outcome = NightPlanner.Solve(problem, Exact);

        PlanChecks.AssertFeasible(problem, outcome.Observations);
        // Values are scaled to integers with 10⁻⁶ resolution in the solver; five candidates round at most 2.5·10⁻⁶.
        Assert.Equal(optimum, PlanChecks.Objective(problem, outcome.Observations), 5);
        Assert.Equal(PlanStatus.Optimal, outcome.Status);
        Assert.True(outcome.Bound >= optimum - 1e-6, "the reported bound must not undercut the optimum");
    }

    [Theory]
    [InlineData(11)]
    [InlineData(12)]
    [InlineData(13)]
    public void Greedy_TinyInstance_NeverBeatsExhaustiveOptimum(int seed)
    {
        var problem = TinyProblem(seed);
        var model = PlanningModel.Compile(problem, Exact.Planning);

        var greedy = model.ToObservations(GreedyPlanner.SolveBest(model));

        PlanChecks.AssertFeasible(problem, greedy);
        Assert.True(PlanChecks.Objective(problem, greedy) <= BruteForceOptimum(problem) + 1e-9);
    }
}
