using Triage.Api.Plans;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Planning;
using Triage.Learning;
using Triage.Storage.Candidates;

namespace Triage.Api.Tests.Plans;

/// <summary>The plan job's learned channels honour <c>Triage:Planner:UnitReliability</c>.</summary>
public sealed class LearnedChannelsTests
{
    [Fact]
    public void LearnedChannels_OfAGuessingUnit_MixGuessesOnlyWhenUnitReliabilityIsOn()
    {
        var surface = AccuracySurface.FromDocument(CalibrationJson.Deserialize(File.ReadAllText(Repository.File("demo", "calibration.json"))));
        var unit = Guid.NewGuid();
        var labels = surface.Subtypes;
        // 30 reports of one unit whose answers rotate through every subtype whatever the truth: a guessing unit.
        var trials = Enumerable.Range(0, 30)
            .Select(i => new LabelledTrialRow(unit, 300, 15, 0, labels[(7 * i + 3) % labels.Count], labels[i % 3]))
            .ToList();

        Assert.InRange(PlanJobHandler.LearnedChannels(surface, trials).GuessShare(unit.ToString()), 0.3, 1.0);
        Assert.Equal(0, PlanJobHandler.LearnedChannels(surface, trials, unitReliability: false).GuessShare(unit.ToString()));
    }
}
