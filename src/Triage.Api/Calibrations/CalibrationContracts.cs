using System.Text.Json;
using Triage.Storage.Calibrations;

namespace Triage.Api.Calibrations;

/// <summary>
/// Body of a calibration request. <c>library</c> is <c>synthetic</c> (generated in the service,
/// labelled synthetic everywhere) or <c>folder</c> (a library folder on the server, <c>libraryPath</c>).
/// Omitted settings take the calibration defaults (12 R values from 5 to 4000, or to the library's R when lower; S/N 5, 10, 20; 5 folds).
/// </summary>
public sealed record CalibrationRequest(
    string? Library,
    string? LibraryPath,
    int? Objects,
    int? Seed,
    IReadOnlyList<double>? Resolutions,
    IReadOnlyList<double?>? Snr,
    int? Folds,
    bool? Activate);

/// <summary>A started calibration job.</summary>
public sealed record CalibrationJobResponse(Guid JobId, string JobUrl);

/// <summary>A stored calibration (without its document).</summary>
public sealed record CalibrationResponse(
    Guid Id,
    DateTimeOffset CreatedAt,
    string Source,
    bool Synthetic,
    bool Active,
    string? LibraryFingerprint,
    string CodeVersion,
    Guid? JobId)
{
    public static CalibrationResponse From(CalibrationRow r) =>
        new(r.Id, r.CreatedAt, r.Source, r.Synthetic, r.Active, r.LibraryFingerprint, r.CodeVersion, r.JobId);
}

/// <summary>A calibration with its accuracy-model document.</summary>
public sealed record CalibrationDocumentResponse(CalibrationResponse Calibration, JsonElement Document);

/// <summary>Input of a <c>calibration</c> job.</summary>
public sealed record CalibrationJobInput(
    string Library,
    string? LibraryPath,
    int Objects,
    int Seed,
    IReadOnlyList<double>? Resolutions,
    IReadOnlyList<double?> Snr,
    int Folds,
    bool Activate);
