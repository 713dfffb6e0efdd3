// Posterior after a classified spectrum (Bayes' theorem [1, ch. 4], [2, §2.1]):
//   p(k | e) = p(k) · L(k) / Σₖ' p(k') · L(k')
//   L(k)     = Σₐ q(a) · C(a|k)        evidence e = answer distribution q over labels a
//   C(B|k)   = Σ_{j∈B} C(j|k)          a broad-class answer B sums its member subtypes
// C is the confusion channel of the active calibration at the unit's R, the achieved S/N and the
// candidate's phase belief (interpolated and phase-averaged as the accuracy surface does, with the
// same shrinkage). A bare label is q = point mass on it, L(k) = C(label|k). Reported per-class
// probabilities q are soft ("virtual") evidence [3, §2.2.2]: the answer was a with weight q(a), so
// L is the q-mixture of the channel's columns; a point mass gives back the bare-label rule.
// Prior labels the calibration does not know get the mean likelihood of the calibrated ones (the
// report neither favours nor disfavours them). Identified when max_k p(k | e) ≥ τ (default 0.9).
//
// References
// [1] E. T. Jaynes, Probability Theory: The Logic of Science, Cambridge University Press 2003, ch. 4.
// [2] T. M. Cover, J. A. Thomas, Elements of Information Theory, 2nd ed., Wiley 2006, §2.1 and ch. 7 (channels).
// [3] J. Pearl, Probabilistic Reasoning in Intelligent Systems, Morgan Kaufmann 1988, §2.2.2 (virtual evidence).
using Triage.Core.Planning;
using Triage.Core.Spectra;

namespace Triage.Core.Identification;

/// <summary>What an observatory reported about one classified spectrum.</summary>
/// <param name="Label">Reported label: a subtype of the calibration or a broad class.</param>
/// <param name="Probabilities">Optional reported probabilities per label (subtypes or broad classes), summing to 1 ± 0.05; null when only the label is given.</param>
/// <param name="ResolvingPower">R of the unit that took the spectrum, &gt; 0.</param>
/// <param name="AchievedSnr">S/N per resolution element reached, &gt; 0.</param>
/// <param name="Phase">Phase belief at the observation, rest-frame days from peak.</param>
public sealed record ReportedClassification(
    string Label,
    IReadOnlyDictionary<string, double>? Probabilities,
    double ResolvingPower,
    double AchievedSnr,
    PhaseBelief Phase);

/// <summary>The result of one posterior update.</summary>
/// <param name="Posterior">Label → probability after the report, summing to 1.</param>
/// <param name="Likelihood">Label → L(k), the probability of the reported answer given true subtype k.</param>
/// <param name="Cell">The calibration cells the channel came from.</param>
/// <param name="TopSubtype">Most probable subtype after the report.</param>
/// <param name="TopProbability">Its posterior probability.</param>
/// <param name="Identified">True when <paramref name="TopProbability"/> reached the confidence.</param>
public sealed record PosteriorResult(
    IReadOnlyDictionary<string, double> Posterior,
    IReadOnlyDictionary<string, double> Likelihood,
    ChannelCell Cell,
    string TopSubtype,
    double TopProbability,
    bool Identified);

/// <summary>Moves a candidate's subtype probabilities by one classified spectrum.</summary>
public static class PosteriorUpdate
{
    /// <summary>Default confidence at which a candidate counts as identified.</summary>
    public const double DefaultConfidence = 0.9;

    /// <summary>Whether <paramref name="label"/> can be reported: a calibrated subtype or a broad class with at least one calibrated member.</summary>
    public static bool IsReportable(AccuracySurface surface, IReadOnlyList<BroadClass> broadClasses, string label)
    {
        ArgumentNullException.ThrowIfNull(surface);
        ArgumentNullException.ThrowIfNull(broadClasses);
        return surface.Subtypes.Contains(label, StringComparer.Ordinal)
            || broadClasses.Any(b => b.Name == label && b.Subtypes.Any(s => surface.Subtypes.Contains(s, StringComparer.Ordinal)));
    }

    /// <summary>
    /// The column of the channel for one answer label: C(a|k) for every calibrated subtype k,
    /// summed over the members when <paramref name="label"/> is a broad class.
    /// </summary>
    /// <exception cref="ArgumentException">The label is neither a calibrated subtype nor a broad class.</exception>
    public static double[] AnswerColumn(AccuracySurface surface, IReadOnlyList<BroadClass> broadClasses, ReadOnlySpan<double> channel, string label)
    {
        ArgumentNullException.ThrowIfNull(surface);
        ArgumentNullException.ThrowIfNull(broadClasses);
        var k = surface.Subtypes.Count;
        var members = MembersOf(surface, broadClasses, label);
        var column = new double[k];
        for (var s = 0; s < k; s++)
        {
            foreach (var j in members)
            {
                column[s] += channel[s * k + j];
            }
        }

        return column;
    }

