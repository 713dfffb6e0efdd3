using System.Globalization;
using System.Text.Json;
using Microsoft.AspNetCore.Http.HttpResults;
using Triage.Api.Errors;
using Triage.Core.Planning;
using Triage.Storage.Plans;

namespace Triage.Api.Plans;

/// <summary>A plan version's summary: what the solver achieved, the candidate pool it worked on, and one line per queue.</summary>
public sealed record PlanSummaryResponse(
    PlanVersionResponse Version,
    string Advisory,
    JsonElement Summary,
    JsonElement? Pool,
    IReadOnlyList<string> Notes,
    IReadOnlyList<QueueLineResponse> Queues,
    int UnassignedCount,
    string UnassignedUrl);

/// <summary>One queue in a summary; <see cref="Url"/> reads it whole.</summary>
public sealed record QueueLineResponse(
    string SpectrographId, string Name, string SiteName, double ResolvingPower, double BudgetSeconds, double UsedSeconds, double Cost, int Observations, string Url);

/// <summary>One page of the unassigned candidates; <see cref="Next"/> is null on the last page.</summary>
public sealed record UnassignedPageResponse(
    PlanVersionResponse Version, int Total, IReadOnlyList<UnassignedCandidate> Items, string? NextCursor, string? Next);

/// <summary>
/// Paged reads of a plan version, so that a plan over a large pool is never sent whole to read
/// one part of it: the summary, one queue (<see cref="PlanEndpoints.GetQueue"/>), and the
/// unassigned candidates a page at a time with an opaque cursor that pins the version.
/// </summary>
public static class PlanPageEndpoints
{
    /// <summary>Default and largest page of unassigned candidates.</summary>
    public const int DefaultPage = 500, MaxPage = 5000;

    internal static void MapPlanPages(this RouteGroupBuilder g)
    {
        g.MapGet("/{night}/summary", GetSummary).RequireAuthorization(Access.Policies.AnyKey).WithName("GetPlanSummary");
        g.MapGet("/{night}/unassigned", GetUnassigned).RequireAuthorization(Access.Policies.AnyKey).WithName("GetPlanUnassigned");
    }

    public static async Task<Results<Ok<PlanSummaryResponse>, ProblemHttpResult>> GetSummary(string night, int? version, PlanStore store, CancellationToken ct)
    {
        if (!PlanEndpoints.TryNight(night, out var date, out var bad))
        {
            return bad;
        }
        var found = await store.GetSummaryAsync(date, version, ct);
        if (found is null)
        {
            return Problems.NotFound(version is null ? "night" : "version", version is null ? $"No plan for the night of {night} yet." : $"No version {version} for the night of {night}.");
        }
        var v = found.Row.Version;
        var queues = JsonSerializer.Deserialize<List<QueueLine>>(found.QueuesJson, PlanJson.Options) ?? [];
        var notes = JsonSerializer.Deserialize<List<string>>(found.NotesJson, PlanJson.Options) ?? [];
        return TypedResults.Ok(new PlanSummaryResponse(
            PlanVersionResponse.From(found.Row),
            NightPlan.AdvisoryStatement,
            JsonDocument.Parse(found.SummaryJson).RootElement.Clone(),
            found.PoolJson is null ? null : JsonDocument.Parse(found.PoolJson).RootElement.Clone(),
            notes,
            queues.Select(q => new QueueLineResponse(q.SpectrographId, q.Name, q.SiteName, q.ResolvingPower, q.BudgetSeconds, q.UsedSeconds, q.Cost,
                q.Observations, $"/api/plans/{night}/queues/{q.SpectrographId}?version={v}")).ToList(),
            found.UnassignedCount,
            $"/api/plans/{night}/unassigned?version={v}"));
    }

    public static async Task<Results<Ok<UnassignedPageResponse>, ProblemHttpResult>> GetUnassigned(
        string night, int? version, string? cursor, int? limit, PlanStore store, CancellationToken ct)
    {
        if (!PlanEndpoints.TryNight(night, out var date, out var bad))
        {
            return bad;
        }
        if (limit is < 1 or > MaxPage)
        {
            return Problems.BadQuery("limit", $"must be between 1 and {MaxPage}");
        }
        var after = 0;
        if (cursor is not null)
        {
            if (!TryReadCursor(cursor, out var pinned, out after))
            {
                return Problems.BadQuery("cursor", "is not a cursor this service handed out; start again without it");
            }
            if (version is not null && version != pinned)
            {
                return Problems.BadQuery("version", "differs from the version the cursor belongs to");
            }
            version = pinned;
        }
        var size = limit ?? DefaultPage;
        var page = await store.GetUnassignedPageAsync(date, version, after, size, ct);
        if (page is null)
        {
            return Problems.NotFound(version is null ? "night" : "version", version is null ? $"No plan for the night of {night} yet." : $"No version {version} for the night of {night}.");
        }
        var items = JsonSerializer.Deserialize<List<UnassignedCandidate>>(page.ItemsJson, PlanJson.Options) ?? [];
        var end = after + items.Count;
        var next = end < page.Total ? WriteCursor(page.Row.Version, end) : null;
        return TypedResults.Ok(new UnassignedPageResponse(PlanVersionResponse.From(page.Row), page.Total, items, next,
            next is null ? null : $"/api/plans/{night}/unassigned?cursor={next}&limit={size}"));
    }

    // The cursor is "u<version>.<position>" in base64url: opaque to clients, and it pins the version so pages never mix two plans.
    internal static string WriteCursor(int version, int position) =>
        Base64Url(string.Create(CultureInfo.InvariantCulture, $"u{version}.{position}"));

    internal static bool TryReadCursor(string cursor, out int version, out int position)
    {
        version = 0;
        position = 0;
        string text;
        try
        {
            text = System.Text.Encoding.UTF8.GetString(System.Buffers.Text.Base64Url.DecodeFromChars(cursor));
        }
        catch (FormatException)
        {
            return false;
        }
        var dot = text.IndexOf('.', StringComparison.Ordinal);
        return text.StartsWith('u') && dot > 1
            && int.TryParse(text.AsSpan(1, dot - 1), NumberStyles.None, CultureInfo.InvariantCulture, out version)
            && int.TryParse(text.AsSpan(dot + 1), NumberStyles.None, CultureInfo.InvariantCulture, out position)
            && version >= 1 && position >= 0;
    }

    private static string Base64Url(string text) => System.Buffers.Text.Base64Url.EncodeToString(System.Text.Encoding.UTF8.GetBytes(text));

    private sealed record QueueLine(string SpectrographId, string Name, string SiteName, double ResolvingPower, double BudgetSeconds, double UsedSeconds, double Cost, int Observations);
}
