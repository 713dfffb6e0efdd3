using System.Text.Json;
using Triage.Api.Jobs;
using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Learning;
using Triage.Storage.Calibrations;
using Triage.Storage.Jobs;

namespace Triage.Api.Calibrations;

/// <summary>
/// Runs a calibration as a durable job: builds or loads the library and checks the grid. A grid of one R runs here
/// with the shared pipeline (the same code as <c>triage calibrate</c>) and stores the result; a longer grid is split
/// into one <see cref="CalibrationPartJobHandler"/> part per R, which the workers of every replica claim, and the
/// last part to finish stores the calibration and completes this job.
/// </summary>
public sealed class CalibrationJobHandler(CalibrationStore store, JobStore jobs, CalibrationLibraries libraries, TimeProvider clock) : IJobHandler
{
    public const string JobKind = "calibration";

    public string Kind => JobKind;

    public async Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct)
    {
        var input = JsonSerializer.Deserialize<CalibrationJobInput>(run.InputJson, Triage.Api.Operations.OperationsSetup.JobJson)
            ?? throw new JobInputException("The job input is empty.");
        if (await store.FindByJobAsync(run.JobId, ct) is { } stored)
        {
            // An earlier run of this job stored the calibration: never a second one.
            return ResultJson(stored);
        }
        progress.Report(new JobProgress(0, "loading the library"));
        var library = libraries.Get(input);
        var settings = Settings(input);
        var prepared = Prepare(library, settings);
        if (prepared.Resolutions.Count > 1)
        {
            var inputs = prepared.Resolutions.Select((_, i) => JsonSerializer.Serialize(
                new CalibrationPartInput(input, run.JobId, i, prepared.Resolutions), Triage.Api.Operations.OperationsSetup.JobJson)).ToList();
            var parts = await jobs.SplitIntoPartsAsync(run.JobId, CalibrationPartJobHandler.JobKind, inputs,
                $"split into {inputs.Count} parts (one per R); 0 done", clock.GetUtcNow(), ct);
            throw new JobSplitIntoParts(parts);
        }
        AccuracyModelDocument document;
        try
        {
            document = await Task.Run(() => CalibrationPipeline.Run(library, Taxonomy.Default, settings, CodeVersion,
                new InlineProgress<CalibrationProgress>(p => progress.Report(new JobProgress(p.Percent / 100, p.Stage))), ct), ct);
        }
        catch (ArgumentException e)
        {
            throw new JobInputException(e.Message);
        }
        try
        {
            // The calibration (and its activation) and the job's completion commit together.
            var row = await store.AddAsync(NewCalibration(library, settings, run.JobId, CalibrationJson.Serialize(document)),
                input.Activate, clock.GetUtcNow(),
                (conn, tx, stored, token) => JobStore.CompleteWithinAsync(conn, tx, run.JobId, ResultJson(stored), clock.GetUtcNow(), token), ct);
            return ResultJson(row);
        }
        catch (Npgsql.PostgresException e) when (e.ConstraintName == CalibrationStore.OnePerJobConstraint)
        {
            // Another run of the same job stored first: that calibration is the result.
            if (await store.FindByJobAsync(run.JobId, CancellationToken.None) is not { } raced)
            {
                throw;
            }
            return ResultJson(raced);
        }
    }

    /// <summary>The version recorded in a calibration's provenance.</summary>
    internal static string CodeVersion { get; } = typeof(CalibrationJobHandler).Assembly.GetName().Version?.ToString() ?? "unknown";

    /// <summary>The job's result: the stored calibration.</summary>
    internal static string ResultJson(CalibrationRow row) =>
        JsonSerializer.Serialize(new { calibrationId = row.Id, active = row.Active, url = $"/api/calibrations/{row.Id}" });

    /// <summary>The pipeline settings a job input asks for.</summary>
    internal static CalibrationSettings Settings(CalibrationJobInput input) =>
        new() { Resolutions = input.Resolutions, SnrLevels = input.Snr, Folds = input.Folds, Seed = input.Seed };

    /// <summary>The row a finished calibration is stored as.</summary>
    internal static NewCalibration NewCalibration(SpectralLibrary library, CalibrationSettings settings, Guid jobId, string documentJson) =>
        new(library.Synthetic ? "synthetic" : "library", library.Synthetic, library.Fingerprint(), CodeVersion,
            JsonSerializer.Serialize(settings, CalibrationJson.Options), jobId, documentJson);

    /// <summary>Checks the library against the grid; a refusal fails the job with the pipeline's message.</summary>
    internal static CalibrationRun Prepare(SpectralLibrary library, CalibrationSettings settings)
    {
        try
        {
            return CalibrationRun.Prepare(library, Taxonomy.Default, settings);
        }
        catch (ArgumentException e)
        {
            throw new JobInputException(e.Message);
        }
    }
}
