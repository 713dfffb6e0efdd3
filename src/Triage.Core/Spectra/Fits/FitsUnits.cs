// Unit strings of FITS headers (CUNITn, BUNIT, TUNITn): a product of factors, each a unit name with an
// optional SI prefix and an optional power ("cm-2", "cm**-2", "cm^-2", "cm^(-2)", "cm2"), joined by
// blanks, "." or "*", divided by "/" (each "/" divides by the next factor or parenthesised group), with an
// optional leading scale factor ("10**-17", "10^-17", "1e-17"). A unit is reduced to an SI scale and the
// exponents of kg, m, s; flux densities are then converted to the internal convention
//   F_λ [erg s⁻¹ cm⁻² Å⁻¹] = F_λ[SI, W m⁻³] · 10⁻⁷,   F_λ = F_ν · c / λ²   (λ in vacuum).
// References:
//  1. IAU FITS Working Group, "Definition of the Flexible Image Transport System (FITS), version 4.0" (2016),
//     §4.3 and Tables 3-6 (units, prefixes, string syntax).
//  2. Greisen, E. W., et al., "Representations of spectral coordinates in FITS", A&A 446, 747 (2006), §3.1
//     (wavelength units default to m).
using System.Globalization;

namespace Triage.Core.Spectra.Fits;

/// <summary>A unit reduced to SI: value in SI = <see cref="Scale"/> × value in this unit; exponents of kg, m, s; counts.</summary>
public readonly record struct PhysicalUnit(double Scale, int Kg, int M, int S, int Count)
{
    /// <summary>True for a pure length (m¹).</summary>
    public bool IsLength => Kg == 0 && M == 1 && S == 0 && Count == 0;

    /// <summary>True for flux density per unit wavelength (W m⁻² m⁻¹ = kg m⁻¹ s⁻³).</summary>
    public bool IsFluxPerWavelength => Kg == 1 && M == -1 && S == -3 && Count == 0;

    /// <summary>True for flux density per unit frequency (W m⁻² Hz⁻¹ = kg s⁻²).</summary>
    public bool IsFluxPerFrequency => Kg == 1 && M == 0 && S == -2 && Count == 0;

    /// <summary>True for a pure number.</summary>
    public bool IsDimensionless => Kg == 0 && M == 0 && S == 0 && Count == 0;

    internal PhysicalUnit Times(PhysicalUnit o) => new(Scale * o.Scale, Kg + o.Kg, M + o.M, S + o.S, Count + o.Count);

    internal PhysicalUnit Pow(int p) => new(Math.Pow(Scale, p), Kg * p, M * p, S * p, Count * p);
}

/// <summary>Parses FITS unit strings and converts wavelengths and flux densities to the internal conventions.</summary>
public static class FitsUnits
{
    /// <summary>Speed of light (m s⁻¹), exact by the SI definition of the metre.</summary>
    public const double SpeedOfLight = 299_792_458;

    /// <summary>SI value (W m⁻³) of the internal flux unit erg s⁻¹ cm⁻² Å⁻¹: 10⁻⁷ W / (10⁻⁴ m² · 10⁻¹⁰ m).</summary>
    public const double InternalFluxSi = 1e7;

    private static readonly Dictionary<string, PhysicalUnit> Units = new(StringComparer.Ordinal)
    {
        ["m"] = new(1, 0, 1, 0, 0),
        ["g"] = new(1e-3, 1, 0, 0, 0),
        ["s"] = new(1, 0, 0, 1, 0),
        ["Hz"] = new(1, 0, 0, -1, 0),
        ["J"] = new(1, 1, 2, -2, 0),
        ["W"] = new(1, 1, 2, -3, 0),
        ["erg"] = new(1e-7, 1, 2, -2, 0),
        ["Jy"] = new(1e-26, 1, 0, -2, 0),
        ["Angstrom"] = new(1e-10, 0, 1, 0, 0),
        ["angstrom"] = new(1e-10, 0, 1, 0, 0),
        ["Ang"] = new(1e-10, 0, 1, 0, 0),
        ["AA"] = new(1e-10, 0, 1, 0, 0),
        ["Å"] = new(1e-10, 0, 1, 0, 0),
        ["micron"] = new(1e-6, 0, 1, 0, 0),
        ["µm"] = new(1e-6, 0, 1, 0, 0),
        ["ct"] = new(1, 0, 0, 0, 1),
        ["count"] = new(1, 0, 0, 0, 1),
        ["counts"] = new(1, 0, 0, 0, 1),
        ["adu"] = new(1, 0, 0, 0, 1),
        ["ADU"] = new(1, 0, 0, 0, 1),
        ["photon"] = new(1, 0, 0, 0, 1),
        ["ph"] = new(1, 0, 0, 0, 1),
        ["electron"] = new(1, 0, 0, 0, 1),
        ["e-"] = new(1, 0, 0, 0, 1),
    };

