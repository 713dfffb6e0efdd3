using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Core.Roster;
using Triage.Scheduling;

namespace Triage.Cli.Verbs;

/// <summary>
/// Rehearses a night without a database: plans it from its first dark start, then every N minutes replans from that
/// instant the way the service does (entries under way kept, later ones anchored, deterministic solve) after
/// simulating the reports since the last replan: entries that ended were observed, a seeded few of them were lost
/// to weather (their candidates wait again), and held-back candidates arrive. Prints the churn of every replan.
/// </summary>
internal static class RehearseVerb
{
    public static Command Create()
    {
        var roster = NightInputOptions.Roster();
        var candidates = NightInputOptions.Candidates();
        var calibration = NightInputOptions.Calibration();
        var night = NightInputOptions.Night();
        var every = new Option<double>("--every") { Description = "Minutes between replans (default 30).", DefaultValueFactory = _ => 30 };
        var lost = new Option<int>("--lost") { Description = "Observations lost to weather per replan, drawn from those that ended since the last one (default 1).", DefaultValueFactory = _ => 1 };
        var arrivals = new Option<int>("--arrivals") { Description = "Candidates held back from the file and arriving per replan (default 2).", DefaultValueFactory = _ => 2 };
        var stability = new Option<double>("--stability") { Description = "Stability share σ: an assignment of the previous version is worth (1 + σ) × its value to the solver (default 0.1, as the service).", DefaultValueFactory = _ => new NightBuildSettings().StabilityShare };
        var maxChurn = new Option<double>("--max-churn") { Description = "Most share of the entries ahead a replan may change, beyond what closures force (default 0.1, as the service; 1: no limit).", DefaultValueFactory = _ => NightReplan.DefaultMaxChurnShare };
        var objective = NightInputOptions.Objective();
        var seed = new Option<int>("--seed") { Description = "Seed of the simulated reports (default 1).", DefaultValueFactory = _ => 1 };
        var output = new Option<FileInfo?>("--out") { Description = "Optional: write the per-replan churn as JSON." };
        var command = new Command("rehearse", "Replan a night every N minutes with simulated reports and print the churn of each replan.")
            { roster, candidates, calibration, night, every, lost, arrivals, stability, maxChurn, objective, seed, output };
        command.SetAction((parse, cancellationToken) => Task.FromResult(Run(
            parse.GetValue(roster)!, parse.GetValue(candidates)!, parse.GetValue(calibration)!, parse.GetValue(night)!, parse.GetValue(every),
            parse.GetValue(lost), parse.GetValue(arrivals), parse.GetValue(stability), parse.GetValue(maxChurn), parse.GetValue(objective)!, parse.GetValue(seed), parse.GetValue(output), cancellationToken)));
        return command;
    }

    /// <summary>One replan of the rehearsal.</summary>
    /// <param name="FromUtc">The replanning instant.</param>
    /// <param name="Observed">Observations that ended since the last replan and were done.</param>
    /// <param name="Lost">Of those that ended, lost to weather (their candidates wait again).</param>
    /// <param name="Arrived">Candidates that arrived since the last replan.</param>
    /// <param name="Assigned">Entries of the new version.</param>
    /// <param name="Churn">Changes against the previous version's entries still ahead.</param>
    /// <param name="NewsAdded">Of the added entries, those of candidates lost or arrived since the last replan (changes the news asks for).</param>
    /// <param name="ObservedValue">Sum of the planned values of the observations done (not lost) since the last replan.</param>
    public sealed record Step(DateTimeOffset FromUtc, int Observed, int Lost, int Arrived, int Assigned, PlanChurn Churn, int NewsAdded = 0, double ObservedValue = 0)
    {
        /// <summary>Churn without the additions the news asked for: what was reshuffled, / compared entries.</summary>
        public double ReshuffleShare => (Churn.Moved + Churn.Retimed + Churn.Added - NewsAdded + Churn.Removed) / (double)Math.Max(1, Churn.ComparedEntries);
    }

