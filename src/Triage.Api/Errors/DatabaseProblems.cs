using Npgsql;

namespace Triage.Api.Errors;

/// <summary>
/// Which request field a database constraint protects, so that a write refused by a concurrent
/// change (two sites renamed to one name, a site removed while a spectrograph is added to it)
/// answers 409 naming that field instead of 500.
/// </summary>
public static class DatabaseProblems
{
    private static readonly Dictionary<string, (string Field, string Write, string Delete)> Constraints = new(StringComparer.Ordinal)
    {
        ["sites_name_key"] = ("name", "another site has this name (it was taken by a concurrent change)", "another site has this name"),
        ["spectrographs_name_per_site"] = ("name", "the site already has a spectrograph with this name (a concurrent change took it)", "the site already has a spectrograph with this name"),
        ["spectrographs_site_id_fkey"] = ("siteId", "the site no longer exists (it was removed by a concurrent change)", "the site still has spectrographs; remove or move them first"),
        ["observation_reports_spectrograph_id_fkey"] = ("spectrographId", "the spectrograph no longer exists (it was removed by a concurrent change)", "the spectrograph has observation reports and cannot be removed"),
        ["observation_reports_candidate_id_fkey"] = ("candidateId", "the candidate no longer exists", "the candidate has observation reports"),
        ["candidates_broker_id"] = ("brokerCandidateId", "this broker already sent a candidate with this id (a concurrent request stored it)", "this broker already sent a candidate with this id"),
        ["api_keys_public_id_key"] = ("key", "a key with this public id exists already", "a key with this public id exists already"),
    };

    /// <summary>The field a refused write names, and why, for a request with <paramref name="method"/>.</summary>
    public static (string Field, string Message) Describe(PostgresException violation, string method)
    {
        var deleting = HttpMethods.IsDelete(method);
        if (violation.ConstraintName is { } name && Constraints.TryGetValue(name, out var known))
        {
            return (deleting ? "id" : known.Field, deleting ? known.Delete : known.Write);
        }
        var field = violation.ColumnName is { } column ? ToCamel(column) : "body";
        return (field, "conflicts with the data as it is now (a concurrent change); read it again and retry");
    }

    /// <summary><c>site_id</c> → <c>siteId</c>.</summary>
    private static string ToCamel(string column)
    {
        var parts = column.Split('_', StringSplitOptions.RemoveEmptyEntries);
        return parts.Length == 0 ? column : parts[0] + string.Concat(parts.Skip(1).Select(p => char.ToUpperInvariant(p[0]) + p[1..]));
    }
}
