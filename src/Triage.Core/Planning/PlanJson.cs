using System.Text.Json;
using System.Text.Json.Serialization;
using Triage.Core.Calibration;

namespace Triage.Core.Planning;

/// <summary>JSON of the plan (camelCase, enums as camelCase strings) and reading of the calibration JSON.</summary>
public static class PlanJson
{
    /// <summary>Serializer options of the plan file and the plan endpoints.</summary>
    public static JsonSerializerOptions Options { get; } = new(JsonSerializerDefaults.Web)
    {
        WriteIndented = true,
        Converters = { new JsonStringEnumConverter(JsonNamingPolicy.CamelCase) },
    };

    /// <summary>The plan as JSON text.</summary>
    public static string Serialize(NightPlan plan) => JsonSerializer.Serialize(plan, Options);

    /// <summary>Reads a plan back.</summary>
    /// <exception cref="FormatException">Malformed JSON, naming the path.</exception>
    public static NightPlan Deserialize(string json)
    {
        try
        {
            return JsonSerializer.Deserialize<NightPlan>(json, Options) ?? throw new FormatException("plan: the document is null.");
        }
        catch (JsonException ex)
        {
            throw new FormatException($"plan: {ex.Path}: {ex.Message}", ex);
        }
    }

    /// <summary>Reads the calibration JSON as written by <c>calibrate</c> (extra members are ignored).</summary>
    /// <exception cref="FormatException">Malformed JSON or a missing member, naming the path.</exception>
    public static AccuracyModelDocument ReadCalibration(string json)
    {
        try
        {
            return JsonSerializer.Deserialize<AccuracyModelDocument>(json, Options) ?? throw new FormatException("calibration: the document is null.");
        }
        catch (JsonException ex)
        {
            throw new FormatException($"calibration: {ex.Path}: {ex.Message}", ex);
        }
    }
}
