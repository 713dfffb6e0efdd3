using System.Text.Json;
using System.Text.Json.Serialization;
using Triage.Core.Planning;
using Triage.Core.Roster;

namespace Triage.Core.Season;

/// <summary>
/// A season over several seeds as the CLI writes it and the service returns it: the summary per
/// strategy, the paired comparisons, the optional facility what-if, the settings and every run.
/// </summary>
/// <param name="Simulated">Always true: every object and outcome is simulated.</param>
/// <param name="Seeds">Seeds run, in order.</param>
/// <param name="Nights">Nights per season.</param>
/// <param name="FirstNight">Local date of the first night.</param>
/// <param name="Strategies">Means over seeds per strategy, with spreads and load.</param>
/// <param name="Comparisons">Paired per-seed comparisons of Triage with escalation against the others.</param>
/// <param name="WhatIf">Changed roster minus base roster per strategy (null without a changed roster).</param>
/// <param name="Settings">The settings (seed = the first).</param>
/// <param name="Runs">Every seed's season.</param>
public sealed record SeasonReport(
    bool Simulated,
    IReadOnlyList<int> Seeds,
    int Nights,
    DateOnly FirstNight,
    IReadOnlyList<StrategySummary> Strategies,
    IReadOnlyList<PairedComparison> Comparisons,
    IReadOnlyList<FacilityWhatIf>? WhatIf,
    SeasonSettings Settings,
    IReadOnlyList<SeasonResult> Runs)
{
    /// <summary>
    /// How the CLI and the service write a report: camelCase names, enums as text, and figures that are not
    /// finite (a median of no identifications, a ratio against zero) as null.
    /// </summary>
    public static JsonSerializerOptions JsonOptions { get; } = new(JsonSerializerDefaults.Web)
    {
        Converters = { new FiniteOrNull(), new JsonStringEnumConverter(JsonNamingPolicy.KebabCaseLower) },
    };

    /// <summary>The report as JSON (<see cref="JsonOptions"/>), optionally indented.</summary>
    public string ToJson(bool indented = false) =>
        JsonSerializer.Serialize(this, indented ? new JsonSerializerOptions(JsonOptions) { WriteIndented = true } : JsonOptions);

    /// <summary>Strategy-nights a report of <paramref name="seeds"/> seeds takes (twice with a changed roster): the unit of its progress.</summary>
    public static int Steps(SeasonSettings settings, int seeds, bool withChangedRoster)
    {
        ArgumentNullException.ThrowIfNull(settings);
        return seeds * settings.Nights * settings.Strategies.Count * (withChangedRoster ? 2 : 1);
    }

    /// <summary>Runs the seeds (and the changed roster, if any, on the same seeds) and summarises them.</summary>
    /// <param name="roster">Sites and spectrographs.</param>
    /// <param name="changedRoster">A changed roster for the facility what-if, or null.</param>
    /// <param name="planner">The planner's accuracy model.</param>
    /// <param name="truth">The truth's accuracy model.</param>
    /// <param name="settings">Settings; <see cref="SeasonSettings.Seed"/> is replaced by each seed.</param>
    /// <param name="seeds">Seeds, at least one.</param>
    /// <param name="progress">Strategy-nights done out of <see cref="Steps"/>, with what was just finished.</param>
    /// <param name="cancellationToken">Stops after the current night.</param>
    public static SeasonReport Run(
        (IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Spectrographs) roster,
        (IReadOnlyList<Site> Sites, IReadOnlyList<Spectrograph> Spectrographs)? changedRoster,
        AccuracySurface planner,
        AccuracySurface truth,
        SeasonSettings settings,
        IReadOnlyList<int> seeds,
        IProgress<SeasonProgress>? progress = null,
        CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(seeds);
        if (seeds.Count == 0)
        {
            throw new ArgumentException("At least one seed.", nameof(seeds));
        }

        var runs = new List<SeasonResult>();
        var changed = changedRoster is null ? null : new List<SeasonResult>();
        var perSeason = settings.Nights * settings.Strategies.Count;
        var total = Steps(settings, seeds.Count, changed is not null);
        var finished = 0;
        foreach (var s in seeds)
        {
            var seeded = settings with { Seed = s };
            var offset = finished;
            runs.Add(SeasonSimulator.Run(roster.Sites, roster.Spectrographs, planner, truth, seeded,
                progress is null ? null : new Relay(p => progress.Report(new SeasonProgress(offset + p.Done, total, $"seed {s}: {p.What}"))), cancellationToken));
            finished += perSeason;
            if (changed is not null)
            {
                var at = finished;
                changed.Add(SeasonSimulator.Run(changedRoster!.Value.Sites, changedRoster.Value.Spectrographs, planner, truth, seeded,
                    progress is null ? null : new Relay(p => progress.Report(new SeasonProgress(at + p.Done, total, $"seed {s} (changed roster): {p.What}"))), cancellationToken));
                finished += perSeason;
            }
        }

        var summary = SeasonSummary.Of(runs);
        var whatIf = changed is null ? null : settings.Strategies.Select(x => FacilityWhatIf.Of(SeasonSimulator.Name(x), runs, changed)).ToList();
        return new SeasonReport(true, seeds.ToList(), settings.Nights, settings.FirstNight, summary.Strategies, summary.Comparisons, whatIf, settings with { Seed = seeds[0] }, runs);
    }

    private sealed class FiniteOrNull : JsonConverter<double>
    {
        public override double Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options) =>
            reader.TokenType == JsonTokenType.Null ? double.NaN : reader.GetDouble();

        public override void Write(Utf8JsonWriter writer, double value, JsonSerializerOptions options)
        {
            if (double.IsFinite(value))
            {
                writer.WriteNumberValue(value);
            }
            else
            {
                writer.WriteNullValue();
            }
        }
    }

    private sealed class Relay(Action<SeasonProgress> action) : IProgress<SeasonProgress>
    {
        public void Report(SeasonProgress value) => action(value);
    }
}