    // Only units that take prefixes in the FITS standard's Table 3 and are listed above.
    private static readonly HashSet<string> Prefixable = ["m", "g", "s", "Hz", "J", "W", "erg", "Jy"];

    private static readonly (string Prefix, double Factor)[] Prefixes =
    [
        ("da", 1e1), ("y", 1e-24), ("z", 1e-21), ("a", 1e-18), ("f", 1e-15), ("p", 1e-12), ("n", 1e-9), ("u", 1e-6),
        ("m", 1e-3), ("c", 1e-2), ("d", 1e-1), ("h", 1e2), ("k", 1e3), ("M", 1e6), ("G", 1e9), ("T", 1e12),
        ("P", 1e15), ("E", 1e18), ("Z", 1e21), ("Y", 1e24),
    ];

    /// <summary>Parses a unit string; false (with a reason) when it is not understood.</summary>
    public static bool TryParse(string text, out PhysicalUnit unit, out string? reason)
    {
        unit = new PhysicalUnit(1, 0, 0, 0, 0);
        reason = null;
        string s = text.Trim();
        if (s.Length == 0) return true;
        int pos = 0;
        try
        {
            unit = Product(s, ref pos);
            if (pos != s.Length) throw new FormatException($"unexpected '{s[pos]}' at character {pos + 1}");
            return true;
        }
        catch (FormatException ex)
        {
            reason = ex.Message;
            return false;
        }
    }

    private static PhysicalUnit Product(string s, ref int pos)
    {
        var result = new PhysicalUnit(1, 0, 0, 0, 0);
        bool first = true;
        while (true)
        {
            SkipBlanks(s, ref pos);
            if (pos >= s.Length || s[pos] == ')') return result;
            bool divide = false;
            if (!first)
            {
                if (s[pos] == '/') { divide = true; pos++; }
                else if (s[pos] is '.' or '*') pos++;
                SkipBlanks(s, ref pos);
            }
            else if (s[pos] == '/') { divide = true; pos++; SkipBlanks(s, ref pos); }
            var factor = Factor(s, ref pos);
            result = result.Times(divide ? factor.Pow(-1) : factor);
            first = false;
        }
    }

    private static PhysicalUnit Factor(string s, ref int pos)
    {
        if (pos >= s.Length) throw new FormatException("a unit is missing at the end");
        PhysicalUnit baseUnit;
        if (s[pos] == '(')
        {
            pos++;
            baseUnit = Product(s, ref pos);
            if (pos >= s.Length || s[pos] != ')') throw new FormatException("unbalanced parenthesis");
            pos++;
        }
        else if (char.IsDigit(s[pos]) || s[pos] is '+' or '-')
        {
            int start = pos;
            while (pos < s.Length && (char.IsDigit(s[pos]) || s[pos] is '.' or 'e' or 'E' or '+' or '-'))
                pos++;
            string number = s[start..pos];
            if (number == "10" && pos < s.Length && (s[pos] == '^' || (s[pos] == '*' && pos + 1 < s.Length && s[pos + 1] == '*')))
                return new PhysicalUnit(Math.Pow(10, Power(s, ref pos)), 0, 0, 0, 0);
            if (!double.TryParse(number, NumberStyles.Float, CultureInfo.InvariantCulture, out double scale) || scale <= 0)
                throw new FormatException($"'{number}' is not a positive scale factor");
            return new PhysicalUnit(scale, 0, 0, 0, 0);
        }
        else
        {
            int start = pos;
            while (pos < s.Length && (char.IsLetter(s[pos]) || s[pos] == 'µ' || (s[pos] == '-' && pos > start && s[pos - 1] == 'e' && pos - start == 1)))
                pos++;
            string name = s[start..pos];
            if (name.Length == 0) throw new FormatException($"unexpected '{s[pos]}' at character {pos + 1}");
            baseUnit = Lookup(name);
        }
        if (pos < s.Length && (s[pos] is '^' || s[pos] == '*' && pos + 1 < s.Length && s[pos + 1] == '*' || s[pos] is '-' or '+' || char.IsDigit(s[pos])))
            return baseUnit.Pow(Power(s, ref pos));
        return baseUnit;
    }

