// Subtype classifiers trained with Microsoft.ML.
//
// "linear": standardise each feature (mean 0, variance 1 on the training fold), then a
//   multinomial logistic regression p(s|x) ∝ exp(w_s·x + b_s) fitted by stochastic dual
//   coordinate ascent with L2 regularisation.
// "tree": standardise, project on the first 40 principal components (randomised PCA fitted on
//   the training fold), then one-versus-all gradient-boosted trees (FastTree), calibrated scores.
// "lbfgs": as "linear", fitted by L-BFGS instead of SDCA.
// Example weights implement class balancing (N / (K n_class)).
// References:
//  1. Shalev-Shwartz, S. & Zhang, T., "Stochastic dual coordinate ascent methods for regularized loss minimization", JMLR 14, 567 (2013).
//  2. Friedman, J. H., "Greedy function approximation: a gradient boosting machine", Ann. Stat. 29, 1189 (2001).
//  3. Halko, N., Martinsson, P. G. & Tropp, J. A., "Finding structure with randomness", SIAM Rev. 53, 217 (2011) (randomised PCA).
using Microsoft.ML;
using Microsoft.ML.Data;
using Microsoft.ML.Trainers;
using Microsoft.ML.Trainers.FastTree;

namespace Triage.Learning;

/// <summary>A classifier that is trained on one fold and predicts the held-out spectra.</summary>
public interface ISubtypeClassifier
{
    /// <summary>Short name recorded in the calibration JSON.</summary>
    string Name { get; }

    /// <summary>
    /// Trains on (<paramref name="trainFeatures"/>, <paramref name="trainLabels"/> in 0…K−1, weights) and
    /// returns the predicted label (0…K−1) of each test vector.
    /// </summary>
    int[] TrainAndPredict(float[][] trainFeatures, int[] trainLabels, float[] trainWeights, float[][] testFeatures, int classCount, int seed);
}

/// <summary>The available classifiers by name.</summary>
public static class SubtypeClassifiers
{
    /// <summary>Names accepted by <see cref="Create"/>.</summary>
    public static IReadOnlyList<string> Names { get; } = ["linear", "lbfgs", "tree"];

    /// <summary>Creates a classifier by name.</summary>
    /// <exception cref="ArgumentException">Unknown name.</exception>
    public static ISubtypeClassifier Create(string name) => name switch
    {
        "linear" => new MlNetClassifier("linear", (ml, _) =>
            ml.MulticlassClassification.Trainers.SdcaMaximumEntropy(new SdcaMaximumEntropyMulticlassTrainer.Options
            {
                LabelColumnName = "Label", FeatureColumnName = "Features", ExampleWeightColumnName = "Weight",
                NumberOfThreads = 1, MaximumNumberOfIterations = 30, L2Regularization = 1e-3f, Shuffle = true,
            })),
        "lbfgs" => new MlNetClassifier("lbfgs", (ml, _) =>
            ml.MulticlassClassification.Trainers.LbfgsMaximumEntropy(new LbfgsMaximumEntropyMulticlassTrainer.Options
            {
                LabelColumnName = "Label", FeatureColumnName = "Features", ExampleWeightColumnName = "Weight",
                NumberOfThreads = 1, L2Regularization = 1f, MaximumNumberOfIterations = 200,
            })),
        "tree" => new MlNetClassifier("tree", (ml, dim) =>
            ml.MulticlassClassification.Trainers.OneVersusAll(
                ml.BinaryClassification.Trainers.FastTree(new FastTreeBinaryTrainer.Options
                {
                    LabelColumnName = "Label", FeatureColumnName = "Features", ExampleWeightColumnName = "Weight",
                    NumberOfThreads = 1, NumberOfTrees = 60, NumberOfLeaves = 12, MinimumExampleCountPerLeaf = 5, LearningRate = 0.15,
                }), labelColumnName: "Label"),
            pcaRank: 40),
        _ => throw new ArgumentException($"Unknown classifier '{name}'; known: {string.Join(", ", Names)}.", nameof(name)),
    };

    private sealed class Row
    {
        public string Label = "";
        public float Weight;
        public float[] Features = [];
    }

    private sealed class MlNetClassifier(string name, Func<MLContext, int, IEstimator<ITransformer>> trainer, int pcaRank = 0) : ISubtypeClassifier
    {
        public string Name => name;

        public int[] TrainAndPredict(float[][] trainFeatures, int[] trainLabels, float[] trainWeights, float[][] testFeatures, int classCount, int seed)
        {
            int dim = trainFeatures[0].Length;
            var ml = new MLContext(seed);
            var schema = SchemaDefinition.Create(typeof(Row));
            schema["Features"].ColumnType = new VectorDataViewType(NumberDataViewType.Single, dim);
            string Name(int label) => label.ToString(System.Globalization.CultureInfo.InvariantCulture);
            var train = ml.Data.LoadFromEnumerable(
                trainFeatures.Select((x, i) => new Row { Label = Name(trainLabels[i]), Weight = trainWeights[i], Features = x }), schema);
            var test = ml.Data.LoadFromEnumerable(testFeatures.Select(x => new Row { Label = Name(0), Weight = 1, Features = x }), schema);
            // Fixed key order 0…K−1 so that every fold shares one label dictionary.
            var keys = ml.Data.LoadFromEnumerable(Enumerable.Range(0, classCount).Select(c => new { Label = Name(c) }));
            IEstimator<ITransformer> pipeline = ml.Transforms.Conversion.MapValueToKey("Label", keyData: keys)
                .Append(ml.Transforms.NormalizeMeanVariance("Features"));
            if (pcaRank > 0 && dim > pcaRank)
                pipeline = pipeline.Append(ml.Transforms.ProjectToPrincipalComponents("Features", rank: pcaRank, seed: seed));
            var model = pipeline.Append(trainer(ml, dim))
                .Append(ml.Transforms.Conversion.MapKeyToValue("PredictedName", "PredictedLabel"))
                .Fit(train);
            var predicted = model.Transform(test).GetColumn<string>("PredictedName").ToArray();
            return predicted.Select(p => int.Parse(p, System.Globalization.CultureInfo.InvariantCulture)).ToArray();
        }
    }
}
