using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;

namespace Triage.Learning.Tests;

/// <summary>
/// One synthetic library and two calibrations shared by the accuracy tests. To keep the suite
/// to about a minute on two cores the library has 160 objects (the default is 400) and the
/// cross-validation 4 folds (default 5); every subtype still has ≥ 8 objects, so each fold
/// tests every subtype and the accuracy estimates keep their meaning (Wilson half-width of
/// the overall accuracy ≈ ±0.02 with ~1200 spectra).
/// </summary>
public sealed class SyntheticCalibrationFixture
{
    public SpectralLibrary Library { get; }
    public AccuracyModelDocument Native { get; }
    public AccuracyModelDocument FixedSnr10 { get; }
    public CalibrationSettings NativeSettings { get; }
    public RecordingClassifier Recorder { get; } = new(SubtypeClassifiers.Create("linear"));

    public SyntheticCalibrationFixture()
    {
        (Library, _) = SyntheticLibrary.Generate(new SynthOptions { Objects = 160, Seed = 11 });
        NativeSettings = new CalibrationSettings { SnrLevels = [null], Folds = 4, Seed = 5 };
        Native = CalibrationPipeline.RunTimed(Library, Taxonomy.Default, NativeSettings, "test", classifier: Recorder).Document;
        FixedSnr10 = CalibrationPipeline.Run(Library, Taxonomy.Default,
            new CalibrationSettings { Resolutions = [50, 500], SnrLevels = [10], Folds = 4, Seed = 5 }, "test");
    }
}

/// <summary>Wraps a classifier and records the size of every training and test set it was given.</summary>
public sealed class RecordingClassifier(ISubtypeClassifier inner) : ISubtypeClassifier
{
    private readonly List<(int Train, int Test)> _calls = [];

    public string Name => inner.Name;

    public IReadOnlyList<(int Train, int Test)> Calls { get { lock (_calls) return _calls.ToArray(); } }

    public int[] TrainAndPredict(float[][] trainFeatures, int[] trainLabels, float[] trainWeights, float[][] testFeatures, int classCount, int seed)
    {
        lock (_calls) _calls.Add((trainFeatures.Length, testFeatures.Length));
        return inner.TrainAndPredict(trainFeatures, trainLabels, trainWeights, testFeatures, classCount, seed);
    }
}

[CollectionDefinition(Name)]
public sealed class SyntheticCalibrationCollection : ICollectionFixture<SyntheticCalibrationFixture>
{
    public const string Name = "synthetic calibration";
}
