using Npgsql;

namespace Triage.Storage;

/// <summary>
/// More work to commit in the same transaction as a stored row (the row just written is passed
/// in): a job's completion, the state moves that belong to a plan version.
/// </summary>
public delegate Task WithinTransaction<in TRow>(NpgsqlConnection connection, NpgsqlTransaction transaction, TRow row, CancellationToken ct);
