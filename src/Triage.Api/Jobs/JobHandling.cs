namespace Triage.Api.Jobs;

/// <summary>Progress of a job: fraction done (0…1) and a short note of the current step.</summary>
public readonly record struct JobProgress(double Fraction, string? Note = null);

/// <summary>One run of a claimed job: its id (which the result carries), its input JSON and the attempt number (1, 2…).</summary>
public sealed record JobRun(Guid JobId, string Kind, string InputJson, int Attempt)
{
    /// <summary>The worker running it (<see cref="JobOptions.WorkerName"/>): which replica did the work.</summary>
    public string Worker { get; init; } = JobOptions.DefaultWorkerName;
}

/// <summary>
/// Runs one kind of durable job. Input and result are JSON documents. A handler that stores a
/// result row runs exactly once in effect: it first returns the result already stored under
/// <see cref="JobRun.JobId"/> if there is one, stores its row with the job id (unique), and
/// completes the job in the same transaction (<c>JobStore.CompleteWithinAsync</c>).
/// </summary>
public interface IJobHandler
{
    /// <summary>The job kind this handler runs (e.g. <c>calibration</c>).</summary>
    string Kind { get; }

    /// <summary>Does the work and returns the result JSON; throws <see cref="JobInputException"/> for input it cannot use.</summary>
    Task<string> RunAsync(JobRun run, IProgress<JobProgress> progress, CancellationToken ct);
}

/// <summary>A job whose input turned out unusable: it fails with this message, not with a stack trace.</summary>
public sealed class JobInputException(string message) : Exception(message);

/// <summary>
/// Thrown by a handler that handed its job's work to <paramref name="parts"/> child jobs (<c>JobStore.SplitIntoPartsAsync</c>):
/// the runner then neither completes nor fails the job. It stays running, without a heartbeat, while any part is open;
/// the handler of its last part completes it in the transaction that stores the result, and a failed part fails it.
/// </summary>
public sealed class JobSplitIntoParts(int parts) : Exception($"The job was split into {parts} parts.")
{
    /// <summary>How many parts the job has.</summary>
    public int Parts { get; } = parts;
}

/// <summary>Worker settings (section <c>Triage:Jobs</c>).</summary>
public sealed record JobOptions
{
    /// <summary>How often an idle worker looks for queued jobs (default 1 s).</summary>
    public TimeSpan PollInterval { get; init; } = TimeSpan.FromSeconds(1);

    /// <summary>How often a running job beats its heartbeat at least (default 5 s).</summary>
    public TimeSpan HeartbeatInterval { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>A running job silent for this long lost its worker (default 60 s).</summary>
    public TimeSpan StaleAfter { get; init; } = TimeSpan.FromSeconds(60);

    /// <summary>The default <see cref="WorkerName"/>: host name and process id.</summary>
    public static readonly string DefaultWorkerName = $"{Environment.MachineName}/{Environment.ProcessId}";

    /// <summary>This replica's name as recorded with the work it did (calibration parts). Default host name/process id.</summary>
    public string WorkerName { get; init; } = DefaultWorkerName;

    /// <summary>How long the worker keeps retrying to record a finished job's end while the database is away (default 2 min).</summary>
    public TimeSpan FinishRetryFor { get; init; } = TimeSpan.FromMinutes(2);
}
