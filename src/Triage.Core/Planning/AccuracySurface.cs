// Value of one spectrum of a candidate on a spectrograph of resolving power R reaching S/N n
// (per resolution element) while the candidate's phase is believed to be N(μ, σ²) days:
//   w_b      = Φ((b.to − μ)/σ) − Φ((b.from − μ)/σ)             phase-bin weights [2], tails to the end bins
//   r̂ₛ(R,n,b) = bilinear in (ln R, ln n) between grid points   recall per subtype
//   A        = Σₛ p(s) Σ_b w_b r̂ₛ(R, n, b)                    expected accuracy
//   C(j|s)   = Σ_b w_b Ĉ_b(j|s), Ĉ interpolated like r̂         channel averaged over the phase belief
//   I        = I(S;J) from p and C                              information gain in bits [1]
// Noiseless calibration cells sit on the S/N axis at a documented finite S/N. Rare classes:
// recall is shrunk towards the mean recall of the cell's subtypes with a pseudo-count [3]
// (or the Wilson lower bound [4] is used) so a class seen in few spectra is not over-trusted.
//
// References
// [1] T. M. Cover, J. A. Thomas, Elements of Information Theory, 2nd ed., Wiley 2006, eq. 2.28.
// [2] M. Abramowitz, I. A. Stegun, Handbook of Mathematical Functions, 1964, eq. 26.2.2 (normal CDF).
// [3] B. Efron, C. Morris, "Data analysis using Stein's estimator and its generalizations",
//     JASA 70 (1975) 311 (shrinkage towards the group mean).
// [4] E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
//     JASA 22 (1927) 209.
using Triage.Core.Calibration;

namespace Triage.Core.Planning;

/// <summary>Which recall estimate of a calibration cell the planner trusts.</summary>
public enum RecallEstimate
{
    /// <summary>The measured recall as it is.</summary>
    Point,

    /// <summary>The lower end of the Wilson 95% interval: pessimistic, most for rare classes.</summary>
    WilsonLower,

    /// <summary>
    /// (n·r + k·r̄)/(n + k): shrunk towards the mean recall r̄ of all subtypes in the same
    /// cell with a pseudo-count k (<see cref="AccuracySurfaceOptions.ShrinkagePseudoSpectra"/>).
    /// </summary>
    Shrunk,
}

/// <summary>Settings of the accuracy surface.</summary>
public sealed record AccuracySurfaceOptions
{
    /// <summary>
    /// S/N per resolution element at which noiseless (native) calibration cells are placed on
    /// the S/N axis. Default 100: a spectrum this good is in practice as informative as the
    /// library itself. Must exceed every finite S/N level of the calibration.
    /// </summary>
    public double NoiselessSnrEquivalent { get; init; } = 100;

    /// <summary>
    /// Recall estimate used. Default <see cref="RecallEstimate.Shrunk"/>: the Wilson lower bound
    /// penalises exactly the rare classes that are often the most wanted, while shrinkage
    /// only removes the over-confidence of a small sample.
    /// </summary>
    public RecallEstimate Recall { get; init; } = RecallEstimate.Shrunk;

    /// <summary>Pseudo-count k of <see cref="RecallEstimate.Shrunk"/>, in spectra. Default 10.</summary>
    public double ShrinkagePseudoSpectra { get; init; } = 10;
}

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
/// evenly over the other subtypes.
/// </remarks>
public sealed class AccuracySurface
{
    private readonly double[] _logR;
    private readonly double[] _logSnr;
    private readonly PhaseBin[] _bins;
    private readonly int _k;

    // recall[((r * nS + s) * nP + p) * K + subtype]
    private readonly double[] _recall;

    // channel[((r * nS + s) * nP + p) * K * K + i * K + j]
    private readonly double[] _channel;
    private readonly Dictionary<string, int> _subtypeIndex;

    /// <summary>Subtypes in the order used by aligned priors.</summary>
    public IReadOnlyList<string> Subtypes { get; }

    /// <summary>Resolving powers of the grid, ascending.</summary>
    public IReadOnlyList<double> Resolutions { get; }

    /// <summary>S/N axis, ascending; noiseless cells at <see cref="AccuracySurfaceOptions.NoiselessSnrEquivalent"/>.</summary>
    public IReadOnlyList<double> SnrAxis { get; }

