using System.Diagnostics;
using System.Text.Json;
using Triage.Api.Jobs;
using Triage.Learning;
using Triage.Storage.Calibrations;

namespace Triage.Api.Calibrations;

/// <summary>Input of a <c>calibration-part</c> job: the calibration's input, its job, and which R of the sorted grid.</summary>
/// <param name="Resolutions">The whole grid, ascending: the part's seeds depend on its index in it.</param>
public sealed record CalibrationPartInput(CalibrationJobInput Calibration, Guid ParentJobId, int Part, IReadOnlyList<double> Resolutions);

/// <summary>
/// One R of a calibration, claimed by any replica's worker like any job (once, <c>FOR UPDATE SKIP LOCKED</c>, with a
/// heartbeat; a part whose worker died is queued again by recovery). It reads the library, runs
/// <see cref="CalibrationPipeline.RunResolution"/>, and stores its outcome with <see cref="CalibrationPartStore.FinishAsync"/>:
/// the outcome and the part's completion commit together, and the last part also assembles the calibration, stores it
/// under the calibration job's id and completes that job, in the same transaction.
/// </summary>
public sealed class CalibrationPartJobHandler(CalibrationPartStore parts, CalibrationLibraries libraries, TimeProvider clock) : IJobHandler
{
    public const string JobKind = "calibration-part";

    public string Kind => JobKind;

    public async Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct)
    {
        var input = JsonSerializer.Deserialize<CalibrationPartInput>(run.InputJson, Triage.Api.Operations.OperationsSetup.JobJson)
            ?? throw new JobInputException("The job input is empty.");
        var clockStarted = Stopwatch.StartNew();
        var r = input.Resolutions[input.Part];
        progress.Report(new JobProgress(0, $"R {r}: loading the library"));
        var library = libraries.Get(input.Calibration);
        var asked = CalibrationJobHandler.Settings(input.Calibration);
        var prepared = CalibrationJobHandler.Prepare(library, asked with { Resolutions = input.Resolutions });
        if (!prepared.Resolutions.SequenceEqual(input.Resolutions))
        {
            throw new JobInputException("The part's grid is not the calibration's sorted grid.");
        }
        int units = asked.SnrLevels.Count * asked.Folds, done = 0;
        var outcome = await Task.Run(() => CalibrationPipeline.RunResolution(prepared, input.Part,
            stage => progress.Report(new JobProgress(++done / (double)units, stage)), ct), ct);
        var seconds = clockStarted.Elapsed.TotalSeconds;
        var result = JsonSerializer.Serialize(new { calibrationJobId = input.ParentJobId, part = input.Part, resolution = r, worker = run.Worker, seconds });
        var finished = await parts.FinishAsync(
            new CalibrationPartOutcome(input.ParentJobId, input.Part, input.Resolutions.Count, r, run.JobId, run.Worker, seconds,
                CalibrationJson.SerializeOutcome(outcome)),
            result,
            outcomes => CalibrationJobHandler.NewCalibration(library, asked, input.ParentJobId, CalibrationJson.Serialize(
                CalibrationPipeline.Assemble(prepared, outcomes.Select(CalibrationJson.DeserializeOutcome).ToList(), CalibrationJobHandler.CodeVersion))),
            input.Calibration.Activate,
            CalibrationJobHandler.ResultJson,
            clock.GetUtcNow(), ct);
        return finished.Outcome switch
        {
            PartFinish.ParentEnded => throw new JobInputException($"The calibration job {input.ParentJobId} ended before this part finished."),
            _ => result,
        };
    }
}
