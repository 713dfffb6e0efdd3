// A 1-D spectrum from a FITS HDU.
// Image (primary or IMAGE extension): the first NAXIS1 elements (the first row of a multi-dimensional
// image) are the flux; the wavelength of pixel p (1-based; every other axis at pixel 1) is, with
//   x = s · (p − CRPIX1) + Σ_{j≥2} s_j · (1 − CRPIXj)    [s = CD1_1, s_j = CD1_j; or s = CDELT1·PC1_1, s_j = CDELT1·PC1_j]
//   WAVE / AWAV:          λ = CRVAL1 + x                        (Greisen et al. 2006, eq. 3 with linear S)
//   WAVE-LOG / AWAV-LOG:  λ = CRVAL1 · exp(x / CRVAL1)          (Greisen et al. 2006, eq. 5)
// in CUNIT1 (default m), then air → vacuum for AWAV (AirVacuum). Binary table: wavelength, flux and
// optional error / inverse variance / mask columns found by TTYPEn, units from TUNITn, scaled by TSCALn,
// TZEROn, with TNULLn as undefined; one sample per row or one row of vector columns.
// Flux units (BUNIT, TUNITn) are converted to erg s⁻¹ cm⁻² Å⁻¹ (FitsUnits); no unit = relative F_λ.
// Samples with NaN flux or wavelength, a set mask or zero inverse variance are dropped.
// References:
//  1. IAU FITS Working Group, "Definition of the Flexible Image Transport System (FITS), version 4.0" (2016),
//     §7.2-7.3 (image and binary-table extensions), §8 (world coordinates; CRPIXj defaults to 0).
//  2. Greisen, E. W., et al., "Representations of spectral coordinates in FITS", A&A 446, 747 (2006), §3.1-3.2, eq. 3 and 5.
//  3. Greisen, E. W., & Calabretta, M. R., "Representations of world coordinates in FITS", A&A 395, 1061 (2002), eq. 1-3.
using System.Globalization;

namespace Triage.Core.Spectra.Fits;

/// <summary>A spectrum read from FITS, with what its header said about it.</summary>
/// <param name="Spectrum">Vacuum wavelengths (Å) in increasing order; flux in erg s⁻¹ cm⁻² Å⁻¹ (or relative when no unit was stated).</param>
/// <param name="ResolvingPower">The header's <see cref="FitsSpectrumReader.ResolvingPowerKeyword"/>, when present.</param>
/// <param name="Hdu">Name of the HDU read ("primary", "HDU 1 'SPECTRUM'").</param>
/// <param name="Warnings">Things assumed while reading (e.g. vacuum wavelengths when a table does not say).</param>
/// <param name="FluxUnitStated">True when BUNIT / TUNITn gave the flux unit (the flux is then absolute).</param>
public sealed record FitsSpectrum(Spectrum Spectrum, double? ResolvingPower, string Hdu, IReadOnlyList<string> Warnings, bool FluxUnitStated);

/// <summary>Reads one 1-D spectrum from a FITS stream (see docs/libraries.md for the accepted layouts).</summary>
public static class FitsSpectrumReader
{
    /// <summary>
    /// Header keyword holding the resolving power λ/Δλ of the spectrum as observed (the name of the
    /// IVOA Spectrum Data Model's resolving-power keyword, from memory). Read from the spectrum's HDU, else the primary header.
    /// </summary>
    public const string ResolvingPowerKeyword = "SPEC_RP";

    /// <summary>Column names (TTYPEn, case-insensitive) read as wavelength; LOGLAM holds log₁₀(λ/Å).</summary>
    public static readonly IReadOnlyList<string> WavelengthColumns = ["WAVE", "WAVELENGTH", "LAMBDA", "AWAV", "LOGLAM"];

    /// <summary>Column names read as flux.</summary>
    public static readonly IReadOnlyList<string> FluxColumns = ["FLUX", "FLUX_DENSITY"];

    /// <summary>Column names read as the 1σ flux error (same unit as the flux).</summary>
    public static readonly IReadOnlyList<string> ErrorColumns = ["ERR", "ERROR", "FLUX_ERR", "FLUX_ERROR", "SIGMA"];

