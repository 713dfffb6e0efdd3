using Triage.Learning;

namespace Triage.Learning.Tests.Calibration;

public class SubtypeClassifierTests
{
    // Three overlapping Gaussian classes in 20 dimensions (class means 1 apart on a few axes, unit scatter), as feature
    // vectors of a calibration; seeded.
    private static (float[][] X, int[] Y) Blobs(int n, int seed, float offset)
    {
        var rng = new Random(seed);
        var x = new float[n][];
        var y = new int[n];
        for (int i = 0; i < n; i++)
        {
            y[i] = i % 3;
            x[i] = new float[20];
            for (int d = 0; d < 20; d++)
            {
                double g = Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
                x[i][d] = (float)(offset + g + (d % 3 == y[i] ? 1.0 : 0.0));
            }
        }
        return (x, y);
    }

    [Theory]
    [InlineData("linear")]
    [InlineData("lbfgs")]
    public void TrainAndPredict_CommonOffsetOnEveryFeature_SamePredictions(string model)
    {
        // Standardisation fitted on the training fold centres every feature, so a constant added to a feature (a
        // mean-normalised flux sits near 1, a log colour near its own mean) cannot change what the model learns. With
        // scaling only (ML.NET's fixZero default) an offset of 30σ left the fit badly conditioned. Agreement ≥ 98 %
        // allows float rounding to flip a prediction on a class boundary.
        var classifier = SubtypeClassifiers.Create(model);
        var (x, y) = Blobs(600, 1, 0);
        var (t, _) = Blobs(300, 2, 0);
        var (xo, _) = Blobs(600, 1, 30);
        var (to, _) = Blobs(300, 2, 30);
        var w = Enumerable.Repeat(1f, x.Length).ToArray();
        var plain = classifier.TrainAndPredict(x, y, w, t, 3, 7);
        var offset = classifier.TrainAndPredict(xo, y, w, to, 3, 7);
        Assert.InRange(plain.Zip(offset).Count(p => p.First == p.Second) / (double)plain.Length, 0.98, 1.0);
    }
}
