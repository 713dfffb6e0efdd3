using System.Diagnostics;
using System.Globalization;
using Triage.Core.Identification;
using Triage.Core.Planning;
using Triage.Scheduling;

namespace Triage.Bench.Harness;

/// <summary>
/// `plan-objectives [--candidates N] [--rounds R]`: the plan job's build and solve steps on the demo network as the service
/// runs them (deterministic solve with a 5 s limit; the identification objective with each unit's channel from
/// <see cref="UnitOutcomes"/>, here without trials), for the accuracy and the identification objective back to back, R
/// rounds alternating which goes first. Candidates: demo/candidates.json, or N invented ones (the demo night's generator).
/// Light curves are assessed once before timing: that step does not depend on the objective. Figures:
/// docs/sequential-triage.md §6.
/// </summary>
internal static class ObjectiveTiming
{
    public static int Run(string[] args)
    {
        string Arg(string name, string fallback) => HarnessArgs.Value(args, name, fallback);
        var count = Arg("--candidates", "demo");
        var rounds = int.Parse(Arg("--rounds", "3"), CultureInfo.InvariantCulture);
        var inv = CultureInfo.InvariantCulture;

        var (sites, spectrographs) = DemoNight.Roster();
        var (calibration, source) = DemoNight.Calibration();
        var surface = AccuracySurface.FromDocument(calibration);
        var targets = count == "demo" ? DemoNight.Targets(calibration) : DemoNight.Targets(calibration, int.Parse(count, inv));
        Console.WriteLine(string.Create(inv,
            $"{targets.Length} candidates × {spectrographs.Count} spectrographs, night {DemoNight.Night:yyyy-MM-dd}, calibration {source} ({surface.Subtypes.Count} subtypes); {Environment.ProcessorCount} cores, load average {LoadAverage()}"));
        Console.WriteLine("round objective       build s  solve+report s  total s  choices  assigned  expected correct  objective value");
        var solver = new SolverSettings { TimeLimitSeconds = 5, Deterministic = true };
        for (var round = 1; round <= rounds; round++)
        {
            var order = round % 2 == 1
                ? new[] { PlanObjective.Accuracy, PlanObjective.Identification }
                : new[] { PlanObjective.Identification, PlanObjective.Accuracy };
            foreach (var objective in order)
            {
                var clock = Stopwatch.StartNew();
                var night = NightProblemBuilder.Build(sites, spectrographs, targets, surface, DemoNight.Night, DateTimeOffset.MinValue, new NightBuildSettings
                {
                    Objective = objective,
                    Sequential = objective == PlanObjective.Identification ? new SequentialPlanSettings { Channels = new UnitOutcomes(surface) } : new SequentialPlanSettings(),
                });
                var built = clock.Elapsed.TotalSeconds;
                var plan = NightPlanning.Plan(night, solver);
                var total = clock.Elapsed.TotalSeconds;
                var s = plan.Summary;
                Console.WriteLine(string.Create(inv,
                    $"{round,5} {objective,-14} {built,8:F2} {total - built,15:F2} {total,8:F2} {s.ChoicesBeforePruning,8} {s.Assigned,9} {s.ExpectedCorrectIdentifications,17:F1} {s.Objective,16:F2}"));
            }
        }

        Console.WriteLine($"load average at the end {LoadAverage()}");
        return 0;
    }

    private static string LoadAverage() =>
        File.Exists("/proc/loadavg") ? string.Join(' ', File.ReadAllText("/proc/loadavg").Split(' ').Take(3)) : "unknown";
}
