// Value of one spectrum of a candidate on a spectrograph of resolving power R reaching S/N n
// (per resolution element) while the candidate's phase is believed to be N(μ, σ²) days:
//   w_b      = Φ((b.to − μ)/σ) − Φ((b.from − μ)/σ)             phase-bin weights [2], tails to the end bins
//   C̃_b(j|s) = shrunk confusion row at grid points, bilinear in (ln R, ln n) between them
//   A        = Σₛ p(s) Σ_b w_b C̃_b(s|s)                       expected accuracy (recall = channel diagonal)
//   C(j|s)   = Σ_b w_b C̃_b(j|s)                               channel averaged over the phase belief
//   I        = I(S;J) from p and C                              information gain in bits [1]
// Only calibration cells at a numeric S/N are used: a noiseless ("native") cell has no single S/N
// (its realised S/N grows as √(R₀/R)), so it cannot sit on the S/N axis.
// Shrinkage (empirical Bayes, beta-binomial [3, 4]): within a broad class c, the recalls r_s of its
// subtypes at one grid point g, each measured on n_s effective spectra (n/deff of the cell, the
// object-level sample size), are modelled as r_s ~ Beta(M μ_c, M(1 − μ_c)) around the class mean
// μ_c = Σ n_s r_s / Σ n_s. The intra-class correlation ρ = 1/(M + 1) is estimated by the method of
// moments [4, eq. 2.3] pooled over every grid point g of the class:
//   S_g = Σ_s n_s (r_s − μ)²,  E[S_g] = μ(1 − μ)[(K_g − 1)(1 − ρ) + ρ(N_g − Σ n_s²/N_g)]
//   ρ̂  = Σ_g [S_g/(μ(1 − μ)) − (K_g − 1)] / Σ_g [N_g − Σ n_s²/N_g − (K_g − 1)],  M̂ = 1/ρ̂ − 1
// (ρ̂ ≤ 0, no spread beyond sampling noise, is floored at 1/(1 + MaxConcentration)). The posterior mean
// recall is (n_s r_s + M̂ μ)/(n_s + M̂) [3]; the whole confusion row is shrunk the same way towards
// the class row T_s (diagonal μ, errors spread like the class's pooled errors), so its diagonal IS
// the shrunk recall and expected accuracy and information gain use the same numbers.
//
// References
// [1] T. M. Cover, J. A. Thomas, Elements of Information Theory, 2nd ed., Wiley 2006, eq. 2.28.
// [2] M. Abramowitz, I. A. Stegun, Handbook of Mathematical Functions, 1964, eq. 26.2.2 (normal CDF).
// [3] B. Efron, C. Morris, "Data analysis using Stein's estimator and its generalizations",
//     JASA 70 (1975) 311 (shrinkage towards the group mean).
// [4] D. G. Kleinman, "Proportions with extraneous variance: single and independent samples",
//     JASA 68 (1973) 46 (beta-binomial moment estimators with weights n_s).
using Triage.Core.Calibration;

namespace Triage.Core.Planning;

/// <summary>Which recall estimate of a calibration cell the planner trusts.</summary>
public enum RecallEstimate
{
    /// <summary>The measured recall and confusion rows as they are.</summary>
    Point,

    /// <summary>
    /// Recall and confusion rows shrunk towards the subtype's broad class by empirical Bayes
    /// (strength estimated from the calibration, see <see cref="AccuracySurface.Shrinkage"/>).
    /// </summary>
    Shrunk,
}

/// <summary>Settings of the accuracy surface.</summary>
public sealed record AccuracySurfaceOptions
{
    /// <summary>
    /// Recall estimate used. Default <see cref="RecallEstimate.Shrunk"/>: a class seen in few objects is
    /// pulled towards its broad class by as much as the calibration's own spread says.
    /// </summary>
    public RecallEstimate Recall { get; init; } = RecallEstimate.Shrunk;

    /// <summary>
    /// Prior concentration M (in effective spectra) to use instead of the estimated one; null (default): estimated
    /// per broad class from the calibration.
    /// </summary>
    public double? ShrinkageConcentration { get; init; }

    /// <summary>Upper limit of the estimated concentration M (reached when subtypes spread no more than sampling noise). Default 1000.</summary>
    public double MaxConcentration { get; init; } = 1000;
}

/// <summary>The estimated shrinkage of one broad class.</summary>
/// <param name="BroadClass">Broad class name.</param>
/// <param name="IntraClassCorrelation">ρ̂ = 1/(M + 1), NaN when the class had no grid point with two measured subtypes.</param>
/// <param name="Concentration">M, prior strength in effective spectra (0: no shrinkage).</param>
/// <param name="GridPoints">Grid points (R, S/N, phase bin) that entered the estimate.</param>
public sealed record ShrinkageStrength(string BroadClass, double IntraClassCorrelation, double Concentration, int GridPoints);

