// Subtype classifiers trained with Microsoft.ML.
//
// "linear": standardise each feature (mean 0, variance 1 on the training fold), then a
//   multinomial logistic regression p(s|x) ∝ exp(w_s·x + b_s) fitted by stochastic dual
//   coordinate ascent with L2 regularisation, at most 30 passes over the fold (fewer passes regularise
//   like a stronger L2 penalty [5]: measured in docs/calibration.md, not taken), converged or not checked every 10th pass.
// "tree": standardise, project on the first 40 principal components (randomised PCA fitted on
//   the training fold), then one-versus-all gradient-boosted trees (FastTree), calibrated scores.
// "lbfgs": as "linear", fitted by L-BFGS instead of SDCA.
// "boosted": standardise, then one multiclass (softmax) gradient-boosted tree model (LightGBM) on all features.
// Example weights implement class balancing (N / (K n_class)).
// References:
//  1. Shalev-Shwartz, S. & Zhang, T., "Stochastic dual coordinate ascent methods for regularized loss minimization", JMLR 14, 567 (2013).
//  2. Friedman, J. H., "Greedy function approximation: a gradient boosting machine", Ann. Stat. 29, 1189 (2001).
//  3. Ke, G. et al., "LightGBM: a highly efficient gradient boosting decision tree", NeurIPS 30 (2017).
//  4. Halko, N., Martinsson, P. G. & Tropp, J. A., "Finding structure with randomness", SIAM Rev. 53, 217 (2011) (randomised PCA).
//  5. Yao, Y., Rosasco, L. & Caponnetto, A., "On early stopping in gradient descent learning", Constr. Approx. 26, 289 (2007).
using Microsoft.ML;
using Microsoft.ML.Data;
using Microsoft.ML.Trainers;
using Microsoft.ML.Trainers.FastTree;
using Microsoft.ML.Trainers.LightGbm;

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
    /// <summary>
    /// Passes of SDCA over the training fold for "linear". Default 30: 10 passes were measured (docs/calibration.md,
    /// "Classifier passes") to cost a third of the training time and to raise overall accuracy, but to lower the mean
    /// per-subtype recall, which the planner reads, by up to 3.5 points; so the default stays.
    /// </summary>
    public const int LinearIterations = 30;

    /// <summary>
    /// Passes of SDCA between its convergence checks for "linear". On one thread the trainer checks after every pass by
    /// default: an extra pass over the fold each time (a third of the training) that, on the default library, never
    /// stopped a fit early (the best model came from pass 28–30). Checking every 10th pass keeps the stopping rule and
    /// the best-of-checks model at a tenth of the cost; predictions moved no more than a change of the shuffling seed
    /// moves them (docs/calibration.md, "Speed").
    /// </summary>
    public const int ConvergenceCheckPasses = 10;

    /// <summary>Names accepted by <see cref="Create"/>.</summary>
    public static IReadOnlyList<string> Names { get; } = ["linear", "lbfgs", "tree", "boosted"];

    /// <summary>Creates a classifier by name.</summary>
    /// <param name="name">One of <see cref="Names"/>.</param>
    /// <param name="passes">Passes over the training fold for "linear" (SDCA) and "lbfgs" (iterations); null: their defaults.</param>
    /// <exception cref="ArgumentException">Unknown name, passes below 1, or passes given for a tree model.</exception>
    public static ISubtypeClassifier Create(string name, int? passes = null)
    {
        if (passes is < 1) throw new ArgumentException("Passes must be at least 1.", nameof(passes));
        if (passes is not null && name is "tree" or "boosted")
            throw new ArgumentException($"Passes apply to the linear and lbfgs classifiers, not to '{name}'.", nameof(passes));
        return Build(name, passes);
    }

    private static ISubtypeClassifier Build(string name, int? passes) => name switch
    {
        "linear" => new MlNetClassifier("linear", (ml, _) =>
            ml.MulticlassClassification.Trainers.SdcaMaximumEntropy(new SdcaMaximumEntropyMulticlassTrainer.Options
            {
                LabelColumnName = "Label", FeatureColumnName = "Features", ExampleWeightColumnName = "Weight",
                NumberOfThreads = 1, MaximumNumberOfIterations = passes ?? LinearIterations, L2Regularization = 1e-3f, Shuffle = true,
                ConvergenceCheckFrequency = ConvergenceCheckPasses,
            })),
        "lbfgs" => new MlNetClassifier("lbfgs", (ml, _) =>
            ml.MulticlassClassification.Trainers.LbfgsMaximumEntropy(new LbfgsMaximumEntropyMulticlassTrainer.Options
            {
                LabelColumnName = "Label", FeatureColumnName = "Features", ExampleWeightColumnName = "Weight",
                NumberOfThreads = 1, L2Regularization = 1f, MaximumNumberOfIterations = passes ?? 200,
            })),
        "tree" => new MlNetClassifier("tree", (ml, dim) =>
            ml.MulticlassClassification.Trainers.OneVersusAll(
                ml.BinaryClassification.Trainers.FastTree(new FastTreeBinaryTrainer.Options
                {
                    LabelColumnName = "Label", FeatureColumnName = "Features", ExampleWeightColumnName = "Weight",
                    NumberOfThreads = 1, NumberOfTrees = 60, NumberOfLeaves = 12, MinimumExampleCountPerLeaf = 5, LearningRate = 0.15,
                }), labelColumnName: "Label"),
            pcaRank: 40),
        "boosted" => new MlNetClassifier("boosted", (ml, _) =>
            ml.MulticlassClassification.Trainers.LightGbm(new LightGbmMulticlassTrainer.Options
            {
                LabelColumnName = "Label", FeatureColumnName = "Features", ExampleWeightColumnName = "Weight",
                NumberOfThreads = 1, NumberOfIterations = 100, NumberOfLeaves = 15, MinimumExampleCountPerLeaf = 10,
                LearningRate = 0.1, UseSoftmax = true,
            })),
        _ => throw new ArgumentException($"Unknown classifier '{name}'; known: {string.Join(", ", Names)}.", nameof(name)),
    };

    private sealed class Row
    {
        public uint Label;
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
            // The label is a key column of K values, so every fold shares one label set without a string
            // dictionary. Loading from a class takes the 0-based index; the key read back is 1-based (0 = missing).
            var schema = SchemaDefinition.Create(typeof(Row));
            schema["Features"].ColumnType = new VectorDataViewType(NumberDataViewType.Single, dim);
            schema["Label"].ColumnType = new KeyDataViewType(typeof(uint), classCount);
            var train = ml.Data.LoadFromEnumerable(
                trainFeatures.Select((x, i) => new Row { Label = (uint)trainLabels[i], Weight = trainWeights[i], Features = x }), schema);
            var test = ml.Data.LoadFromEnumerable(testFeatures.Select(x => new Row { Label = 0, Weight = 1, Features = x }), schema);
            // Standardised to mean 0 and unit variance on the training fold. ML.NET's default (fixZero) only scales:
            // features with a large common offset (mean-normalised flux ≈ 1, log colours) then leave the problem badly
            // conditioned and the regularisation acting on the offset (docs/calibration.md, "Centred standardisation").
            IEstimator<ITransformer> pipeline = ml.Transforms.NormalizeMeanVariance("Features", fixZero: false);
            if (pcaRank > 0 && dim > pcaRank)
                pipeline = pipeline.Append(ml.Transforms.ProjectToPrincipalComponents("Features", rank: pcaRank, seed: seed));
            // The trainers pass over the data many times: cache the normalised rows once instead of
            // re-running the enumerable and the transforms on every pass.
            var model = pipeline.AppendCacheCheckpoint(ml).Append(trainer(ml, dim)).Fit(train);
            var predicted = model.Transform(test).GetColumn<uint>("PredictedLabel").ToArray();
            return predicted.Select(p => p > 0 ? (int)p - 1 : throw new InvalidOperationException("The classifier returned no label.")).ToArray();
        }
    }
}