    private static int[] MembersOf(AccuracySurface surface, IReadOnlyList<BroadClass> broadClasses, string label)
    {
        var index = IndexOf(surface, label);
        if (index >= 0)
        {
            return [index];
        }

        var broad = broadClasses.FirstOrDefault(b => b.Name == label);
        var members = broad?.Subtypes.Select(s => IndexOf(surface, s)).Where(i => i >= 0).ToArray() ?? [];
        return members.Length > 0
            ? members
            : throw new ArgumentException($"'{label}' is neither a calibrated subtype nor a broad class with calibrated members.", nameof(label));
    }

    private static int IndexOf(AccuracySurface surface, string label)
    {
        for (var i = 0; i < surface.Subtypes.Count; i++)
        {
            if (surface.Subtypes[i] == label)
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>Applies one report to a prior.</summary>
    /// <param name="surface">The active calibration.</param>
    /// <param name="broadClasses">Broad classes a report may name (the calibration's, else the default taxonomy's).</param>
    /// <param name="prior">Label → probability before the report (non-negative, normalised here).</param>
    /// <param name="report">The report.</param>
    /// <param name="confidence">τ in (0, 1]: identified when the top posterior reaches it. Default 0.9.</param>
    /// <exception cref="ArgumentException">The prior is empty or all zero, a label is unknown, or the evidence is impossible under every subtype of the prior.</exception>
    /// <exception cref="ArgumentOutOfRangeException">τ outside (0, 1], or R, S/N or phase invalid.</exception>
    public static PosteriorResult Apply(
        AccuracySurface surface,
        IReadOnlyList<BroadClass> broadClasses,
        IReadOnlyDictionary<string, double> prior,
        ReportedClassification report,
        double confidence = DefaultConfidence)
    {
        ArgumentNullException.ThrowIfNull(surface);
        ArgumentNullException.ThrowIfNull(prior);
        ArgumentNullException.ThrowIfNull(report);
        if (!(confidence > 0 && confidence <= 1))
        {
            throw new ArgumentOutOfRangeException(nameof(confidence), confidence, "The confidence must lie in (0, 1].");
        }

        var k = surface.Subtypes.Count;
        var channel = new double[k * k];
        var cell = surface.AtResolution(report.ResolvingPower).Channel(report.AchievedSnr, report.Phase, channel);
        var evidence = report.Probabilities ?? new Dictionary<string, double> { [report.Label] = 1 };
        var calibrated = new double[k];
        var weight = evidence.Values.Sum();
        foreach (var (label, q) in evidence)
        {
            if (q <= 0)
            {
                continue;
            }

            var column = AnswerColumn(surface, broadClasses, channel, label);
            for (var s = 0; s < k; s++)
            {
                calibrated[s] += q / weight * column[s];
            }
        }

        var meanLikelihood = calibrated.Average();
        var likelihood = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach (var label in prior.Keys)
        {
            var i = IndexOf(surface, label);
            likelihood[label] = i >= 0 ? calibrated[i] : meanLikelihood;
        }

        var posterior = Bayes(prior, likelihood);
        var top = posterior.OrderByDescending(p => p.Value).ThenBy(p => p.Key, StringComparer.Ordinal).First();
        return new PosteriorResult(posterior, likelihood, cell, top.Key, top.Value, top.Value >= confidence - 1e-12);
    }

    /// <summary>
    /// p(k | j) = p(k) C(j|k) / m(j) into <paramref name="posterior"/> for answer index
    /// <paramref name="answer"/> of a K·K channel; returns m(j) = Σₖ p(k) C(j|k) (the posterior is
    /// left unnormalised, all zero, when m(j) = 0).
    /// </summary>
    public static double Bayes(ReadOnlySpan<double> prior, ReadOnlySpan<double> channel, int answer, Span<double> posterior)
    {
        var k = prior.Length;
        var m = 0.0;
        for (var s = 0; s < k; s++)
        {
            posterior[s] = prior[s] * channel[s * k + answer];
            m += posterior[s];
        }

        if (m > 0)
        {
            for (var s = 0; s < k; s++)
            {
                posterior[s] /= m;
            }
        }

        return m;
    }

    /// <summary>p(k)·L(k) normalised over the prior's labels.</summary>
    /// <exception cref="ArgumentException">The prior is empty, negative or all zero, or the product vanishes everywhere.</exception>
    public static Dictionary<string, double> Bayes(IReadOnlyDictionary<string, double> prior, IReadOnlyDictionary<string, double> likelihood)
    {
        ArgumentNullException.ThrowIfNull(prior);
        ArgumentNullException.ThrowIfNull(likelihood);
        if (prior.Count == 0 || prior.Values.Any(p => !(p >= 0) || double.IsInfinity(p)))
        {
            throw new ArgumentException("The prior needs finite non-negative probabilities.", nameof(prior));
        }

        var joint = prior.ToDictionary(p => p.Key, p => p.Value * likelihood.GetValueOrDefault(p.Key), StringComparer.Ordinal);
        var evidence = joint.Values.Sum();
        if (!(evidence > 0))
        {
            throw new ArgumentException("The report is impossible under every subtype the prior allows.", nameof(likelihood));
        }

        return joint.ToDictionary(p => p.Key, p => p.Value / evidence, StringComparer.Ordinal);
    }
}