/// <summary>A belief about a candidate's phase: rest-frame days from peak, Gaussian.</summary>
/// <param name="MeanDays">Most likely phase, days (negative before peak).</param>
/// <param name="SigmaDays">Standard deviation, days, ≥ 0 (0: known exactly).</param>
public readonly record struct PhaseBelief(double MeanDays, double SigmaDays);

/// <summary>Expected science of one spectrum.</summary>
/// <param name="ExpectedAccuracy">A = Σₛ p(s) recallₛ, 0…1: probability the subtype is identified correctly.</param>
/// <param name="InformationBits">I(S;J) in bits: what the answer tells about the true subtype.</param>
/// <param name="Clamped">True when R, S/N or phase lay outside the calibration grid and were clamped to its edge.</param>
public readonly record struct ObservationValue(double ExpectedAccuracy, double InformationBits, bool Clamped);

/// <summary>
/// The calibration as a continuous function of R, S/N and phase, for the planner.
/// </summary>
/// <remarks>
/// Interpolation is bilinear in ln R and ln S/N between grid points and exact at grid points.
/// Outside the grid the value of the nearest edge is used and <see cref="ObservationValue.Clamped"/>
/// is set (never a silent extrapolation). Missing cells are filled from the same subtype's other
/// phase bins, else from the chance rate 1/K; each fill is listed in <see cref="Notes"/>. Without
/// a confusion matrix for a grid point the channel is built from the recalls with errors spread
/// evenly over the other subtypes. Cells without a numeric S/N (native) are not used.
/// </remarks>
public sealed class AccuracySurface
{
    private readonly double[] _logR;
    private readonly double[] _logSnr;
    private readonly PhaseBin[] _bins;
    private readonly int _k;

    // channel[((r * nS + s) * nP + p) * K * K + i * K + j]
    private readonly double[] _channel;
    private readonly Dictionary<string, int> _subtypeIndex;

    /// <summary>Subtypes in the order used by aligned priors.</summary>
    public IReadOnlyList<string> Subtypes { get; }

    /// <summary>Resolving powers of the grid, ascending.</summary>
    public IReadOnlyList<double> Resolutions { get; }

    /// <summary>S/N axis, ascending: the numeric S/N levels of the calibration.</summary>
    public IReadOnlyList<double> SnrAxis { get; }

    /// <summary>The numeric S/N levels of the calibration, ascending: the exposure levels worth planning (same as <see cref="SnrAxis"/>).</summary>
    public IReadOnlyList<double> FiniteSnrLevels { get; }

    /// <summary>The options in force.</summary>
    public AccuracySurfaceOptions Options { get; }

    /// <summary>How gaps in the calibration were filled (empty for a complete grid).</summary>
    public IReadOnlyList<string> Notes { get; }

    /// <summary>The shrinkage applied per broad class (empty for <see cref="RecallEstimate.Point"/>).</summary>
    public IReadOnlyList<ShrinkageStrength> Shrinkage { get; }

    private AccuracySurface(
        string[] subtypes, double[] resolutions, double[] snrAxis, PhaseBin[] bins,
        double[] channel, AccuracySurfaceOptions options, List<string> notes, IReadOnlyList<ShrinkageStrength> shrinkage)
    {
        Subtypes = subtypes;
        _k = subtypes.Length;
        _subtypeIndex = subtypes.Select((s, i) => (s, i)).ToDictionary(t => t.s, t => t.i, StringComparer.Ordinal);
        Resolutions = resolutions;
        SnrAxis = snrAxis;
        FiniteSnrLevels = snrAxis;
        _logR = resolutions.Select(x => Math.Log(x)).ToArray();
        _logSnr = snrAxis.Select(x => Math.Log(x)).ToArray();
        _bins = bins;
        _channel = channel;
        Options = options;
        Notes = notes;
        Shrinkage = shrinkage;
    }

