using Triage.Core.Calibration;
using Triage.Core.Candidates;
using Triage.Core.Planning;
using Triage.Core.Roster;

namespace Triage.Bench;

/// <summary>Loads the demo network, candidates and calibration from the repository's demo/ folder.</summary>
public static class DemoNight
{
    /// <summary>The demo night's local date (the candidates' batch ends at 2026-12-03T00:00Z).</summary>
    public static readonly DateOnly Night = new(2026, 12, 2);

    /// <summary>The repository root (the folder holding Triage.sln), searched upwards from the working directory.</summary>
    public static string RepositoryRoot()
    {
        foreach (var start in new[] { Directory.GetCurrentDirectory(), AppContext.BaseDirectory })
        {
            for (var dir = new DirectoryInfo(start); dir is not null; dir = dir.Parent)
            {
                if (File.Exists(Path.Combine(dir.FullName, "Triage.sln")))
                {
                    return dir.FullName;
                }
            }
        }

        throw new DirectoryNotFoundException("Run the benchmarks from inside the repository.");
    }

    /// <summary>The demo roster.</summary>
    public static (IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Spectrographs) Roster()
        => RosterJson.Parse(File.ReadAllText(Path.Combine(RepositoryRoot(), "demo", "roster.json")));

    /// <summary>demo/calibration.json when present, else the stand-in; says which.</summary>
    public static (AccuracyModelDocument Document, string Source) Calibration()
    {
        var path = Path.Combine(RepositoryRoot(), "demo", "calibration.json");
        return File.Exists(path)
            ? (PlanJson.ReadCalibration(File.ReadAllText(path)), "demo/calibration.json")
            : (StandInCalibration.Create(), "stand-in calibration (bench/Triage.Bench/StandInCalibration.cs)");
    }

    /// <summary>Candidates as planner forecasts: demo/candidates.json, or <paramref name="count"/> invented ones.</summary>
    public static ITargetForecast[] Targets(AccuracyModelDocument calibration, int? count = null)
    {
        var labels = new HashSet<string>(DefaultSubtypeLabels.All.Concat(calibration.Subtypes), StringComparer.Ordinal);
        IReadOnlyList<Candidate> candidates;
        if (count is { } n)
        {
            var batch = DemoNightGenerator.Generate(labels, new DemoNightOptions { Count = n, Seed = 424242 });
            candidates = CandidateAssessment.ReadBatch(BrokerBatchJson.Serialize(batch), labels).Candidates;
        }
        else
        {
            candidates = CandidateAssessment.ReadBatch(File.ReadAllText(Path.Combine(RepositoryRoot(), "demo", "candidates.json")), labels).Candidates;
        }

        var labelList = labels.ToArray();
        return candidates.AsParallel().AsOrdered()
            .Select(c => (ITargetForecast)new AssessedTargetForecast(CandidateAssessment.Assess(c, labelList), calibration.SnrReferenceWavelengthAngstrom))
            .ToArray();
    }

    /// <summary>The roster with every spectrograph duplicated <paramref name="copies"/> times (new ids, suffixed names).</summary>
    public static IReadOnlyList<Spectrograph> Replicated(IReadOnlyList<Spectrograph> spectrographs, int copies)
        => Enumerable.Range(0, copies).SelectMany(k => spectrographs.Select(s => k == 0 ? s : s with
        {
            Id = new Guid(s.Id.ToByteArray().Select((b, i) => i == 15 ? (byte)(b + 16 * k) : b).ToArray()),
            Name = $"{s.Name}-{(char)('a' + k)}",
        })).ToArray();
}
