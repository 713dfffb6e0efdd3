using System.Text.Json;
using Triage.Api.Jobs;
using Triage.Core.Planning;
using Triage.Core.Season;
using Triage.Learning;
using Triage.Storage.Calibrations;
using Triage.Storage.Roster;

namespace Triage.Api.Seasons;

/// <summary>
/// Runs a simulated season on the stored roster with the active calibration (the same code as
/// <c>triage simulate</c>). The season is a pure function of its input, the roster and the
/// calibration, so a run after a lost worker computes the same result; the job's result (the
/// season JSON) commits once, with the job's completion.
/// </summary>
public sealed class SeasonJobHandler(RosterStore roster, CalibrationStore calibrations) : IJobHandler
{
    public string Kind => SeasonEndpoints.SeasonJobKind;

    public async Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct)
    {
        var input = JsonSerializer.Deserialize<SeasonJobInput>(run.InputJson, Triage.Api.Operations.OperationsSetup.JobJson)
            ?? throw new JobInputException("The job input is empty.");
        progress.Report(new JobProgress(0, "reading the roster and the active calibration"));
        var active = await calibrations.GetAsync(null, ct)
            ?? throw new JobInputException("No calibration is active: request one (POST /api/calibrations) or import a table first.");
        var surface = AccuracySurface.FromDocument(CalibrationJson.Deserialize(active.DocumentJson));
        var sites = (await roster.ListSitesAsync(new SiteFilter(), ct)).Select(v => v.Value).ToList();
        var spectrographs = (await roster.ListSpectrographsAsync(new SpectrographFilter(), ct)).Select(v => v.Value).ToList();
        var settings = SeasonEndpoints.Settings(input);
        var seeds = Enumerable.Range(input.Seed, input.Seeds).ToList();
        try
        {
            var report = await Task.Run(() => SeasonReport.Run((sites, spectrographs), null, surface, surface, settings, seeds,
                new InlineProgress<SeasonProgress>(p => progress.Report(new JobProgress((double)p.Done / p.Total, p.What))), ct), ct);
            ct.ThrowIfCancellationRequested();
            return report.ToJson();
        }
        catch (ArgumentException e)
        {
            throw new JobInputException(e.Message);
        }
    }
}