    /// <summary>Builds the surface from a calibration document.</summary>
    /// <exception cref="ArgumentException">The document has no subtypes, resolutions, numeric S/N levels
    /// or phase bins, or a non-positive R or S/N.</exception>
    public static AccuracySurface FromDocument(AccuracyModelDocument document, AccuracySurfaceOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(document);
        options ??= new AccuracySurfaceOptions();
        var finite = document.SnrLevels.Where(s => s.HasValue).Select(s => s!.Value).Distinct().Order().ToArray();
        if (document.Subtypes.Count == 0 || document.Resolutions.Count == 0 || finite.Length == 0 || document.PhaseBins.Count == 0)
        {
            throw new ArgumentException("The calibration needs subtypes, resolutions, numeric S/N levels and phase bins (native cells alone have no S/N to plan with).", nameof(document));
        }

        if (document.Resolutions.Any(r => !(r > 0)))
        {
            throw new ArgumentException("Every resolving power of the calibration must be positive.", nameof(document));
        }

        if (finite.Any(s => !(s > 0)))
        {
            throw new ArgumentException("Every numeric S/N level of the calibration must be positive.", nameof(document));
        }

        var subtypes = document.Subtypes.ToArray();
        var k = subtypes.Length;
        var sIndex = subtypes.Select((s, i) => (s, i)).ToDictionary(t => t.s, t => t.i, StringComparer.Ordinal);
        var resolutions = document.Resolutions.Distinct().Order().ToArray();
        var snrAxis = finite;
        var bins = document.PhaseBins.OrderBy(b => b.FromDays).ToArray();
        var binIndex = bins.Select((b, i) => (b.Name, i)).ToDictionary(t => t.Name, t => t.i, StringComparer.Ordinal);
        int nR = resolutions.Length, nS = snrAxis.Length, nP = bins.Length;

        int RIndex(double r) => Array.FindIndex(resolutions, x => Math.Abs(x - r) <= 1e-9 * Math.Max(1, x));
        int SIndex(double? snr) => snr is null ? -1 : Array.FindIndex(finite, x => Math.Abs(x - snr.Value) <= 1e-9 * Math.Max(1, x));

        var recall = new double[nR * nS * nP * k];
        Array.Fill(recall, double.NaN);
        var weight = new double[recall.Length];
        var notes = new List<string>();
        foreach (var cell in document.Cells)
        {
            // An unreachable cell was not measured at its label's S/N.
            if (!cell.Reachable)
            {
                continue;
            }

            if (!sIndex.TryGetValue(cell.Subtype, out var si) || !binIndex.TryGetValue(cell.PhaseBin, out var pi))
            {
                continue;
            }

            int ri = RIndex(cell.Resolution), ni = SIndex(cell.Snr);
            if (ri < 0 || ni < 0)
            {
                continue;
            }

            var at = (((ri * nS) + ni) * nP + pi) * k + si;
            recall[at] = cell.Recall;
            weight[at] = cell.EffectiveSpectra ?? (cell.Objects > 0 ? cell.Objects : cell.Spectra);
        }

        FillGaps(recall, subtypes, resolutions, snrAxis, bins, notes);
        var channel = BuildChannels(document, recall, subtypes, sIndex, resolutions, snrAxis, bins, binIndex, RIndex, SIndex, notes);
        var shrinkage = options.Recall == RecallEstimate.Shrunk
            ? ShrinkTowardsBroadClass(channel, recall, weight, subtypes, document.BroadClasses, options, notes)
            : [];

        // The recall the planner uses is the channel's diagonal, so accuracy and information agree.
        return new AccuracySurface(subtypes, resolutions, snrAxis, bins, channel, options, notes, shrinkage);
    }