    /// <summary>Column names read as inverse variance (flux⁻²); 0 marks a sample without information.</summary>
    public static readonly IReadOnlyList<string> InverseVarianceColumns = ["IVAR", "INVVAR", "FLUX_IVAR"];

    /// <summary>Column names read as a mask: non-zero (or T) marks a bad sample.</summary>
    public static readonly IReadOnlyList<string> MaskColumns = ["MASK", "QUALITY", "DQ"];

    /// <summary>
    /// Reads the spectrum in HDU <paramref name="hdu"/> (a 0-based index or an EXTNAME; null: the primary
    /// HDU if it has data, else the first image or binary-table extension).
    /// </summary>
    /// <exception cref="FitsFormatException">Anything refused, naming the HDU and the keyword or column.</exception>
    public static FitsSpectrum Read(Stream stream, string? hdu, SpectrumReadOptions options)
    {
        var seen = new List<string>();
        double? primaryR = null;
        var found = FitsFile.Find(stream, (h, i) =>
        {
            if (i == 0) primaryR = ResolvingPower(h);
            return Wanted(h, i, hdu);
        }, seen);
        if (found is null)
            throw new FitsFormatException(null, hdu is null ? "NAXIS" : "EXTNAME", hdu is null
                ? $"no HDU holds a spectrum (an image with NAXIS ≥ 1 or a binary table); HDUs: {string.Join(", ", seen)}"
                : $"no HDU '{hdu}' (give a 0-based index or an EXTNAME); HDUs: {string.Join(", ", seen)}");
        var warnings = new List<string>();
        var (spectrum, unitStated) = found.Extension switch
        {
            null or "IMAGE" => ReadImage(found, options),
            "BINTABLE" => ReadTable(found, options, warnings),
            var x => throw found.Header.Bad("XTENSION", $"XTENSION = '{x}' is neither an image nor a binary table"),
        };
        double? r = found.Index == 0 ? primaryR : ResolvingPower(found.Header) ?? primaryR;
        return new FitsSpectrum(spectrum, r, found.Header.HduName, warnings, unitStated);
    }

    private static bool Wanted(FitsHeader h, int index, string? hdu)
    {
        if (hdu is not null)
            return int.TryParse(hdu, NumberStyles.None, CultureInfo.InvariantCulture, out int n)
                ? n == index
                : string.Equals(h["EXTNAME"] as string, hdu.Trim(), StringComparison.OrdinalIgnoreCase);
        if (index == 0) return h["NAXIS"] is long and > 0;
        return (h["XTENSION"] as string)?.Trim().ToUpperInvariant() switch
        {
            "IMAGE" => h["NAXIS"] is long and > 0,
            "BINTABLE" => true,
            _ => false,
        };
    }

    private static double? ResolvingPower(FitsHeader h)
    {
        if (!h.Contains(ResolvingPowerKeyword)) return null;
        double r = h.Real(ResolvingPowerKeyword)!.Value;
        if (!(r > 0) || !double.IsFinite(r))
            throw h.Bad(ResolvingPowerKeyword, string.Create(CultureInfo.InvariantCulture, $"{ResolvingPowerKeyword} = {r} must be a positive resolving power"));
        return r;
    }

    private static (Spectrum, bool) ReadImage(FitsHdu hdu, SpectrumReadOptions options)
    {
        var h = hdu.Header;
        if (hdu.Naxis == 0) throw h.Bad("NAXIS", "NAXIS = 0: the HDU holds no data");
        long n1 = hdu.Axis(1);
        if (n1 < 2) throw h.Bad("NAXIS1", string.Create(CultureInfo.InvariantCulture, $"NAXIS1 = {n1}: a spectrum needs at least 2 pixels"));
        for (int j = 2; j <= hdu.Naxis; j++)
            if (hdu.Axis(j) == 0)
                throw h.Bad("NAXIS" + j.ToString(CultureInfo.InvariantCulture), $"NAXIS{j} = 0: the image holds no data");
        if (h["BLANK"] is not null && hdu.Bitpix < 0)
            throw h.Bad("BLANK", "BLANK is only allowed with integer BITPIX (floating-point data marks undefined values with NaN)");
        var flux = FitsFile.Values(hdu, 0, (int)n1);
        var wave = ImageWavelengths(h, (int)n1, hdu.Naxis);
        var conversion = FluxConversion(h, "BUNIT");
        return (Assemble(h, wave, flux, null, null, conversion, options, "data"), !conversion.Relative);
    }

