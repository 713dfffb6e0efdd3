using BenchmarkDotNet.Attributes;
using Triage.Core.Exposure;
using Triage.Core.Roster;
using Triage.Core.Sky;

namespace Triage.Bench.Exposure;

/// <summary>Exposure calculations: 1,000 calls per invocation (divide the time by 1,000 for one call).</summary>
public class ExposureBenchmarks
{
    private const int Calls = 1000;
    private ExposureCalculator _calculator = null!;
    private ObservingConditions _moonlit = null!;

    [GlobalSetup]
    public void Setup()
    {
        var spectrograph = new Spectrograph(
            Guid.Empty, Guid.Empty, "bench unit (invented)", 300, 6000, 3800, 9200, 2.0, 0.15, 0.25,
            5.0, 0.001, 2, 0.75, 1.5, 120, 900, 2.0, 1, 8, SpectrographStatus.Available);
        var site = new Site(Guid.Empty, "bench site (invented)", -30.5, -70.8, 2400, 30, 45, 30, 1.1, 21.3, 6000, 0.13, SiteStatus.Open);
        _calculator = ExposureCalculator.For(spectrograph, site);
        _moonlit = new ObservingConditions { Airmass = 1.4, Moon = new MoonlightGeometry(60, 40, 50) };
    }

    [Benchmark(OperationsPerInvoke = Calls)]
    public double TimeForSnr()
    {
        double sum = 0;
        for (int i = 0; i < Calls; i++)
        {
            sum += _calculator.TimeFor(18 + 0.004 * i, 15, _moonlit).ExposureSeconds;
        }

        return sum;
    }

    [Benchmark(OperationsPerInvoke = Calls)]
    public double SnrForTime()
    {
        double sum = 0;
        for (int i = 0; i < Calls; i++)
        {
            sum += _calculator.SignalToNoiseFor(18 + 0.004 * i, 600, _moonlit).SignalToNoise;
        }

        return sum;
    }
}
