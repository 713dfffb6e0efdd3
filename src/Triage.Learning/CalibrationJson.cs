using System.Text.Json;
using System.Text.Json.Serialization;
using Triage.Core.Calibration;

namespace Triage.Learning;

/// <summary>The calibration JSON: <see cref="AccuracyModelDocument"/> in camelCase with enums as strings.</summary>
public static class CalibrationJson
{
    /// <summary>Serializer options shared by the CLI, the service and the tests.</summary>
    public static JsonSerializerOptions Options { get; } = new(JsonSerializerDefaults.Web)
    {
        WriteIndented = true,
        Converters = { new JsonStringEnumConverter(JsonNamingPolicy.CamelCase) },
    };

    /// <summary>Serializes a document.</summary>
    public static string Serialize(AccuracyModelDocument document) => JsonSerializer.Serialize(document, Options);

    /// <summary>Deserializes a document.</summary>
    /// <exception cref="JsonException">Malformed JSON or a missing required member.</exception>
    public static AccuracyModelDocument Deserialize(string json) =>
        JsonSerializer.Deserialize<AccuracyModelDocument>(json, Options) ?? throw new JsonException("The calibration JSON is null.");

    /// <summary>Serializes the minimum-R table alone.</summary>
    public static string SerializeMinimumResolution(IReadOnlyList<MinimumResolutionRow> rows) => JsonSerializer.Serialize(rows, Options);

    /// <summary>Serializes one R's outcome (a calibration part's stored result), compact.</summary>
    public static string SerializeOutcome(ResolutionOutcome outcome) => JsonSerializer.Serialize(outcome, Compact);

    /// <summary>Deserializes one R's outcome.</summary>
    /// <exception cref="JsonException">Malformed JSON or a missing required member.</exception>
    public static ResolutionOutcome DeserializeOutcome(string json) =>
        JsonSerializer.Deserialize<ResolutionOutcome>(json, Compact) ?? throw new JsonException("The outcome JSON is null.");

    private static JsonSerializerOptions Compact { get; } = new(Options) { WriteIndented = false };
}
