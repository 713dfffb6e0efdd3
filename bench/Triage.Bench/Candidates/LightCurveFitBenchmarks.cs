using BenchmarkDotNet.Attributes;
using Triage.Core.Candidates;

namespace Triage.Bench.Candidates;

/// <summary>
/// Fitting light curves and priors of invented candidates (the demo night's generator, seed
/// 20261203): the cost a planner pays per candidate when it assesses a batch.
/// Per-candidate time = mean / 100.
/// </summary>
[MemoryDiagnoser]
public class LightCurveFitBenchmarks
{
    private IReadOnlyList<Candidate> _candidates = [];

    [GlobalSetup]
    public void Setup()
    {
        var batch = DemoNightGenerator.Generate(DefaultSubtypeLabels.All, new DemoNightOptions { Count = 100 });
        _candidates = BrokerBatchValidator.Validate(batch, DefaultSubtypeLabels.Set).Candidates;
    }

    [Benchmark]
    public int AssessHundredCandidates()
    {
        int bazin = 0;
        foreach (var c in _candidates)
        {
            var a = CandidateAssessment.Assess(c, DefaultSubtypeLabels.All);
            if (a.LightCurve.Reference?.Method == Core.LightCurves.CurveMethod.Bazin)
            {
                bazin++;
            }
        }
        return bazin;
    }
}
