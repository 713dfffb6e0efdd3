using Triage.Core.Planning;
using Triage.Core.Spectra;
using Triage.Learning;
using Triage.Storage.Calibrations;

namespace Triage.Api.Candidates;

/// <summary>The active calibration as the posterior update reads it.</summary>
/// <param name="CalibrationId">Calibration id.</param>
/// <param name="Surface">Its accuracy surface (confusion channels with the planner's shrinkage).</param>
/// <param name="BroadClasses">Broad classes a report may name.</param>
/// <param name="SnrReferenceWavelengthAngstrom">Wavelength at which the calibration's S/N is stated, Å.</param>
public sealed record ActiveChannel(Guid CalibrationId, AccuracySurface Surface, IReadOnlyList<BroadClass> BroadClasses, double SnrReferenceWavelengthAngstrom);

/// <summary>
/// Keeps the active calibration's surface parsed between reports: one cheap query per report
/// finds the active id, the document is parsed again only when it changed.
/// </summary>
public sealed class IdentificationModel(CalibrationStore calibrations)
{
    private ActiveChannel? _cached;

    /// <summary>The active channel, or null when no calibration is active.</summary>
    public async Task<ActiveChannel?> GetAsync(CancellationToken ct)
    {
        var id = await calibrations.ActiveIdAsync(ct);
        if (id is null)
        {
            return null;
        }

        var cached = _cached;
        if (cached?.CalibrationId == id)
        {
            return cached;
        }

        if (await calibrations.GetAsync(id, ct) is not { } active)
        {
            return null;
        }

        var document = CalibrationJson.Deserialize(active.DocumentJson);
        var broad = document.BroadClasses.Count > 0 ? document.BroadClasses : Taxonomy.Default.Classes;
        var fresh = new ActiveChannel(active.Row.Id, AccuracySurface.FromDocument(document), broad, document.SnrReferenceWavelengthAngstrom);
        _cached = fresh;
        return fresh;
    }
}