    /// <summary>Vacuum wavelengths (Å) of the first <paramref name="n"/> pixels of axis 1 (see the file's maths).</summary>
    internal static double[] ImageWavelengths(FitsHeader h, int n, int naxis)
    {
        string ctype = (h.Text("CTYPE1") ?? throw h.Bad("CTYPE1",
            "CTYPE1 is missing: the spectral axis must be typed WAVE, AWAV, WAVE-LOG or AWAV-LOG")).Trim().ToUpperInvariant();
        (bool air, bool log) = ctype switch
        {
            "WAVE" => (false, false),
            "AWAV" => (true, false),
            "WAVE-LOG" => (false, true),
            "AWAV-LOG" => (true, true),
            _ => throw h.Bad("CTYPE1", $"CTYPE1 = '{ctype}' is not a wavelength axis read here (WAVE, AWAV, WAVE-LOG, AWAV-LOG)"),
        };
        if (h["DC-FLAG"] is long dc && dc != 0 && dc != -1)
            throw h.Bad("DC-FLAG", $"DC-FLAG = {dc} marks a log₁₀-spaced solution outside the FITS WCS; describe it with CTYPE1 = 'WAVE-LOG'");
        double crval = h.Real("CRVAL1") ?? throw h.Bad("CRVAL1", "CRVAL1 is missing: the wavelength solution needs its reference value");
        double crpix = h.Real("CRPIX1") ?? 0;
        double step, offset = 0;
        string stepKeyword;
        bool cd = false;
        for (int j = 1; j <= naxis && !cd; j++) cd = h.Contains(string.Create(CultureInfo.InvariantCulture, $"CD1_{j}"));
        if (cd)
        {
            stepKeyword = "CD1_1";
            step = h.Real("CD1_1") ?? 0;
            for (int j = 2; j <= naxis; j++)
                offset += (h.Real(string.Create(CultureInfo.InvariantCulture, $"CD1_{j}")) ?? 0)
                          * (1 - (h.Real(string.Create(CultureInfo.InvariantCulture, $"CRPIX{j}")) ?? 0));
        }
        else
        {
            stepKeyword = "CDELT1";
            double cdelt = h.Real("CDELT1") ?? throw h.Bad("CDELT1", "CDELT1 (or CD1_1) is missing: the wavelength solution needs its step per pixel");
            step = cdelt * (h.Real("PC1_1") ?? 1);
            for (int j = 2; j <= naxis; j++)
                offset += cdelt * (h.Real(string.Create(CultureInfo.InvariantCulture, $"PC1_{j}")) ?? 0)
                          * (1 - (h.Real(string.Create(CultureInfo.InvariantCulture, $"CRPIX{j}")) ?? 0));
        }
        if (step == 0 || !double.IsFinite(step)) throw h.Bad(stepKeyword, $"{stepKeyword} = 0: the wavelength solution does not advance");
        if (log && !(crval > 0)) throw h.Bad("CRVAL1", string.Create(CultureInfo.InvariantCulture, $"CRVAL1 = {crval} must be positive for a logarithmic axis"));
        double perUnit;
        string? cunit = h.Text("CUNIT1");
        try { perUnit = FitsUnits.AngstromPerUnit(cunit); }
        catch (FormatException ex) { throw h.Bad("CUNIT1", $"CUNIT1: {ex.Message}"); }
        var wave = new double[n];
        for (int i = 0; i < n; i++)
        {
            double x = step * (i + 1 - crpix) + offset;
            wave[i] = (log ? crval * Math.Exp(x / crval) : crval + x) * perUnit;
        }
        double lo = Math.Min(wave[0], wave[^1]), hi = Math.Max(wave[0], wave[^1]);
        if (!(lo > 0))
            throw h.Bad("CRVAL1", string.Create(CultureInfo.InvariantCulture, $"the solution (CRVAL1, {stepKeyword}, CRPIX1) reaches a non-positive wavelength {lo:G6} Å"));
        if (lo < 100 || hi > 1e7)
            throw h.Bad("CUNIT1", string.Create(CultureInfo.InvariantCulture,
                $"the solution spans {lo:G4}–{hi:G4} Å, outside 100 Å – 1 mm; CUNIT1 = '{cunit ?? "(absent: metres, the FITS default)"}' is likely wrong"));
        if (air)
        {
            if (lo < AirVacuum.MinAirAngstrom)
                throw h.Bad("CTYPE1", string.Create(CultureInfo.InvariantCulture,
                    $"CTYPE1 = '{ctype}' gives air wavelengths below {AirVacuum.MinAirAngstrom} Å ({lo:0.#} Å), outside the air–vacuum formula's range"));
            for (int i = 0; i < n; i++) wave[i] = AirVacuum.AirToVacuum(wave[i]);
        }
        return wave;
    }