    private static List<ShrinkageStrength> ShrinkTowardsBroadClass(double[] channel, double[] recall, double[] weight, string[] subtypes,
        IReadOnlyList<Triage.Core.Spectra.BroadClass> broadClasses, AccuracySurfaceOptions options, List<string> notes)
    {
        int k = subtypes.Length, kk = k * k, points = recall.Length / k;
        var groups = broadClasses
            .Select(c => (c.Name, Members: c.Subtypes.Select(s => Array.IndexOf(subtypes, s)).Where(i => i >= 0).Distinct().ToArray()))
            .Where(c => c.Members.Length > 0).ToList();
        var unassigned = Enumerable.Range(0, k).Where(i => !groups.Any(c => c.Members.Contains(i))).ToArray();
        if (unassigned.Length > 0)
        {
            groups.Add((groups.Count == 0 ? "all subtypes" : "other subtypes", unassigned));
        }

        var result = new List<ShrinkageStrength>();
        var target = new double[k];
        var shrunk = new double[k];
        foreach (var (name, members) in groups)
        {
            // Method of moments pooled over the grid points.
            double num = 0, den = 0;
            var used = 0;
            for (var g = 0; g < points; g++)
            {
                double n = 0, nr = 0, n2 = 0;
                var present = 0;
                foreach (var s in members)
                {
                    var w = weight[g * k + s];
                    if (w > 0)
                    {
                        n += w;
                        nr += w * recall[g * k + s];
                        n2 += w * w;
                        present++;
                    }
                }

                if (present < 2)
                {
                    continue;
                }

                var mu = nr / n;
                if (mu <= 0 || mu >= 1)
                {
                    continue;
                }

                var ss = members.Where(s => weight[g * k + s] > 0).Sum(s => weight[g * k + s] * Math.Pow(recall[g * k + s] - mu, 2));
                num += ss / (mu * (1 - mu)) - (present - 1);
                den += n - n2 / n - (present - 1);
                used++;
            }

            double rho = den > 0 ? num / den : double.NaN;
            double m = options.ShrinkageConcentration
                ?? (double.IsNaN(rho) || rho >= 1 ? 0 : rho <= 1 / (1 + options.MaxConcentration) ? options.MaxConcentration : 1 / rho - 1);
            result.Add(new ShrinkageStrength(name, rho, m, used));
            if (m <= 0)
            {
                continue;
            }

            for (var g = 0; g < points; g++)
            {
                double n = 0, nr = 0;
                foreach (var s in members)
                {
                    var w = weight[g * k + s];
                    n += w;
                    nr += w * channel[g * kk + s * k + s];
                }

                if (n <= 0)
                {
                    continue;
                }

                var mu = nr / n;

                // The class's pooled errors (answers other than the true subtype), weighted like the mean.
                var errors = new double[k];
                foreach (var t in members)
                {
                    for (var j = 0; j < k; j++)
                    {
                        if (j != t)
                        {
                            errors[j] += weight[g * k + t] * channel[g * kk + t * k + j];
                        }
                    }
                }

                foreach (var s in members)
                {
                    var w = weight[g * k + s];
                    if (w <= 0)
                    {
                        continue;
                    }

                    var row = channel.AsSpan(g * kk + s * k, k);
                    ClassRow(errors, row, s, mu, target);
                    for (var j = 0; j < k; j++)
                    {
                        shrunk[j] = (w * row[j] + m * target[j]) / (w + m);
                    }

                    shrunk.CopyTo(row);
                }
            }
        }

        notes.Add("Recall and confusion rows shrunk towards the broad class (empirical Bayes): " + string.Join("; ", result.Select(r =>
            string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{r.BroadClass} M = {r.Concentration:0.#} effective spectra"))) + ".");
        return result;
    }

    // Target row of subtype s: μ on the diagonal, 1 − μ spread like the class's pooled errors other than s itself,
    // else like s's own errors, else evenly.
    private static void ClassRow(double[] classErrors, ReadOnlySpan<double> own, int s, double mu, double[] target)
    {
        var k = target.Length;
        double Sum(Func<int, double> f)
        {
            double t = 0;
            for (var j = 0; j < k; j++)
            {
                if (j != s)
                {
                    t += f(j);
                }
            }

            return t;
        }

        var pooled = Sum(j => classErrors[j]);
        var ownTotal = 0.0;
        for (var j = 0; j < k; j++)
        {
            if (j != s)
            {
                ownTotal += own[j];
            }
        }

        for (var j = 0; j < k; j++)
        {
            target[j] = j == s ? mu
                : pooled > 0 ? (1 - mu) * classErrors[j] / pooled
                : ownTotal > 0 ? (1 - mu) * own[j] / ownTotal
                : k > 1 ? (1 - mu) / (k - 1) : 0;
        }
    }

    private static void FillGaps(double[] recall, string[] subtypes, double[] resolutions, double[] snrAxis, PhaseBin[] bins, List<string> notes)
    {
        int k = subtypes.Length, nS = snrAxis.Length, nP = bins.Length;
        var chanceFills = 0;
        var phaseFills = 0;
        for (var r = 0; r < resolutions.Length; r++)
        {
            for (var n = 0; n < nS; n++)
            {
                for (var s = 0; s < k; s++)
                {
                    var known = new List<double>();
                    for (var p = 0; p < nP; p++)
                    {
                        var v = recall[((r * nS + n) * nP + p) * k + s];
                        if (!double.IsNaN(v))
                        {
                            known.Add(v);
                        }
                    }

                    for (var p = 0; p < nP; p++)
                    {
                        var at = ((r * nS + n) * nP + p) * k + s;
                        if (!double.IsNaN(recall[at]))
                        {
                            continue;
                        }

                        if (known.Count > 0)
                        {
                            recall[at] = known.Average();
                            phaseFills++;
                        }
                        else
                        {
                            recall[at] = 1.0 / k;
                            chanceFills++;
                        }
                    }
                }
            }
        }

        if (phaseFills > 0)
        {
            notes.Add($"{phaseFills} calibration cells missing for a phase bin were filled with the mean of the subtype's other phase bins.");
        }

        if (chanceFills > 0)
        {
            notes.Add($"{chanceFills} calibration cells with no data at any phase were set to the chance rate 1/{k}.");
        }
    }

    private static double[] BuildChannels(
        AccuracyModelDocument document, double[] recall, string[] subtypes, Dictionary<string, int> sIndex,
        double[] resolutions, double[] snrAxis, PhaseBin[] bins, Dictionary<string, int> binIndex,
        Func<double, int> rIndex, Func<double?, int> nIndex, List<string> notes)
    {
        int k = subtypes.Length, nS = snrAxis.Length, nP = bins.Length, kk = k * k;
        var channel = new double[resolutions.Length * nS * nP * kk];
        var filled = new bool[resolutions.Length * nS * nP];
        var pooled = new Dictionary<(int, int), double[]>();

        foreach (var m in document.Confusions)
        {
            int ri = rIndex(m.Resolution), ni = nIndex(m.Snr);
            if (ri < 0 || ni < 0 || m.Counts.Count != m.Labels.Count)
            {
                continue;
            }

            var rows = new double[kk];
            var rowSeen = new bool[k];
            for (var i = 0; i < m.Labels.Count; i++)
            {
                if (!sIndex.TryGetValue(m.Labels[i], out var si) || m.Counts[i].Count != m.Labels.Count)
                {
                    continue;
                }

                double total = m.Counts[i].Sum();
                if (total <= 0)
                {
                    continue;
                }

                for (var j = 0; j < m.Labels.Count; j++)
                {
                    // An answer outside the planner's subtypes can never be a correct identification;
                    // keep it as "wrong", spread over the other classes.
                    if (sIndex.TryGetValue(m.Labels[j], out var sj))
                    {
                        rows[si * k + sj] += m.Counts[i][j] / total;
                    }
                }

                rowSeen[si] = true;
            }

            if (binIndex.TryGetValue(m.PhaseBin, out var pi))
            {
                var g = (ri * nS + ni) * nP + pi;
                CompleteRows(rows, rowSeen, recall, g * k, k);
                rows.CopyTo(channel, g * kk);
                filled[g] = true;
            }
            else
            {
                pooled[(ri, ni)] = rows;
                CompleteRows(rows, rowSeen, recall, ((ri * nS + ni) * nP) * k, k);
            }
        }

        var fromRecall = 0;
        for (var g = 0; g < filled.Length; g++)
        {
            if (filled[g])
            {
                continue;
            }

            var rn = g / nP;
            if (pooled.TryGetValue((rn / nS, rn % nS), out var rows))
            {
                rows.CopyTo(channel, g * kk);
                continue;
            }

            var rowsFromRecall = new double[kk];
            CompleteRows(rowsFromRecall, new bool[k], recall, g * k, k);
            rowsFromRecall.CopyTo(channel, g * kk);
            fromRecall++;
        }

        if (fromRecall > 0)
        {
            notes.Add($"{fromRecall} grid points had no confusion matrix; their channel was built from the recalls with errors spread evenly.");
        }

        return channel;
    }

    // Rows never observed get recall on the diagonal and the rest spread evenly; observed rows
    // that leaked mass to labels outside the planner's list are topped up the same way.
    private static void CompleteRows(double[] rows, bool[] seen, double[] recall, int recallOffset, int k)
    {
        for (var i = 0; i < k; i++)
        {
            var row = rows.AsSpan(i * k, k);
            if (!seen[i])
            {
                var r = Math.Clamp(recall[recallOffset + i], 0, 1);
                row.Fill(k > 1 ? (1 - r) / (k - 1) : 0);
                row[i] = k > 1 ? r : 1;
                continue;
            }

            var sum = 0.0;
            foreach (var v in row)
            {
                sum += v;
            }

            if (sum < 1 - 1e-12 && k > 1)
            {
                var missing = (1 - sum) / (k - 1);
                for (var j = 0; j < k; j++)
                {
                    if (j != i)
                    {
                        row[j] += missing;
                    }
                }
            }
        }
    }

    /// <summary>
    /// Maps a subtype probability table onto <see cref="Subtypes"/>. Labels the calibration does
    /// not know keep their mass out of the vector (they can never be identified correctly).
    /// </summary>
    /// <param name="probabilities">Label → probability (non-negative; normalised here).</param>
    /// <returns>The aligned prior; its sum is the calibrated share of the probability (≤ 1).</returns>
    /// <exception cref="ArgumentException">A probability is negative or not finite, or all are zero.</exception>
    public double[] AlignPrior(IReadOnlyDictionary<string, double> probabilities)
    {
        ArgumentNullException.ThrowIfNull(probabilities);
        var total = 0.0;
        foreach (var (label, p) in probabilities)
        {
            if (!(p >= 0) || double.IsInfinity(p))
            {
                throw new ArgumentException($"Probability of '{label}' must be a finite non-negative number.", nameof(probabilities));
            }

            total += p;
        }

        if (total <= 0)
        {
            throw new ArgumentException("At least one subtype probability must be positive.", nameof(probabilities));
        }

        var aligned = new double[_k];
        foreach (var (label, p) in probabilities)
        {
            if (_subtypeIndex.TryGetValue(label, out var i))
            {
                aligned[i] += p / total;
            }
        }

        return aligned;
    }

    /// <summary>The surface cut at one resolving power (interpolated once, evaluated many times).</summary>
    /// <param name="resolvingPower">R of the spectrograph, &gt; 0.</param>
    /// <exception cref="ArgumentOutOfRangeException">R is not positive.</exception>
    public ResolutionSlice AtResolution(double resolvingPower)
    {
        if (!(resolvingPower > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(resolvingPower), resolvingPower, "R must be positive.");
        }

        var (lo, hi, t, clamped) = Bracket(_logR, Math.Log(resolvingPower));
        int nS = _logSnr.Length, nP = _bins.Length, kk = _k * _k;
        var channel = new double[nS * nP * kk];
        for (var i = 0; i < channel.Length; i++)
        {
            channel[i] = (1 - t) * _channel[lo * channel.Length + i] + t * _channel[hi * channel.Length + i];
        }

        return new ResolutionSlice(this, resolvingPower, clamped, channel, Resolutions[lo], Resolutions[hi]);
    }

    /// <summary>
    /// The (shrunk) confusion row of <paramref name="trueSubtype"/>: P(answer j | true subtype) for a spectrum at
    /// <paramref name="resolvingPower"/> and <paramref name="snr"/> under the phase belief, aligned to <see cref="Subtypes"/>.
    /// Its entry at the true subtype is the recall that <see cref="Evaluate"/> uses for expected accuracy.
    /// </summary>
    /// <param name="trueSubtype">A label of <see cref="Subtypes"/>.</param>
    /// <param name="resolvingPower">R, &gt; 0 (clamped to the grid's edge outside it).</param>
    /// <param name="snr">S/N per resolution element, &gt; 0 (clamped likewise).</param>
    /// <param name="phase">Phase belief.</param>
    /// <returns>K probabilities summing to 1.</returns>
    /// <exception cref="ArgumentException">The subtype is not calibrated.</exception>
    public double[] ConfusionRow(string trueSubtype, double resolvingPower, double snr, PhaseBelief phase)
    {
        if (!_subtypeIndex.TryGetValue(trueSubtype, out var s))
        {
            throw new ArgumentException($"Subtype '{trueSubtype}' is not in the calibration.", nameof(trueSubtype));
        }

        return AtResolution(resolvingPower).Channel(snr, phase).AsSpan(s * _k, _k).ToArray();
    }

    /// <summary>Expected accuracy and information of one spectrum (convenience over <see cref="AtResolution"/>).</summary>
    public ObservationValue Evaluate(ReadOnlySpan<double> alignedPrior, double resolvingPower, double snr, PhaseBelief phase)
        => AtResolution(resolvingPower).Evaluate(alignedPrior, snr, phase);

    internal static (int Lo, int Hi, double T, bool Clamped) Bracket(double[] axis, double x)
    {
        if (axis.Length == 1)
        {
            return (0, 0, 0, Math.Abs(x - axis[0]) > 1e-9);
        }

        if (x <= axis[0])
        {
            return (0, 0, 0, x < axis[0] - 1e-9);
        }

        if (x >= axis[^1])
        {
            return (axis.Length - 1, axis.Length - 1, 0, x > axis[^1] + 1e-9);
        }

        var hi = 1;
        while (axis[hi] < x)
        {
            hi++;
        }

        var t = (x - axis[hi - 1]) / (axis[hi] - axis[hi - 1]);
        return (hi - 1, hi, t, false);
    }

    internal int SubtypeCount => _k;

    internal double[] LogSnr => _logSnr;

    internal PhaseBin[] Bins => _bins;
}

/// <summary>The accuracy surface at one resolving power.</summary>
public sealed class ResolutionSlice
{
    private readonly AccuracySurface _surface;
    private readonly double[] _channel;

    private readonly double _gridRLow;
    private readonly double _gridRHigh;

    internal ResolutionSlice(AccuracySurface surface, double resolvingPower, bool clamped, double[] channel, double gridRLow, double gridRHigh)
    {
        _surface = surface;
        _gridRLow = gridRLow;
        _gridRHigh = gridRHigh;
        ResolvingPower = resolvingPower;
        ResolutionClamped = clamped;
        _channel = channel;
    }

    /// <summary>R of this slice.</summary>
    public double ResolvingPower { get; }

    /// <summary>True when R lies outside the calibrated range and the edge was used.</summary>
    public bool ResolutionClamped { get; }

    /// <summary>
    /// The largest recall of any subtype at any S/N and phase bin of this slice, 0…1: no expected
    /// accuracy at this R can exceed it (<see cref="Evaluate"/> averages the channel's diagonal over S/N and phase with weights summing to 1, and over the prior with weights summing to at most 1).
    /// </summary>
    public double MaxRecall()
    {
        // The channel holds one K×K block per (S/N, phase bin); recalls are the blocks' diagonals.
        var k = _surface.SubtypeCount;
        var kk = k * k;
        var best = 0.0;
        for (var block = 0; block + kk <= _channel.Length; block += kk)
        {
            for (var s = 0; s < k; s++)
            {
                best = Math.Max(best, _channel[block + s * k + s]);
            }
        }

        return Math.Clamp(best, 0, 1);
    }

    /// <summary>
    /// Expected accuracy and information gain of one spectrum at S/N <paramref name="snr"/>
    /// (per resolution element) for a candidate with prior <paramref name="alignedPrior"/>
    /// (from <see cref="AccuracySurface.AlignPrior"/>) and phase belief <paramref name="phase"/>.
    /// </summary>
    /// <exception cref="ArgumentException">The prior does not have one entry per subtype.</exception>
    /// <exception cref="ArgumentOutOfRangeException">S/N is not positive, or the phase sigma is negative or not finite.</exception>
    public ObservationValue Evaluate(ReadOnlySpan<double> alignedPrior, double snr, PhaseBelief phase)
    {
        var k = _surface.SubtypeCount;
        if (alignedPrior.Length != k)
        {
            throw new ArgumentException($"The prior must have {k} entries.", nameof(alignedPrior));
        }

        var kk = k * k;
        Span<double> chan = kk <= 1024 ? stackalloc double[kk] : new double[kk];
        var clamped = Mix(snr, phase, chan);
        var mass = 0.0;
        var accuracy = 0.0;
        for (var s = 0; s < k; s++)
        {
            mass += alignedPrior[s];
            accuracy += alignedPrior[s] * chan[s * k + s];
        }

        double info = 0;
        if (mass > 0)
        {
            Span<double> normalised = stackalloc double[k];
            for (var s = 0; s < k; s++)
            {
                normalised[s] = alignedPrior[s] / mass;
            }

            // Uncalibrated labels can never be named, so only the calibrated share of the prior informs.
            info = mass * InformationTheory.MutualInformationBits(normalised, chan);
        }

        return new ObservationValue(Math.Clamp(accuracy, 0, 1), info, clamped);
    }

    /// <summary>
    /// The channel C(j|s) (row-major K×K, row = true subtype, aligned to <see cref="AccuracySurface.Subtypes"/>) at
    /// <paramref name="snr"/> under the phase belief: the shrunk confusion rows, interpolated and phase-weighted as in
    /// <see cref="Evaluate"/>; its diagonal holds the recalls behind the expected accuracy.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">S/N is not positive, or the phase sigma is negative or not finite.</exception>
    public double[] Channel(double snr, PhaseBelief phase)
    {
        var k = _surface.SubtypeCount;
        var chan = new double[k * k];
        Mix(snr, phase, chan);
        return chan;
    }

    /// <summary>
    /// The same channel as <see cref="Channel(double, PhaseBelief)"/> written into <paramref name="channel"/>,
    /// with a description of the calibration cells it came from (for the history of a report).
    /// </summary>
    /// <param name="snr">S/N per resolution element, &gt; 0.</param>
    /// <param name="phase">Phase belief, rest-frame days from peak.</param>
    /// <param name="channel">Receives K·K values, row-major: row s = answers given true subtype s.</param>
    /// <returns>Which grid cells were used, with their weights.</returns>
    /// <exception cref="ArgumentException"><paramref name="channel"/> does not hold K·K values.</exception>
    /// <exception cref="ArgumentOutOfRangeException">S/N is not positive, or the phase is not finite.</exception>
    public ChannelCell Channel(double snr, PhaseBelief phase, Span<double> channel)
    {
        var clamped = FillChannel(snr, phase, channel);
        var bins = _surface.Bins;
        Span<double> w = stackalloc double[bins.Length];
        PhaseWeights(bins, phase, w);
        var weights = new List<PhaseBinWeight>();
        for (var b = 0; b < bins.Length; b++)
        {
            if (w[b] != 0)
            {
                weights.Add(new PhaseBinWeight(bins[b].Name, w[b]));
            }
        }

        var (lo, hi, _, _) = AccuracySurface.Bracket(_surface.LogSnr, Math.Log(snr));
        var axis = _surface.SnrAxis;
        return new ChannelCell(ResolvingPower, _gridRLow, _gridRHigh, snr, axis[lo], axis[hi], weights, clamped);
    }

    /// <summary>The channel written into <paramref name="channel"/> (K·K) without allocating, for valuing many options.</summary>
    /// <returns>True when R, S/N or phase were clamped to the grid's edge.</returns>
    /// <exception cref="ArgumentException"><paramref name="channel"/> does not hold K·K values.</exception>
    public bool FillChannel(double snr, PhaseBelief phase, Span<double> channel)
    {
        if (channel.Length != _surface.SubtypeCount * _surface.SubtypeCount)
        {
            throw new ArgumentException("The channel must hold K×K values.", nameof(channel));
        }

        return Mix(snr, phase, channel);
    }

    // Phase-weighted, S/N-interpolated channel; returns whether anything was clamped.
    private bool Mix(double snr, PhaseBelief phase, Span<double> chan)
    {
        if (!(snr > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(snr), snr, "S/N must be positive.");
        }

        if (!(phase.SigmaDays >= 0) || double.IsInfinity(phase.SigmaDays) || !double.IsFinite(phase.MeanDays))
        {
            throw new ArgumentOutOfRangeException(nameof(phase), phase, "Phase mean must be finite and sigma finite and ≥ 0.");
        }

        var bins = _surface.Bins;
        int nP = bins.Length, kk = _surface.SubtypeCount * _surface.SubtypeCount;
        Span<double> w = stackalloc double[nP];
        var phaseClamped = PhaseWeights(bins, phase, w);
        var (lo, hi, t, snrClamped) = AccuracySurface.Bracket(_surface.LogSnr, Math.Log(snr));
        chan.Clear();
        for (var b = 0; b < nP; b++)
        {
            if (w[b] == 0)
            {
                continue;
            }

            double wl = w[b] * (1 - t), wh = w[b] * t;
            var cl = (lo * nP + b) * kk;
            var ch = (hi * nP + b) * kk;
            for (var i = 0; i < kk; i++)
            {
                chan[i] += wl * _channel[cl + i] + wh * _channel[ch + i];
            }
        }

        return ResolutionClamped || snrClamped || phaseClamped;
    }

    /// <summary>
    /// Probability of each phase bin under N(μ, σ²); the tails beyond the first and last bins go to
    /// those bins. Returns true when the mean lies outside the binned range (clamped).
    /// </summary>
    internal static bool PhaseWeights(PhaseBin[] bins, PhaseBelief phase, Span<double> weights)
    {
        var n = bins.Length;
        var mu = phase.MeanDays;
        var clamped = mu < bins[0].FromDays || mu >= bins[^1].ToDays;
        if (phase.SigmaDays <= 0)
        {
            weights.Clear();
            var idx = n - 1;
            for (var b = 0; b < n; b++)
            {
                if (mu < bins[b].ToDays)
                {
                    idx = b;
                    break;
                }
            }

            weights[idx] = 1;
            return clamped;
        }

        var sigma = phase.SigmaDays;
        double previous = 0;
        for (var b = 0; b < n; b++)
        {
            var upper = b == n - 1 ? 1.0 : NormalCdf((bins[b].ToDays - mu) / sigma);
            weights[b] = Math.Max(0, upper - previous);
            previous = upper;
        }

        return clamped;
    }

    internal static double NormalCdf(double z) => 0.5 * MathNet.Numerics.SpecialFunctions.Erfc(-z / Math.Sqrt(2));
}

/// <summary>Weight of one phase bin in a phase-averaged channel.</summary>
/// <param name="Bin">Phase bin name of the calibration.</param>
/// <param name="Weight">Probability of the bin under the phase belief, 0…1.</param>
public readonly record struct PhaseBinWeight(string Bin, double Weight);

/// <summary>
/// The calibration cells behind one interpolated confusion channel: the requested R and S/N, the
/// grid points that bracket them (equal when exact or clamped) and the phase bins with weights.
/// </summary>
/// <param name="ResolvingPower">Requested R.</param>
/// <param name="GridResolutionLow">Grid R at or below the request (the edge when clamped).</param>
/// <param name="GridResolutionHigh">Grid R at or above the request.</param>
/// <param name="Snr">Requested S/N per resolution element.</param>
/// <param name="GridSnrLow">Grid S/N at or below the request.</param>
/// <param name="GridSnrHigh">Grid S/N at or above the request.</param>
/// <param name="PhaseBins">Phase bins used, with weights summing to 1.</param>
/// <param name="Clamped">True when R, S/N or phase lay outside the grid and its edge was used.</param>
public sealed record ChannelCell(
    double ResolvingPower,
    double GridResolutionLow,
    double GridResolutionHigh,
    double Snr,
    double GridSnrLow,
    double GridSnrHigh,
    IReadOnlyList<PhaseBinWeight> PhaseBins,
    bool Clamped);
