using BenchmarkDotNet.Attributes;
using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Scheduling;

namespace Triage.Bench;

/// <summary>
/// 2,000 invented candidates × 12 spectrographs (the demo network with every unit doubled):
/// building the problem (sky, exposure, value model), solving it (LP bound, heuristics, CP-SAT,
/// <see cref="SolveLimitSeconds"/> limit), and both together, the figure the 5 s target is about.
/// The last solve's status, bound and gap are printed at cleanup.
/// </summary>
[Config(typeof(InProcessConfig))]
public class PlannerScaleBenchmarks
{
    private IReadOnlyList<Site> _sites = null!;
    private IReadOnlyList<Spectrograph> _spectrographs = null!;
    private ITargetForecast[] _targets = null!;
    private AccuracySurface _surface = null!;
    private PlanningNight _night = null!;
    private PlanOutcome? _last;

    /// <summary>Solver time limit, s: building takes well under a second, so build and solve fit in 5 s.</summary>
    public const double SolveLimitSeconds = 3.5;

    [GlobalSetup]
    public void Setup()
    {
        var (sites, spectrographs) = DemoNight.Roster();
        var (calibration, _) = DemoNight.Calibration();
        _sites = sites;
        _spectrographs = DemoNight.Replicated(spectrographs, 2);
        _targets = DemoNight.Targets(calibration, 2000);
        _surface = AccuracySurface.FromDocument(calibration);
        _night = BuildProblem();
    }

    [Benchmark]
    public PlanningNight BuildProblem()
        => NightProblemBuilder.Build(_sites, _spectrographs, _targets, _surface, DemoNight.Night, DateTimeOffset.MinValue);

    [Benchmark]
    public PlanOutcome Solve() => _last = NightPlanner.Solve(_night.Problem, new SolverSettings { TimeLimitSeconds = SolveLimitSeconds });

    [Benchmark]
    public PlanOutcome BuildAndSolve() => _last = NightPlanner.Solve(BuildProblem().Problem, new SolverSettings { TimeLimitSeconds = SolveLimitSeconds });

    [GlobalCleanup]
    public void Report()
    {
        if (_last is { } o)
        {
            var gap = o.Bound is { } b && b > 0 ? (b - o.Objective) / b : double.NaN;
            Console.WriteLine($"// {_night.Problem.Candidates.Count} candidates x {_night.Problem.Units.Count} spectrographs: status {o.Status}, objective {o.Objective:F2}, bound {o.Bound:F2}, gap {gap:P1}, choices {o.ChoicesBeforePruning} -> {o.ChoicesAfterPruning}; {string.Join(" ", o.Notes)}");
        }
    }
}