    private static FitsUnits.FluxConversion FluxConversion(FitsHeader h, string keyword)
    {
        try { return FitsUnits.Flux(h.Text(keyword)); }
        catch (FormatException ex) { throw h.Bad(keyword, $"{keyword}: {ex.Message}"); }
    }

    private sealed record Column(int Number, string Name, int Repeat, char Type, int Offset, int ElementBytes)
    {
        public string Keyword(string prefix) => prefix + Number.ToString(CultureInfo.InvariantCulture);
    }

    private static (Spectrum, bool) ReadTable(FitsHdu hdu, SpectrumReadOptions options, List<string> warnings)
    {
        var h = hdu.Header;
        if (hdu.Bitpix != 8) throw h.Bad("BITPIX", "a binary table has BITPIX = 8");
        if (hdu.Naxis != 2) throw h.Bad("NAXIS", string.Create(CultureInfo.InvariantCulture, $"a binary table has NAXIS = 2, not {hdu.Naxis}"));
        long rowBytes = hdu.Axis(1), rows = hdu.Axis(2);
        int fields = (int)h.RequiredInteger("TFIELDS", 0, 999);
        var columns = new List<Column>();
        int offset = 0;
        for (int i = 1; i <= fields; i++)
        {
            string key = "TFORM" + i.ToString(CultureInfo.InvariantCulture);
            string form = (h.Text(key) ?? throw h.Bad(key, $"{key} is missing (TFIELDS = {fields})")).Trim();
            int k = 0;
            while (k < form.Length && char.IsDigit(form[k])) k++;
            int repeat = k == 0 ? 1 : int.Parse(form[..k], CultureInfo.InvariantCulture);
            if (k >= form.Length) throw h.Bad(key, $"{key} = '{form}' has no data type");
            char type = form[k];
            int size = type switch
            {
                'L' or 'B' or 'A' => 1,
                'I' => 2,
                'J' or 'E' => 4,
                'K' or 'D' or 'C' or 'P' => 8,
                'M' or 'Q' => 16,
                'X' => 0,
                _ => throw h.Bad(key, $"{key} = '{form}': unknown data type '{type}'"),
            };
            int width = type == 'X' ? (repeat + 7) / 8 : type is 'P' or 'Q' ? size * Math.Min(repeat, 1) : repeat * size;
            string name = (h.Text("TTYPE" + i.ToString(CultureInfo.InvariantCulture)) ?? "").Trim();
            columns.Add(new Column(i, name, repeat, type, offset, size));
            offset += width;
        }
        if (offset != rowBytes)
            throw h.Bad("NAXIS1", string.Create(CultureInfo.InvariantCulture, $"NAXIS1 = {rowBytes} but the TFORMn widths add up to {offset} bytes per row"));

        Column? Find(IReadOnlyList<string> names) =>
            columns.FirstOrDefault(c => names.Contains(c.Name, StringComparer.OrdinalIgnoreCase));
        var waveCol = Find(WavelengthColumns) ?? throw h.Bad("TTYPEn",
            $"no wavelength column (TTYPEn = {string.Join(", ", WavelengthColumns)}); columns: {string.Join(", ", columns.Select(c => c.Name))}");
        var fluxCol = Find(FluxColumns) ?? throw h.Bad("TTYPEn",
            $"no flux column (TTYPEn = {string.Join(", ", FluxColumns)}); columns: {string.Join(", ", columns.Select(c => c.Name))}");
        var errCol = Find(ErrorColumns);
        var ivarCol = Find(InverseVarianceColumns);
        var maskCol = Find(MaskColumns);
        long count = rows * waveCol.Repeat;
        foreach (var c in new[] { fluxCol, errCol, ivarCol, maskCol })
            if (c is not null && rows * c.Repeat != count)
                throw h.Bad(c.Keyword("TFORM"), string.Create(CultureInfo.InvariantCulture,
                    $"column {c.Name} holds {rows * c.Repeat} values where the wavelength column {waveCol.Name} holds {count}"));
        if (count < 2) throw h.Bad("NAXIS2", string.Create(CultureInfo.InvariantCulture, $"the table holds {count} samples: a spectrum needs at least 2"));
        if (count > int.MaxValue / 8) throw h.Bad("NAXIS2", "the table is too large");

        double[] ColumnValues(Column c)
        {
            int bitpix = c.Type switch
            {
                'B' => 8, 'I' => 16, 'J' => 32, 'K' => 64, 'E' => -32, 'D' => -64, 'L' => 8,
                _ => throw h.Bad(c.Keyword("TFORM"), $"column {c.Name}: {c.Keyword("TFORM")} type '{c.Type}' is not numeric"),
            };
            double scale = h.Real(c.Keyword("TSCAL")) ?? 1, zero = h.Real(c.Keyword("TZERO")) ?? 0;
            long? blank = bitpix > 0 && c.Type != 'L' ? h.Integer(c.Keyword("TNULL")) : null;
            var values = new double[count];
            for (long r = 0; r < rows; r++)
            {
                var src = hdu.Data.AsSpan((int)(r * rowBytes + c.Offset), c.Repeat * c.ElementBytes);
                var dst = values.AsSpan((int)(r * c.Repeat), c.Repeat);
                if (c.Type == 'L')
                    for (int k = 0; k < c.Repeat; k++) dst[k] = src[k] == (byte)'T' ? 1 : 0;
                else FitsFile.Decode(src, bitpix, dst, 0, scale, zero, blank);
            }
            return values;
        }

        var wave = ColumnValues(waveCol);
        bool logLambda = waveCol.Name.Equals("LOGLAM", StringComparison.OrdinalIgnoreCase);
        string? tunit = h.Text(waveCol.Keyword("TUNIT"));
        double perUnit = 1;
        if (logLambda)
        {
            for (int i = 0; i < wave.Length; i++) wave[i] = Math.Pow(10, wave[i]);
        }
        else
        {
            if (string.IsNullOrWhiteSpace(tunit))
                throw h.Bad(waveCol.Keyword("TUNIT"), $"{waveCol.Keyword("TUNIT")} is missing: state the unit of the wavelength column {waveCol.Name}");
            try { perUnit = FitsUnits.AngstromPerUnit(tunit); }
            catch (FormatException ex) { throw h.Bad(waveCol.Keyword("TUNIT"), $"{waveCol.Keyword("TUNIT")}: {ex.Message}"); }
            for (int i = 0; i < wave.Length; i++) wave[i] *= perUnit;
        }
        string? frame = h.Text(waveCol.Keyword("TCTYP"))?.Trim().ToUpperInvariant();
        bool namedAir = waveCol.Name.Equals("AWAV", StringComparison.OrdinalIgnoreCase);
        if (frame is not null and not "WAVE" and not "AWAV")
            throw h.Bad(waveCol.Keyword("TCTYP"), $"{waveCol.Keyword("TCTYP")} = '{frame}': the wavelength column must be WAVE (vacuum) or AWAV (air)");
        if (frame == "WAVE" && namedAir)
            throw h.Bad(waveCol.Keyword("TCTYP"), $"{waveCol.Keyword("TCTYP")} = 'WAVE' (vacuum) contradicts the column name AWAV (air)");
        bool air = frame == "AWAV" || namedAir;
        if (frame is null && !namedAir)
            warnings.Add($"{h.HduName}: the wavelength column {waveCol.Name} does not state air or vacuum ({waveCol.Keyword("TCTYP")}); read as vacuum");
        int monotonic = 0, last = -1;
        for (int i = 0; i < wave.Length; i++)
        {
            double w = wave[i];
            if (double.IsNaN(w)) continue;
            if (!(w > 0) || double.IsInfinity(w))
                throw h.Bad(waveCol.Name, string.Create(CultureInfo.InvariantCulture, $"column {waveCol.Name}: wavelength {w} at sample {i + 1} must be positive and finite"));
            if (last >= 0)
            {
                int dir = w > wave[last] ? 1 : w < wave[last] ? -1 : 0;
                if (dir == 0 || (monotonic != 0 && dir != monotonic))
                    throw h.Bad(waveCol.Name, string.Create(CultureInfo.InvariantCulture,
                        $"column {waveCol.Name} is not strictly monotonic: sample {i + 1} ({w:G8}) after sample {last + 1} ({wave[last]:G8})"));
                monotonic = dir;
            }
            last = i;
        }
        if (air)
        {
            for (int i = 0; i < wave.Length; i++)
            {
                if (double.IsNaN(wave[i])) continue;
                if (wave[i] < AirVacuum.MinAirAngstrom)
                    throw h.Bad(waveCol.Name, string.Create(CultureInfo.InvariantCulture,
                        $"air wavelength {wave[i]:0.#} Å is below {AirVacuum.MinAirAngstrom} Å, outside the air–vacuum formula's range"));
                wave[i] = AirVacuum.AirToVacuum(wave[i]);
            }
        }
        var flux = ColumnValues(fluxCol);
        var conversion = FluxConversion(h, fluxCol.Keyword("TUNIT"));
        double[]? err = null;
        if (errCol is not null)
        {
            err = ColumnValues(errCol);
            foreach (double e in err)
                if (e < 0 || double.IsInfinity(e))
                    throw h.Bad(errCol.Name, string.Create(CultureInfo.InvariantCulture, $"column {errCol.Name}: error {e} must be non-negative and finite"));
        }
        bool[]? drop = null;
        if (ivarCol is not null)
        {
            var ivar = ColumnValues(ivarCol);
            err ??= new double[count];
            drop = new bool[count];
            for (int i = 0; i < ivar.Length; i++)
            {
                if (ivar[i] < 0 || double.IsInfinity(ivar[i]))
                    throw h.Bad(ivarCol.Name, string.Create(CultureInfo.InvariantCulture, $"column {ivarCol.Name}: inverse variance {ivar[i]} must be non-negative and finite"));
                if (errCol is null) err[i] = ivar[i] > 0 ? 1 / Math.Sqrt(ivar[i]) : double.NaN;
                drop[i] = ivar[i] == 0;
            }
        }
        if (maskCol is not null)
        {
            var mask = ColumnValues(maskCol);
            drop ??= new bool[count];
            for (int i = 0; i < mask.Length; i++) drop[i] |= mask[i] != 0 && !double.IsNaN(mask[i]);
        }
        return (Assemble(h, wave, flux, err, drop, conversion, options, fluxCol.Name), !conversion.Relative);
    }

