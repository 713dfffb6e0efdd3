using Triage.Core.Spectra.Fits;

namespace Triage.Core.Tests.Spectra.Fits;

public sealed class AirVacuumAndUnitsTests
{
    // The formula (Edlén 1953 as used by WCSLIB for AWAV) is checked against astropy.wcs/WCSLIB on every
    // pixel of the air fixtures in FitsSpectrumReaderTests; these rows are independent spot checks.
    [Theory]
    // Hα: air 6562.80 Å ↔ vacuum 6564.61 Å (common practice: the standard pair quoted in line lists; from memory). ±0.01 Å.
    [InlineData(6562.80, 6564.61, 0.01)]
    // [O III] 5006.84 Å air ↔ 5008.24 Å vacuum (from memory, same source of practice). ±0.01 Å.
    [InlineData(5006.84, 5008.24, 0.01)]
    public void AirToVacuum_KnownLines_MatchTheQuotedPairs(double air, double vacuum, double tolerance)
    {
        Assert.Equal(vacuum, AirVacuum.AirToVacuum(air), tolerance);
    }

    [Theory]
    [InlineData(2000.0)]
    [InlineData(4861.3)]
    [InlineData(9000.0)]
    [InlineData(25000.0)]
    public void VacuumToAir_InvertsAirToVacuum(double air)
    {
        Assert.Equal(air, AirVacuum.VacuumToAir(AirVacuum.AirToVacuum(air)), 1e-9);
    }

    [Theory]
    [InlineData("Angstrom", 1.0)]
    [InlineData("nm", 10.0)]
    [InlineData("um", 1e4)]
    [InlineData("m", 1e10)]
    [InlineData("", 1e10)] // FITS WCS default for wavelength axes (Greisen et al. 2006, §3.1)
    public void AngstromPerUnit_LengthUnits(string unit, double expected)
    {
        Assert.Equal(expected, FitsUnits.AngstromPerUnit(unit), expected * 1e-12);
    }

    [Theory]
    // Unit syntax of FITS 4.0 §4.3: powers, prefixes, separators and scale factors.
    [InlineData("erg/s/cm2/Angstrom", 1.0)]
    [InlineData("erg s-1 cm-2 Angstrom-1", 1.0)]
    [InlineData("erg.s**-1.cm**-2.Angstrom**-1", 1.0)]
    [InlineData("10**(-17) erg/s/cm**2/Angstrom", 1e-17)]
    [InlineData("1e-17 erg/(s cm2 Angstrom)", 1e-17)]
    [InlineData("W m-2 nm-1", 100.0)] // 1 W m⁻² nm⁻¹ = 10⁹ W m⁻³ = 10⁹ / 10⁷ erg s⁻¹ cm⁻² Å⁻¹
    [InlineData("W/m2/m", 1e-7)]
    public void Flux_PerWavelengthUnits_ConvertToErgPerSecondPerSquareCentimetrePerAngstrom(string unit, double expected)
    {
        var c = FitsUnits.Flux(unit);
        Assert.False(c.PerFrequency);
        Assert.False(c.Relative);
        Assert.Equal(expected, c.At(5000), expected * 1e-12);
    }

    [Fact]
    public void Flux_Jansky_ConvertsWithCOverLambdaSquared()
    {
        // 1 Jy at 5000 Å: 1e-26 W m⁻² Hz⁻¹ · c / λ² = 1e-26 · 2.99792458e8 / (5e-7)² W m⁻³ = 1.19917e-11 W m⁻³
        // = 1.19917e-18 erg s⁻¹ cm⁻² Å⁻¹ (definition of F_λ = F_ν c/λ²).
        var c = FitsUnits.Flux("Jy");
        Assert.True(c.PerFrequency);
        Assert.Equal(1e-26 * 299_792_458 / (5e-7 * 5e-7) / 1e7, c.At(5000), 1e-30);
    }

    [Theory]
    [InlineData("count")]
    [InlineData("adu")]
    [InlineData("erg/s")]
    [InlineData("A")] // ampere in FITS, not ångström
    [InlineData("furlong")]
    public void Flux_NonFluxDensityUnits_AreRefused(string unit)
    {
        Assert.Throws<FormatException>(() => FitsUnits.Flux(unit));
    }

    [Fact]
    public void Flux_NoUnit_IsRelative()
    {
        Assert.True(FitsUnits.Flux(null).Relative);
        Assert.Equal(1, FitsUnits.Flux("  ").At(6000));
    }
}
