using System.Globalization;
using BenchmarkDotNet.Attributes;
using Triage.Core.Planning;
using Triage.Scheduling;

namespace Triage.Bench;

/// <summary>
/// The demo night (demo/roster.json: 6 spectrographs on 3 sites; demo/candidates.json: 500 candidates;
/// demo/calibration.json or the stand-in): Triage's plan against brightest-first onto the largest
/// telescope and science-priority filling the highest-R unit first. The figures are printed at setup;
/// the benchmarks time each planner.
/// </summary>
[Config(typeof(InProcessConfig))]
public class PlanQualityBenchmarks
{
    private PlanningProblem _problem = null!;
    private Dictionary<string, double> _apertures = null!;

    [GlobalSetup]
    public void Setup()
    {
        var (sites, spectrographs) = DemoNight.Roster();
        var (calibration, source) = DemoNight.Calibration();
        var night = NightProblemBuilder.Build(sites, spectrographs, DemoNight.Targets(calibration),
            AccuracySurface.FromDocument(calibration), DemoNight.Night, DateTimeOffset.MinValue);
        _problem = night.Problem;
        _apertures = spectrographs.ToDictionary(s => s.Id.ToString(), s => s.ApertureM);

        var triage = NightPlanner.Solve(_problem, new SolverSettings { TimeLimitSeconds = 5 });
        var counting = PlanMetrics.CountingCorrectIdentifications(_problem);
        var triageCounting = NightPlanner.Solve(counting, new SolverSettings { TimeLimitSeconds = 5 });
        var figures = new[]
        {
            PlanMetrics.Of("Triage", _problem, triage.Observations),
            PlanMetrics.Of("Brightest first, largest telescope", _problem, BrightestFirst()),
            PlanMetrics.Of("Science priority, highest R first", _problem, PriorityHighestR()),
            PlanMetrics.Of("Triage, weights ignored (counts identifications)", _problem, triageCounting.Observations),
        };

        // Load-independent figures: one worker, fixed search rounds and CP-SAT deterministic time.
        var reproducible = new SolverSettings { Deterministic = true };
        var fixedRuns = new[]
        {
            PlanMetrics.Of("Triage, reproducible run", _problem, NightPlanner.Solve(_problem, reproducible).Observations),
            PlanMetrics.Of("Triage, reproducible run, weights ignored", _problem, NightPlanner.Solve(counting, reproducible).Observations),
        };

        // The service's default objective: identification (posterior ≥ τ, with the value of escalating). Same options and
        // levels as the accuracy problem (only the values differ), so the figures, which read A, compare directly.
        var identification = NightProblemBuilder.Build(sites, spectrographs, DemoNight.Targets(calibration),
            AccuracySurface.FromDocument(calibration), DemoNight.Night, DateTimeOffset.MinValue, new NightBuildSettings { Objective = PlanObjective.Identification }).Problem;
        if (identification.Options.Count != _problem.Options.Count
            || identification.Options.Zip(_problem.Options).Any(p => p.First.Candidate != p.Second.Candidate || p.First.Unit != p.Second.Unit || p.First.Levels.Count != p.Second.Levels.Count))
        {
            throw new InvalidOperationException("The identification problem's options differ from the accuracy problem's.");
        }

        // Figures on the accuracy problem (its objective column is then Σ weight · A, comparable with the other rows).
        var identificationFast = NightPlanner.Solve(identification, new SolverSettings { TimeLimitSeconds = 5 });
        var identificationFixed = NightPlanner.Solve(identification, reproducible);
        var identificationRuns = new[]
        {
            PlanMetrics.Of("Triage, identification objective, 5 s", _problem, identificationFast.Observations),
            PlanMetrics.Of("Triage, identification objective, reproducible", _problem, identificationFixed.Observations),
        };
        var inv = CultureInfo.InvariantCulture;
        Console.WriteLine(string.Create(inv, $"// Demo night {DemoNight.Night:yyyy-MM-dd}, {_problem.Candidates.Count} candidates ({_problem.Candidates.Count(c => c.Standing == CandidateStanding.Plannable)} plannable, {PlanMetrics.HardAtLowResolution(_problem)} with best low-R A < 0.5), {_problem.Units.Count} spectrographs, calibration: {source}"));
        Console.WriteLine(string.Create(inv, $"// Triage status {triage.Status}, objective {triage.Objective:F2}, bound {triage.Bound:F2}; {string.Join(" ", triage.Notes)}"));
        Console.WriteLine(string.Create(inv, $"// Triage weights ignored: status {triageCounting.Status}, expected correct {triageCounting.Objective:F2}, bound {triageCounting.Bound:F2}"));
        foreach (var f in figures.Concat(fixedRuns).Concat(identificationRuns))
        {
            Console.WriteLine("// " + f);
        }

        Console.WriteLine(string.Create(inv, $"// Identification objective (Σ weight · V): 5 s {identificationFast.Objective:F2}, reproducible {identificationFixed.Objective:F2}, bound {identificationFixed.Bound:F2}"));
        Console.WriteLine(string.Create(inv, $"// Expected correct, Triage vs brightest-first: {figures[0].ExpectedCorrect / figures[1].ExpectedCorrect - 1:P1}; vs priority/highest-R: {figures[0].ExpectedCorrect / figures[2].ExpectedCorrect - 1:P1}"));
        Console.WriteLine(string.Create(inv, $"// Expected correct, Triage with weights ignored vs brightest-first: {figures[3].ExpectedCorrect / figures[1].ExpectedCorrect - 1:P1}; vs priority/highest-R: {figures[3].ExpectedCorrect / figures[2].ExpectedCorrect - 1:P1}"));
        Console.WriteLine(string.Create(inv, $"// Reproducible runs, expected correct vs brightest-first / priority: weighted {fixedRuns[0].ExpectedCorrect / figures[1].ExpectedCorrect - 1:P1} / {fixedRuns[0].ExpectedCorrect / figures[2].ExpectedCorrect - 1:P1}, weights ignored {fixedRuns[1].ExpectedCorrect / figures[1].ExpectedCorrect - 1:P1} / {fixedRuns[1].ExpectedCorrect / figures[2].ExpectedCorrect - 1:P1}; weighted objective {fixedRuns[0].Objective / figures[1].Objective - 1:P1} / {fixedRuns[0].Objective / figures[2].Objective - 1:P1}"));
        Console.WriteLine(string.Create(inv, $"// Weighted objective, Triage vs brightest-first: {figures[0].Objective / figures[1].Objective - 1:P1}; vs priority/highest-R: {figures[0].Objective / figures[2].Objective - 1:P1}"));
    }

    [Benchmark(Baseline = true)]
    public PlanOutcome Triage() => NightPlanner.Solve(_problem, new SolverSettings { TimeLimitSeconds = 5 });

    [Benchmark]
    public IReadOnlyList<PlannedObservation> BrightestFirst() => BaselineSchedulers.BrightestFirstLargestTelescope(_problem, _apertures);

    [Benchmark]
    public IReadOnlyList<PlannedObservation> PriorityHighestR() => BaselineSchedulers.PriorityHighestResolutionFirst(_problem);
}
