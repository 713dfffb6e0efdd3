using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Learning;

namespace Triage.Learning.Tests.Calibration;

/// <summary>
/// A calibration split per R (what the service's parts do on several replicas): each R run on its own, in reverse
/// order, its outcome sent through the stored JSON form, then assembled, gives exactly the document of one whole run.
/// </summary>
[Collection(SyntheticCalibrationCollection.Name)]
public class CalibrationPartsTests(SyntheticCalibrationFixture f)
{
    [Fact]
    public void PartsRunOutOfOrderAndStoredAsJson_AssembleToTheWholeRunsDocument()
    {
        var settings = new CalibrationSettings { Resolutions = [500, 50, 150], SnrLevels = [10, null], Folds = 3, Seed = 9 };
        var whole = CalibrationJson.Serialize(CalibrationPipeline.Run(f.Library, Taxonomy.Default, settings, "test"));

        var run = CalibrationRun.Prepare(f.Library, Taxonomy.Default, settings);
        Assert.Equal([50.0, 150.0, 500.0], run.Resolutions);
        var stored = new List<string>();
        var units = 0;
        for (var ri = run.Resolutions.Count - 1; ri >= 0; ri--)
        {
            stored.Add(CalibrationJson.SerializeOutcome(CalibrationPipeline.RunResolution(run, ri, _ => units++)));
        }
        var outcomes = stored.Select(CalibrationJson.DeserializeOutcome).ToList();
        var assembled = CalibrationJson.Serialize(CalibrationPipeline.Assemble(CalibrationRun.Prepare(f.Library, Taxonomy.Default, settings), outcomes, "test"));

        Assert.Equal(3 * 2 * 3, units); // R × S/N × folds
        Assert.Equal(whole, assembled);
        Assert.NotEmpty(CalibrationJson.Deserialize(assembled).MinimumResolution);
    }

    [Fact]
    public void Assemble_WithAnROfTheGridMissing_IsRefused()
    {
        var settings = new CalibrationSettings { Resolutions = [50, 500], SnrLevels = [10], Folds = 3, Seed = 9 };
        var run = CalibrationRun.Prepare(f.Library, Taxonomy.Default, settings);
        var one = CalibrationPipeline.RunResolution(run, 1);
        var e = Assert.Throws<ArgumentException>(() => CalibrationPipeline.Assemble(run, [one], "test"));
        Assert.Contains("R = 50", e.Message);
    }
    [Fact]
    public void WholeRun_WithRValuesOverlapping_ReportsEveryUnitOnceWithRisingPercent()
    {
        var settings = new CalibrationSettings { Resolutions = [500, 50, 150, 20], SnrLevels = [10], Folds = 3, Seed = 4 };
        var reports = new List<CalibrationProgress>();
        var progress = new SynchronousProgress(p => { lock (reports) reports.Add(p); });

        CalibrationPipeline.Run(f.Library, Taxonomy.Default, settings, "test", progress);

        Assert.Equal("starting", reports[0].Stage);
        Assert.Equal("done", reports[^1].Stage);
        Assert.Equal(100, reports[^1].Percent, 9);
        var units = reports.Skip(1).SkipLast(1).Select(r => r.Stage).ToList();
        Assert.Equal(4 * 1 * 3, units.Count); // R × S/N × folds, each once
        Assert.Equal(units.Count, units.Distinct().Count());
        Assert.All(reports.Zip(reports.Skip(1)), pair => Assert.True(pair.Second.Percent >= pair.First.Percent));
    }

    private sealed class SynchronousProgress(Action<CalibrationProgress> report) : IProgress<CalibrationProgress>
    {
        public void Report(CalibrationProgress value) => report(value);
    }
}