    private static int Run(FileInfo rosterFile, FileInfo candidatesFile, FileInfo calibrationFile, string nightText, double everyMinutes,
        int lostPerStep, int arrivalsPerStep, double stability, double maxChurn, string objectiveText, int seed, FileInfo? outFile, CancellationToken ct)
    {
        if (!DateOnly.TryParseExact(nightText, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var night))
        {
            Console.Error.WriteLine($"--night: '{nightText}' is not a date YYYY-MM-DD.");
            return 2;
        }

        if (!(everyMinutes >= 5 && everyMinutes <= 600) || lostPerStep < 0 || arrivalsPerStep < 0 || !(stability is >= 0 and <= 1) || !(maxChurn is > 0 and <= 1))
        {
            Console.Error.WriteLine("--every must be in [5, 600] minutes; --lost and --arrivals ≥ 0; --stability in [0, 1]; --max-churn in (0, 1].");
            return 2;
        }

        if (!NightInputOptions.TryObjective(objectiveText, out var objective))
        {
            Console.Error.WriteLine($"--objective: '{objectiveText}' is not 'identification', 'accuracy' or 'information'.");
            return 2;
        }

        try
        {
            var (sites, spectrographs) = RosterJson.Parse(File.ReadAllText(rosterFile.FullName));
            var document = PlanJson.ReadCalibration(File.ReadAllText(calibrationFile.FullName));
            var surface = AccuracySurface.FromDocument(document);
            var labels = new HashSet<string>(DefaultSubtypeLabels.All.Concat(document.Subtypes), StringComparer.Ordinal);
            var batch = CandidateAssessment.ReadBatch(File.ReadAllText(candidatesFile.FullName), labels);
            if (!batch.IsValid)
            {
                Console.Error.WriteLine(JsonSerializer.Serialize(new { errors = batch.Errors }, BrokerBatchJson.Options));
                return 2;
            }

            var labelList = labels.ToArray();
            var all = batch.Candidates.AsParallel().AsOrdered()
                .Select(c => (ITargetForecast)new AssessedTargetForecast(CandidateAssessment.Assess(c, labelList), document.SnrReferenceWavelengthAngstrom))
                .ToList();
            var steps = Rehearse(sites, spectrographs, all, surface, night, TimeSpan.FromMinutes(everyMinutes), lostPerStep, arrivalsPerStep, seed, ct, stability, maxChurn, objective);
            var inv = CultureInfo.InvariantCulture;
            Console.WriteLine("from_utc              observed lost arrived assigned compared moved retimed added removed  churn  (of which news) reshuffle");
            foreach (var s in steps)
            {
                var c = s.Churn;
                var share = c.ComparedEntries == 0 ? "     —" : c.Share.ToString("P1", inv).PadLeft(6);
                var reshuffle = c.ComparedEntries == 0 ? "     —" : s.ReshuffleShare.ToString("P1", inv).PadLeft(6);
                Console.WriteLine(string.Create(inv,
                    $"{s.FromUtc:yyyy-MM-ddTHH:mm}Z  {s.Observed,8} {s.Lost,4} {s.Arrived,7} {s.Assigned,8} {c.ComparedEntries,8} {c.Moved,5} {c.Retimed,7} {c.Added,5} {c.Removed,7} {share} {s.NewsAdded,15} {reshuffle,9}"));
            }

            var replans = steps.Skip(1).ToList();
            if (replans.Count > 0)
            {
                var shares = replans.Select(s => s.Churn.Share).Order().ToList();
                Console.WriteLine(string.Create(inv,
                    $"{replans.Count} replans: churn mean {shares.Average():P1}, median {shares[shares.Count / 2]:P1}, max {shares[^1]:P1}, below 10 % in {shares.Count(x => x < 0.1)}; reshuffle mean {replans.Average(s => s.ReshuffleShare):P1}, max {replans.Max(s => s.ReshuffleShare):P1}; moved in all {replans.Sum(s => s.Churn.Moved)}; value of the observations done {steps.Sum(s => s.ObservedValue):F2}."));
            }

            if (outFile is not null)
            {
                File.WriteAllText(outFile.FullName, JsonSerializer.Serialize(steps, PlanJson.Options));
            }

            return 0;
        }
        catch (Exception ex) when (ex is FormatException or ArgumentException or JsonException)
        {
            Console.Error.WriteLine(ex.Message);
            return 2;
        }
    }

