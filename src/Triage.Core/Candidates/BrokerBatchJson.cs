using System.Text.Json;
using System.Text.Json.Serialization;
using System.Text.RegularExpressions;

namespace Triage.Core.Candidates;

/// <summary>
/// Reads and writes the broker batch JSON (camelCase names, unknown members and duplicate
/// keys rejected, numbers only as JSON numbers, so NaN and Infinity cannot get in).
/// </summary>
public static partial class BrokerBatchJson
{
    /// <summary>The serializer options every reader and writer of the batch uses.</summary>
    public static JsonSerializerOptions Options { get; } = CreateOptions();

    /// <summary>Builds a fresh copy of <see cref="Options"/> (e.g. for a host to extend).</summary>
    public static JsonSerializerOptions CreateOptions() => new(JsonSerializerDefaults.Web)
    {
        UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow,
        AllowDuplicateProperties = false,
        NumberHandling = JsonNumberHandling.Strict,
        DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull,
        Converters = { new JsonStringEnumConverter(JsonNamingPolicy.CamelCase) },
        WriteIndented = false,
    };

    [GeneratedRegex(@"^\$\.candidates\[(\d+)\]")]
    private static partial Regex CandidateIndex();

    /// <summary>Parses batch JSON; on malformed JSON or a wrong type returns false and the error with its path.</summary>
    public static bool TryParse(string json, out BrokerBatch? batch, out BatchError? error)
    {
        try
        {
            batch = JsonSerializer.Deserialize<BrokerBatch>(json, Options);
            error = batch is null ? new BatchError("$", "The body must be a JSON object with a 'candidates' array.") : null;
            return batch is not null;
        }
        catch (JsonException ex)
        {
            batch = null;
            error = FromJsonException(ex);
            return false;
        }
    }

    /// <summary>Turns a serializer exception into a <see cref="BatchError"/> naming the JSON path.</summary>
    public static BatchError FromJsonException(JsonException ex)
    {
        string path = string.IsNullOrEmpty(ex.Path) ? "$" : ex.Path;
        int? index = null;
        var m = CandidateIndex().Match(path);
        if (m.Success && int.TryParse(m.Groups[1].Value, out int i))
        {
            index = i;
        }
        string field = path.StartsWith("$.", StringComparison.Ordinal) ? path[2..] : path;
        string reason = ex.Message.Split(" Path:", 2)[0];
        return new BatchError(field, $"is malformed or has the wrong type: {reason}", index);
    }

    /// <summary>Serialises a batch (compact).</summary>
    public static string Serialize(BrokerBatch batch) => JsonSerializer.Serialize(batch, Options);
}
