using System.Globalization;
using Triage.Core.Planning;

namespace Triage.Bench;

/// <summary>Figures compared between plans.</summary>
/// <param name="HighRShareOnHard">Share of the highest-R unit's time on candidates whose best low-R A is below 0.5.</param>
/// <param name="GainOnHighR">Mean over entries on units with R ≥ 1000 of A(chosen) − best A over units with R &lt; 1000 (NaN: none).</param>
/// <param name="GainOnLowR">The same over entries on units with R &lt; 1000 (≤ 0 by construction; NaN: none).</param>
/// <param name="HighREntries">Entries on units with R ≥ 1000.</param>
/// <param name="LowREntries">Entries on units with R &lt; 1000.</param>
/// <param name="HighRTimeShareOnHard">Share of all R ≥ 1000 time on candidates whose best R &lt; 1000 option is below 0.5 expected accuracy.</param>
public sealed record PlanFigures(string Name, int Assigned, double ExpectedCorrect, double Objective, double HighRShareOnHard,
    double GainOnHighR = double.NaN, double GainOnLowR = double.NaN, int HighREntries = 0, int LowREntries = 0, double HighRTimeShareOnHard = 0)
{
    public override string ToString() => string.Create(CultureInfo.InvariantCulture,
        $"{Name,-44} assigned {Assigned,4}  expected correct {ExpectedCorrect,7:F1}  objective {Objective,7:F1}  high-R time on low-R-hard candidates {HighRShareOnHard,6:P1}  " +
        $"gain over best R<1000: {GainOnHighR:+0.000;-0.000} on {HighREntries} R≥1000 entries, {GainOnLowR:+0.000;-0.000} on {LowREntries} R<1000 entries; R≥1000 time on hard {HighRTimeShareOnHard:P1}");
}

/// <summary>Computes <see cref="PlanFigures"/>.</summary>
public static class PlanMetrics
{
    /// <summary>Units with R below this count as low-R.</summary>
    public const double LowResolutionBelow = 1000;

    /// <summary>
    /// The same problem with every science weight 1 and the accuracy objective: the value of a plan is
    /// then its expected number of correct identifications, the figure the rules are compared on.
    /// </summary>
    public static PlanningProblem CountingCorrectIdentifications(PlanningProblem problem) => problem with
    {
        Objective = PlanObjective.Accuracy,
        Candidates = problem.Candidates.Select(c => c with { ScienceWeight = 1 }).ToArray(),
        Options = problem.Options.Select(o => o with { Levels = o.Levels.Select(l => l with { Value = l.ExpectedAccuracy }).ToArray() }).ToArray(),
    };

    /// <summary>Plannable candidates whose best low-R expected accuracy (any level, any low-R unit) is below 0.5.</summary>
    public static int HardAtLowResolution(PlanningProblem problem)
    {
        var bestLowR = BestLowResolutionAccuracy(problem);
        return Enumerable.Range(0, problem.Candidates.Count).Count(c => problem.Candidates[c].Standing == CandidateStanding.Plannable && bestLowR[c] < 0.5);
    }

    private static double[] BestLowResolutionAccuracy(PlanningProblem problem)
    {
        var bestLowR = new double[problem.Candidates.Count];
        foreach (var option in problem.Options.Where(o => problem.Units[o.Unit].ResolvingPower < LowResolutionBelow))
        {
            foreach (var level in option.Levels)
            {
                bestLowR[option.Candidate] = Math.Max(bestLowR[option.Candidate], level.ExpectedAccuracy);
            }
        }

        return bestLowR;
    }

    /// <summary>Figures of a plan; "hard" candidates have best low-R expected accuracy below 0.5 (or no low-R option).</summary>
    public static PlanFigures Of(string name, PlanningProblem problem, IReadOnlyList<PlannedObservation> plan)
    {
        var highR = Enumerable.Range(0, problem.Units.Count).MaxBy(u => problem.Units[u].ResolvingPower);
        var bestLowR = BestLowResolutionAccuracy(problem);

        double highTime = 0, highHard = 0;
        foreach (var o in plan.Where(o => problem.Options[o.Option].Unit == highR))
        {
            var option = problem.Options[o.Option];
            var seconds = option.Levels[o.Level].DurationSeconds;
            highTime += seconds;
            if (bestLowR[option.Candidate] < 0.5)
            {
                highHard += seconds;
            }
        }

        // Gain over the best option below R = 1000, and the R ≥ 1000 time on candidates low R cannot identify.
        var gainsHigh = new List<double>();
        var gainsLow = new List<double>();
        double allHighTime = 0, allHighHard = 0;
        foreach (var o in plan)
        {
            var option = problem.Options[o.Option];
            var level = option.Levels[o.Level];
            var gain = level.ExpectedAccuracy - bestLowR[option.Candidate];
            if (problem.Units[option.Unit].ResolvingPower >= LowResolutionBelow)
            {
                gainsHigh.Add(gain);
                allHighTime += level.DurationSeconds;
                if (bestLowR[option.Candidate] < 0.5)
                {
                    allHighHard += level.DurationSeconds;
                }
            }
            else
            {
                gainsLow.Add(gain);
            }
        }

        var correct = plan.Sum(o => problem.Options[o.Option].Levels[o.Level].ExpectedAccuracy);
        var objective = plan.Sum(o => problem.NetValue(problem.Options[o.Option], problem.Options[o.Option].Levels[o.Level]));
        return new PlanFigures(name, plan.Count, correct, objective, highTime > 0 ? highHard / highTime : 0,
            gainsHigh.Count > 0 ? gainsHigh.Average() : double.NaN, gainsLow.Count > 0 ? gainsLow.Average() : double.NaN,
            gainsHigh.Count, gainsLow.Count, allHighTime > 0 ? allHighHard / allHighTime : 0);
    }
}
