using Dapper;

namespace Triage.Storage.Candidates;

/// <summary>
/// One labelled report of a candidate that was finally identified (classified with a label): a
/// trial of the unit that made it.
/// </summary>
/// <param name="SpectrographId">Unit.</param>
/// <param name="ResolvingPower">R of the unit when the report was weighed (else its current R).</param>
/// <param name="Snr">Achieved S/N.</param>
/// <param name="PhaseDays">Phase used when the report was weighed (reported, else from the light curve); null when unknown.</param>
/// <param name="Answer">Reported label.</param>
/// <param name="Truth">The candidate's final label.</param>
public sealed record LabelledTrialRow(Guid SpectrographId, double ResolvingPower, double Snr, double? PhaseDays, string Answer, string Truth);

public sealed partial class CandidateStore
{
    private const string TrialsSql = """
        SELECT r.spectrograph_id AS SpectrographId, COALESCE(r.resolving_power, s.resolving_power) AS ResolvingPower,
            r.achieved_snr AS Snr, COALESCE(r.phase_days, (r.confusion_cell->>'phaseDays')::float8) AS PhaseDays,
            r.classified_label AS Answer, c.classified_label AS Truth
        FROM observation_reports r
        JOIN candidates c ON c.id = r.candidate_id
        JOIN spectrographs s ON s.id = r.spectrograph_id
        WHERE r.outcome = 'done' AND r.classified_label IS NOT NULL AND r.achieved_snr > 0
          AND c.state = 'classified' AND c.classified_label IS NOT NULL
        ORDER BY r.spectrograph_id, r.observed_at
        """;

    /// <summary>Every labelled report of a finally identified candidate, by unit and time.</summary>
    public async Task<IReadOnlyList<LabelledTrialRow>> LabelledTrialsAsync(CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return (await conn.QueryAsync<LabelledTrialRow>(new CommandDefinition(TrialsSql, cancellationToken: ct))).ToList();
    }
}