    /// <summary>Drops unusable samples, converts the flux, sorts by wavelength and checks coverage.</summary>
    private static Spectrum Assemble(FitsHeader h, double[] wave, double[] flux, double[]? err, bool[]? drop,
        FitsUnits.FluxConversion conversion, SpectrumReadOptions options, string fluxName)
    {
        int n = 0;
        for (int i = 0; i < wave.Length; i++)
        {
            if (double.IsNaN(wave[i]) || double.IsNaN(flux[i]) || (drop is not null && drop[i])) continue;
            if (double.IsInfinity(flux[i]))
                throw h.Bad(fluxName, string.Create(CultureInfo.InvariantCulture, $"{fluxName}: the flux at sample {i + 1} is infinite"));
            double f = conversion.At(wave[i]);
            wave[n] = wave[i];
            flux[n] = flux[i] * f;
            if (err is not null) err[n] = err[i] * f;
            n++;
        }
        Array.Resize(ref wave, n);
        Array.Resize(ref flux, n);
        if (err is not null) Array.Resize(ref err, n);
        if (n > 1 && wave[0] > wave[^1])
        {
            Array.Reverse(wave);
            Array.Reverse(flux);
            if (err is not null) Array.Reverse(err);
        }
        if (SpectrumText.CoverageProblem(wave, options) is { } problem) throw h.Bad(null, problem);
        return new Spectrum(wave, flux, err);
    }
}
