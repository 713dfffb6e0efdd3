using Triage.Core.Candidates;
using Triage.Core.LightCurves;

namespace Triage.Core.Tests.Candidates;

public class DemoNightGeneratorTests
{
    [Fact]
    public void Generate_SameSeed_SameBatchAndEveryCandidateValid()
    {
        var options = new DemoNightOptions { Count = 40, Seed = 5 };
        string a = BrokerBatchJson.Serialize(DemoNightGenerator.Generate(DefaultSubtypeLabels.All, options));
        string b = BrokerBatchJson.Serialize(DemoNightGenerator.Generate(DefaultSubtypeLabels.All, options));
        Assert.Equal(a, b);

        var result = CandidateAssessment.ReadBatch(a, DefaultSubtypeLabels.Set, new BatchLimits { NotAfterUtc = options.NightStartUtc });
        Assert.True(result.IsValid, string.Join("; ", result.Errors.Take(3)));
        Assert.Equal(40, result.Candidates.Count);
        Assert.All(result.Candidates, c => Assert.True(c.Photometry.Max(p => p.TimeUtc) < options.NightStartUtc));
    }

    [Fact]
    public void Generate_PredictedMagnitudesMostlyInsideDemoRange()
    {
        var options = new DemoNightOptions { Count = 40, Seed = 9 };
        var result = CandidateAssessment.ReadBatch(BrokerBatchJson.Serialize(DemoNightGenerator.Generate(DefaultSubtypeLabels.All, options)), DefaultSubtypeLabels.Set);

        var mags = result.Candidates.Select(c => LightCurveFitter.Fit(c).PredictMagnitude(options.NightStartUtc, "r").Value).ToArray();

        // The generator keeps true r magnitudes in 16–22 at night start; fits of noisy sparse data scatter a little.
        Assert.True(mags.Count(m => m is >= 15.5 and <= 22.5) >= 0.9 * mags.Length);
    }
}