    /// <summary>The rehearsal itself (the first step is the initial plan, with no churn).</summary>
    public static IReadOnlyList<Step> Rehearse(
        IReadOnlyList<Site> sites, IReadOnlyList<Spectrograph> spectrographs, IReadOnlyList<ITargetForecast> all, AccuracySurface surface,
        DateOnly night, TimeSpan every, int lostPerStep, int arrivalsPerStep, int seed, CancellationToken ct, double stability = 0.1, double maxChurn = NightReplan.DefaultMaxChurnShare,
        PlanObjective objective = PlanDefaults.Objective)
    {
        var random = new Random(seed);
        var heldBack = new Queue<ITargetForecast>(all.Skip(Math.Max(0, all.Count - 10 * arrivalsPerStep)));
        var waiting = all.Take(all.Count - heldBack.Count).ToDictionary(t => t.Id, StringComparer.Ordinal);
        var solver = new SolverSettings { Deterministic = true };
        var first = NightProblemBuilder.Build(sites, spectrographs, waiting.Values.ToList(), surface, night, DateTimeOffset.MinValue, new NightBuildSettings { Objective = objective });
        var from = first.Problem.EpochUtc;
        var end = first.Problem.Units.Count == 0 ? from : from.AddSeconds(first.Problem.Units.Max(u => u.Available.ToSeconds));
        var plan = NightPlanning.Plan(first, solver, ct);
        var steps = new List<Step> { new(from, 0, 0, 0, plan.Summary.Assigned, new PlanChurn(0, 0, 0, plan.Summary.Assigned, 0)) };
        for (var t = from + every; t < end && !ct.IsCancellationRequested; t += every)
        {
            // Reports since the last replan: what ended was observed, except a few lost to weather.
            var ended = plan.Spectrographs.SelectMany(q => q.Queue).Where(e => e.EndUtc <= t && waiting.ContainsKey(e.CandidateId)).ToList();
            var lost = ended.OrderBy(_ => random.Next()).Take(lostPerStep).Select(e => e.CandidateId).ToHashSet(StringComparer.Ordinal);
            foreach (var e in ended.Where(e => !lost.Contains(e.CandidateId)))
            {
                waiting.Remove(e.CandidateId);
            }

            var arrived = 0;
            var arrivedIds = new HashSet<string>(StringComparer.Ordinal);
            for (; arrived < arrivalsPerStep && heldBack.Count > 0; arrived++)
            {
                var next = heldBack.Dequeue();
                waiting[next.Id] = next;
                arrivedIds.Add(next.Id);
            }

            var split = NightReplan.Split(plan, t, NightReplan.DefaultFreeze);
            var targets = waiting.Values.Where(x => !split.KeptIds.Contains(x.Id)).ToList();
            var built = NightProblemBuilder.Build(sites, spectrographs, targets, surface, night, t, new NightBuildSettings
            {
                Objective = objective,
                BusyUntilUtc = split.BusyUntilUtc,
                RemainingBudgetSeconds = NightReplan.RemainingBudget(plan, t, NightReplan.DefaultFreeze),
                Previous = split.Anchors,
                StabilityShare = stability,
                ChurnBudget = maxChurn < 1 ? NightReplan.ChurnBudget(split, maxChurn) : null,
            });
            var next2 = NightReplan.WithKept(NightPlanning.Plan(built, solver, ct), split.Kept);
            var (changes, churn) = PlanChurn.Between(plan, next2, t);
            var news = changes.Count(c => c.Kind == PlanChangeKind.Added && (lost.Contains(c.CandidateId) || arrivedIds.Contains(c.CandidateId)));
            steps.Add(new Step(t, ended.Count - lost.Count, lost.Count, arrived, next2.Summary.Assigned, churn, news,
                ended.Where(e => !lost.Contains(e.CandidateId)).Sum(e => e.Value)));
            plan = next2;
        }

        return steps;
    }
}