    private static int Power(string s, ref int pos)
    {
        if (s[pos] == '^') pos++;
        else if (s[pos] == '*') pos += 2;
        bool paren = pos < s.Length && s[pos] == '(';
        if (paren) pos++;
        int start = pos;
        if (pos < s.Length && s[pos] is '+' or '-') pos++;
        while (pos < s.Length && char.IsDigit(s[pos])) pos++;
        if (!int.TryParse(s[start..pos], NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out int p))
            throw new FormatException($"power '{s[start..pos]}' is not an integer");
        if (paren)
        {
            if (pos >= s.Length || s[pos] != ')') throw new FormatException("unbalanced parenthesis in a power");
            pos++;
        }
        return p;
    }

    private static PhysicalUnit Lookup(string name)
    {
        if (Units.TryGetValue(name, out var u)) return u;
        foreach (var (prefix, factor) in Prefixes)
            if (name.Length > prefix.Length && name.StartsWith(prefix, StringComparison.Ordinal)
                && Prefixable.Contains(name[prefix.Length..]) && Units.TryGetValue(name[prefix.Length..], out var b))
                return new PhysicalUnit(b.Scale * factor, b.Kg, b.M, b.S, b.Count);
        throw new FormatException($"unknown unit '{name}'");
    }

    private static void SkipBlanks(string s, ref int pos)
    {
        while (pos < s.Length && s[pos] == ' ') pos++;
    }

    /// <summary>
    /// Ångströms per unit of a wavelength axis. A null or blank unit is metres, the FITS WCS default for
    /// wavelength axes (Greisen et al. 2006, §3.1).
    /// </summary>
    /// <exception cref="FormatException">The unit is not a length.</exception>
    public static double AngstromPerUnit(string? unit)
    {
        if (string.IsNullOrWhiteSpace(unit)) return 1e10;
        if (!TryParse(unit, out var u, out string? why)) throw new FormatException($"'{unit}' is not a unit ({why})");
        if (!u.IsLength) throw new FormatException($"'{unit}' is not a unit of length");
        return u.Scale * 1e10;
    }

    /// <summary>How a flux column or image converts to erg s⁻¹ cm⁻² Å⁻¹.</summary>
    /// <param name="Factor">Multiplier of the stored value (for F_ν: to W m⁻² Hz⁻¹ times c / 10⁷, before dividing by λ²).</param>
    /// <param name="PerFrequency">True when the values are F_ν and must also be divided by λ² (λ in m).</param>
    /// <param name="Relative">True when no unit was stated: values are kept as relative F_λ.</param>
    public readonly record struct FluxConversion(double Factor, bool PerFrequency, bool Relative)
    {
        /// <summary>The factor for a sample at vacuum wavelength <paramref name="wavelengthAngstrom"/>.</summary>
        public double At(double wavelengthAngstrom) =>
            PerFrequency ? Factor / (wavelengthAngstrom * 1e-10 * wavelengthAngstrom * 1e-10) : Factor;
    }

    /// <summary>
    /// The conversion of a flux unit (BUNIT or TUNITn) to erg s⁻¹ cm⁻² Å⁻¹. A null or blank unit means relative
    /// flux per unit wavelength (kept as is, as in the plain-text format).
    /// </summary>
    /// <exception cref="FormatException">Not a unit, or not a flux density per unit wavelength or frequency.</exception>
    public static FluxConversion Flux(string? unit)
    {
        if (string.IsNullOrWhiteSpace(unit)) return new FluxConversion(1, false, true);
        if (!TryParse(unit, out var u, out string? why)) throw new FormatException($"'{unit}' is not a unit ({why})");
        if (u.IsFluxPerWavelength) return new FluxConversion(u.Scale / InternalFluxSi, false, false);
        if (u.IsFluxPerFrequency) return new FluxConversion(u.Scale * SpeedOfLight / InternalFluxSi, true, false);
        throw new FormatException(
            $"'{unit}' is not a flux density per unit wavelength (e.g. erg/s/cm2/Angstrom) or frequency (e.g. Jy); " +
            "counts, photons and other units are refused because their wavelength dependence is unknown");
    }
}
