using System.Text.Json;
using Triage.Api.Jobs;
using Triage.Core.Calibration;
using Triage.Core.Spectra;
using Triage.Core.Spectra.Synthetic;
using Triage.Learning;
using Triage.Storage.Calibrations;
using Triage.Storage.Jobs;

namespace Triage.Api.Calibrations;

/// <summary>
/// Runs a calibration as a durable job: builds or loads the library, runs the shared pipeline
/// (the same code as <c>triage calibrate</c>) with its progress, and stores the result.
/// </summary>
public sealed class CalibrationJobHandler(CalibrationStore store, TimeProvider clock) : IJobHandler
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
        var taxonomy = Taxonomy.Default;
        progress.Report(new JobProgress(0, "loading the library"));
        SpectralLibrary library;
        if (input.Library == "synthetic")
        {
            library = SyntheticLibrary.Generate(new SynthOptions { Objects = input.Objects, Seed = input.Seed }).Library;
        }
        else
        {
            try
            {
                library = LibraryFiles.Load(input.LibraryPath!, taxonomy);
            }
            catch (LibraryImportException e)
            {
                throw new JobInputException("The library was refused: " + string.Join("; ", e.Errors.Take(20).Select(x => x.ToString())));
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                throw new JobInputException($"The library folder could not be read: {e.Message}");
            }
        }
        var settings = new CalibrationSettings { Resolutions = input.Resolutions, SnrLevels = input.Snr, Folds = input.Folds, Seed = input.Seed };
        var version = typeof(CalibrationJobHandler).Assembly.GetName().Version?.ToString() ?? "unknown";
        AccuracyModelDocument document;
        try
        {
            document = await Task.Run(() => CalibrationPipeline.Run(library, taxonomy, settings, version,
                new InlineProgress<CalibrationProgress>(p => progress.Report(new JobProgress(p.Percent / 100, p.Stage))), ct), ct);
        }
        catch (ArgumentException e)
        {
            throw new JobInputException(e.Message);
        }
        try
        {
            // The calibration (and its activation) and the job's completion commit together.
            var row = await store.AddAsync(new NewCalibration(
                library.Synthetic ? "synthetic" : "library", library.Synthetic, library.Fingerprint(), version,
                JsonSerializer.Serialize(settings, CalibrationJson.Options), run.JobId, CalibrationJson.Serialize(document)),
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

    private static string ResultJson(CalibrationRow row) =>
        JsonSerializer.Serialize(new { calibrationId = row.Id, active = row.Active, url = $"/api/calibrations/{row.Id}" });
}
