namespace Triage.Core.Candidates;

/// <summary>A photometric band Triage accepts, named by the trade's band letter.</summary>
/// <param name="Name">Band letter as written in the batch JSON (case-sensitive: <c>r</c> and <c>R</c> differ).</param>
/// <param name="EffectiveWavelengthAngstrom">Effective wavelength, Å.</param>
/// <param name="Family">Which family of filters the letter belongs to (documentation only).</param>
public sealed record PhotometricBand(string Name, double EffectiveWavelengthAngstrom, string Family);

/// <summary>
/// The documented list of common filters with their effective wavelengths.
/// </summary>
/// <remarks>
/// All wavelengths are <b>from memory</b> (rounded typical values; not checked against
/// published filter curves). A band letter stands for a family of similar filters: the
/// survey-specific versions of one letter differ by up to ~150 Å in effective wavelength,
/// which is far below the resolution at which Triage uses colour. Lower-case <c>ugrizy</c>:
/// the Sloan-like systems used by wide-field surveys (values averaged over the common
/// versions); upper-case <c>UBVRI</c>: Johnson-Cousins (Bessell-type realisation);
/// <c>c</c>/<c>o</c>: the broad cyan and orange filters of some all-sky asteroid surveys;
/// <c>J H Ks</c>: near-infrared.
/// </remarks>
public static class PhotometricBands
{
    /// <summary>Every accepted band, ordered by effective wavelength.</summary>
    public static IReadOnlyList<PhotometricBand> All { get; } =
    [
        new("u", 3560, "Sloan-like ugrizy"),
        new("U", 3660, "Johnson-Cousins"),
        new("B", 4380, "Johnson-Cousins"),
        new("g", 4730, "Sloan-like ugrizy"),
        new("c", 5330, "broad cyan (asteroid-survey style)"),
        new("V", 5450, "Johnson-Cousins"),
        new("r", 6230, "Sloan-like ugrizy"),
        new("R", 6410, "Johnson-Cousins"),
        new("o", 6790, "broad orange (asteroid-survey style)"),
        new("i", 7620, "Sloan-like ugrizy"),
        new("I", 7980, "Johnson-Cousins"),
        new("z", 9000, "Sloan-like ugrizy"),
        new("y", 9700, "Sloan-like ugrizy"),
        new("J", 12350, "near-infrared"),
        new("H", 16620, "near-infrared"),
        new("Ks", 21590, "near-infrared"),
    ];

    private static readonly Dictionary<string, PhotometricBand> ByName =
        All.ToDictionary(b => b.Name, StringComparer.Ordinal);

    /// <summary>Looks a band up by its exact (case-sensitive) name.</summary>
    public static bool TryGet(string? name, out PhotometricBand band)
    {
        if (name is not null && ByName.TryGetValue(name, out var found))
        {
            band = found;
            return true;
        }
        band = null!;
        return false;
    }

    /// <summary>Looks a band up by name; throws <see cref="ArgumentException"/> when unknown.</summary>
    public static PhotometricBand Get(string name) =>
        TryGet(name, out var band) ? band : throw new ArgumentException($"Unknown band '{name}'.", nameof(name));
}