    /// <summary>Finite S/N levels of the calibration, ascending: the exposure levels worth planning.</summary>
    public IReadOnlyList<double> FiniteSnrLevels { get; }

    /// <summary>The options in force.</summary>
    public AccuracySurfaceOptions Options { get; }

    /// <summary>How gaps in the calibration were filled (empty for a complete grid).</summary>
    public IReadOnlyList<string> Notes { get; }

    private AccuracySurface(
        string[] subtypes, double[] resolutions, double[] snrAxis, double[] finite, PhaseBin[] bins,
        double[] recall, double[] channel, AccuracySurfaceOptions options, List<string> notes)
    {
        Subtypes = subtypes;
        _k = subtypes.Length;
        _subtypeIndex = subtypes.Select((s, i) => (s, i)).ToDictionary(t => t.s, t => t.i, StringComparer.Ordinal);
        Resolutions = resolutions;
        SnrAxis = snrAxis;
        FiniteSnrLevels = finite;
        _logR = resolutions.Select(x => Math.Log(x)).ToArray();
        _logSnr = snrAxis.Select(x => Math.Log(x)).ToArray();
        _bins = bins;
        _recall = recall;
        _channel = channel;
        Options = options;
        Notes = notes;
    }

    /// <summary>Builds the surface from a calibration document.</summary>
    /// <exception cref="ArgumentException">The document has no subtypes, resolutions, S/N levels
    /// or phase bins, a non-positive R or S/N, or a noiseless equivalent not above every finite level.</exception>
    public static AccuracySurface FromDocument(AccuracyModelDocument document, AccuracySurfaceOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(document);
        options ??= new AccuracySurfaceOptions();
        if (document.Subtypes.Count == 0 || document.Resolutions.Count == 0 || document.SnrLevels.Count == 0 || document.PhaseBins.Count == 0)
        {
            throw new ArgumentException("The calibration needs subtypes, resolutions, S/N levels and phase bins.", nameof(document));
        }

        if (document.Resolutions.Any(r => !(r > 0)))
        {
            throw new ArgumentException("Every resolving power of the calibration must be positive.", nameof(document));
        }

        var finite = document.SnrLevels.Where(s => s.HasValue).Select(s => s!.Value).Distinct().Order().ToArray();
        if (finite.Any(s => !(s > 0)))
        {
            throw new ArgumentException("Every finite S/N level of the calibration must be positive.", nameof(document));
        }

        var hasNoiseless = document.SnrLevels.Any(s => !s.HasValue);
        if (hasNoiseless && finite.Length > 0 && options.NoiselessSnrEquivalent <= finite[^1])
        {
            throw new ArgumentException(
                $"NoiselessSnrEquivalent ({options.NoiselessSnrEquivalent}) must exceed the highest finite S/N level ({finite[^1]}).",
                nameof(options));
        }

        var subtypes = document.Subtypes.ToArray();
        var k = subtypes.Length;
        var sIndex = subtypes.Select((s, i) => (s, i)).ToDictionary(t => t.s, t => t.i, StringComparer.Ordinal);
        var resolutions = document.Resolutions.Distinct().Order().ToArray();
        var snrAxis = hasNoiseless ? [.. finite, options.NoiselessSnrEquivalent] : finite;
        var bins = document.PhaseBins.OrderBy(b => b.FromDays).ToArray();
        var binIndex = bins.Select((b, i) => (b.Name, i)).ToDictionary(t => t.Name, t => t.i, StringComparer.Ordinal);
        int nR = resolutions.Length, nS = snrAxis.Length, nP = bins.Length;

        int RIndex(double r) => Array.FindIndex(resolutions, x => Math.Abs(x - r) <= 1e-9 * Math.Max(1, x));
        int SIndex(double? snr) => snr is null ? (hasNoiseless ? nS - 1 : -1) : Array.FindIndex(finite, x => Math.Abs(x - snr.Value) <= 1e-9 * Math.Max(1, x));

        var recall = new double[nR * nS * nP * k];
        Array.Fill(recall, double.NaN);
        var notes = new List<string>();

        // Pass 1: raw cells; the shrinkage target needs every subtype of a cell first.
        var raw = new (double Recall, double Low, int N)?[recall.Length];
        foreach (var cell in document.Cells)
        {
            if (!sIndex.TryGetValue(cell.Subtype, out var si) || !binIndex.TryGetValue(cell.PhaseBin, out var pi))
            {
                continue;
            }

            int ri = RIndex(cell.Resolution), ni = SIndex(cell.Snr);
            if (ri < 0 || ni < 0)
            {
                continue;
            }

            raw[(((ri * nS) + ni) * nP + pi) * k + si] = (cell.Recall, cell.RecallLow, cell.Spectra);
        }

        for (var g = 0; g < nR * nS * nP; g++)
        {
            var present = Enumerable.Range(0, k).Where(s => raw[g * k + s] is not null).ToArray();
            var mean = present.Length > 0 ? present.Average(s => raw[g * k + s]!.Value.Recall) : double.NaN;
            foreach (var s in present)
            {
                var c = raw[g * k + s]!.Value;
                recall[g * k + s] = options.Recall switch
                {
                    RecallEstimate.Point => c.Recall,
                    RecallEstimate.WilsonLower => c.Low,
                    _ => (c.N * c.Recall + options.ShrinkagePseudoSpectra * mean) / (c.N + options.ShrinkagePseudoSpectra),
                };
            }
        }

        FillGaps(recall, subtypes, resolutions, snrAxis, bins, notes);

        var channel = BuildChannels(document, recall, subtypes, sIndex, resolutions, snrAxis, bins, binIndex, RIndex, SIndex, notes);
        return new AccuracySurface(subtypes, resolutions, snrAxis, finite, bins, recall, channel, options, notes);
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
        int nS = _logSnr.Length, nP = _bins.Length, k = _k, kk = k * k;
        var recall = new double[nS * nP * k];
        var channel = new double[nS * nP * kk];
        for (var i = 0; i < recall.Length; i++)
        {
            recall[i] = (1 - t) * _recall[lo * recall.Length + i] + t * _recall[hi * recall.Length + i];
        }

        for (var i = 0; i < channel.Length; i++)
        {
            channel[i] = (1 - t) * _channel[lo * channel.Length + i] + t * _channel[hi * channel.Length + i];
        }

        return new ResolutionSlice(this, resolvingPower, clamped, recall, channel, Resolutions[lo], Resolutions[hi]);
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
    private readonly double[] _recall;
    private readonly double[] _channel;

    private readonly double _gridRLow;
    private readonly double _gridRHigh;

    internal ResolutionSlice(AccuracySurface surface, double resolvingPower, bool clamped, double[] recall, double[] channel, double gridRLow, double gridRHigh)
    {
        _surface = surface;
        _gridRLow = gridRLow;
        _gridRHigh = gridRHigh;
        ResolvingPower = resolvingPower;
        ResolutionClamped = clamped;
        _recall = recall;
        _channel = channel;
    }

    /// <summary>R of this slice.</summary>
    public double ResolvingPower { get; }

    /// <summary>True when R lies outside the calibrated range and the edge was used.</summary>
    public bool ResolutionClamped { get; }

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

        if (!(snr > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(snr), snr, "S/N must be positive.");
        }

        if (!(phase.SigmaDays >= 0) || double.IsInfinity(phase.SigmaDays) || !double.IsFinite(phase.MeanDays))
        {
            throw new ArgumentOutOfRangeException(nameof(phase), phase, "Phase mean must be finite and sigma finite and ≥ 0.");
        }

        var bins = _surface.Bins;
        int nP = bins.Length, kk = k * k;
        Span<double> w = stackalloc double[nP];
        var phaseClamped = PhaseWeights(bins, phase, w);
        var (lo, hi, t, snrClamped) = AccuracySurface.Bracket(_surface.LogSnr, Math.Log(snr));

        var mass = 0.0;
        foreach (var p in alignedPrior)
        {
            mass += p;
        }

        var accuracy = 0.0;
        Span<double> chan = kk <= 1024 ? stackalloc double[kk] : new double[kk];
        chan.Clear();
        for (var b = 0; b < nP; b++)
        {
            if (w[b] == 0)
            {
                continue;
            }

            double wl = w[b] * (1 - t), wh = w[b] * t;
            var rl = (lo * nP + b) * k;
            var rh = (hi * nP + b) * k;
            for (var s = 0; s < k; s++)
            {
                accuracy += alignedPrior[s] * (wl * _recall[rl + s] + wh * _recall[rh + s]);
            }

            AddChannel(chan, lo, hi, b, wl, wh);
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

        return new ObservationValue(Math.Clamp(accuracy, 0, 1), info, ResolutionClamped || snrClamped || phaseClamped);
    }

    private void AddChannel(Span<double> chan, int lo, int hi, int bin, double wl, double wh)
    {
        int nP = _surface.Bins.Length, kk = chan.Length;
        var cl = (lo * nP + bin) * kk;
        var ch = (hi * nP + bin) * kk;
        for (var i = 0; i < kk; i++)
        {
            chan[i] += wl * _channel[cl + i] + wh * _channel[ch + i];
        }
    }

    /// <summary>
    /// The confusion channel C(j|s) a spectrum at S/N <paramref name="snr"/> and phase belief
    /// <paramref name="phase"/> goes through: interpolated in ln R and ln S/N and averaged over the
    /// phase bins exactly as <see cref="Evaluate"/> does (same shrinkage, same gap filling).
    /// </summary>
    /// <param name="snr">S/N per resolution element, &gt; 0.</param>
    /// <param name="phase">Phase belief, rest-frame days from peak.</param>
    /// <param name="channel">Receives K·K values, row-major: row s = answers given true subtype s (order of <see cref="AccuracySurface.Subtypes"/>).</param>
    /// <returns>Which grid cells were used, with their weights.</returns>
    /// <exception cref="ArgumentException"><paramref name="channel"/> does not hold K·K values.</exception>
    /// <exception cref="ArgumentOutOfRangeException">S/N is not positive or the phase is not finite.</exception>
    public ChannelCell Channel(double snr, PhaseBelief phase, Span<double> channel)
    {
        var k = _surface.SubtypeCount;
        if (channel.Length != k * k)
        {
            throw new ArgumentException($"The channel must hold {k}×{k} values.", nameof(channel));
        }

        if (!(snr > 0) || double.IsInfinity(snr))
        {
            throw new ArgumentOutOfRangeException(nameof(snr), snr, "S/N must be positive and finite.");
        }

        if (!(phase.SigmaDays >= 0) || double.IsInfinity(phase.SigmaDays) || !double.IsFinite(phase.MeanDays))
        {
            throw new ArgumentOutOfRangeException(nameof(phase), phase, "Phase mean must be finite and sigma finite and ≥ 0.");
        }

        var bins = _surface.Bins;
        Span<double> w = stackalloc double[bins.Length];
        var (lo, hi, clamped) = FillChannel(snr, phase, channel, w);
        var weights = new List<PhaseBinWeight>();
        for (var b = 0; b < bins.Length; b++)
        {
            if (w[b] != 0)
            {
                weights.Add(new PhaseBinWeight(bins[b].Name, w[b]));
            }
        }

        var axis = _surface.SnrAxis;
        return new ChannelCell(ResolvingPower, _gridRLow, _gridRHigh, snr, axis[lo], axis[hi], weights, clamped);
    }

    /// <summary>
    /// The same channel as <see cref="Channel"/> without describing the cells (no allocation), for
    /// valuing many options. Arguments are not checked beyond the channel's length.
    /// </summary>
    /// <returns>True when R, S/N or phase were clamped to the grid's edge.</returns>
    public bool FillChannel(double snr, PhaseBelief phase, Span<double> channel)
    {
        if (channel.Length != _surface.SubtypeCount * _surface.SubtypeCount)
        {
            throw new ArgumentException("The channel must hold K×K values.", nameof(channel));
        }

        Span<double> w = stackalloc double[_surface.Bins.Length];
        return FillChannel(snr, phase, channel, w).Clamped;
    }

    private (int Lo, int Hi, bool Clamped) FillChannel(double snr, PhaseBelief phase, Span<double> channel, Span<double> w)
    {
        var bins = _surface.Bins;
        var phaseClamped = PhaseWeights(bins, phase, w);
        var (lo, hi, t, snrClamped) = AccuracySurface.Bracket(_surface.LogSnr, Math.Log(snr));
        channel.Clear();
        for (var b = 0; b < bins.Length; b++)
        {
            if (w[b] != 0)
            {
                AddChannel(channel, lo, hi, b, w[b] * (1 - t), w[b] * t);
            }
        }

        return (lo, hi, ResolutionClamped || snrClamped || phaseClamped);
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
/// <param name="GridSnrLow">Grid S/N at or below the request (noiseless cells at their documented equivalent).</param>
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
