// FITS structure: a primary HDU then optional extensions, each a header followed by a data unit of
//   Nbytes = |BITPIX|/8 · GCOUNT · (PCOUNT + NAXIS1 · … · NAXISm)
// (primary: GCOUNT = 1, PCOUNT = 0; NAXIS = 0 means no data), padded to whole 2880-byte blocks.
// Numbers are big-endian two's-complement integers or IEEE-754 floats; the physical value of an
// array element is BZERO + BSCALE · stored, and an integer equal to BLANK is undefined.
// References:
//  1. IAU FITS Working Group, "Definition of the Flexible Image Transport System (FITS), version 4.0" (2016),
//     §4.4.1 (mandatory keywords), §4.4.2.5 (BSCALE, BZERO, BLANK), §5 (data representation), eq. 1-2 (data size).
using System.Buffers.Binary;
using System.Globalization;
using System.IO.Compression;

namespace Triage.Core.Spectra.Fits;

/// <summary>One header-data unit: its header and its data bytes (without the block padding).</summary>
/// <param name="Index">0 for the primary HDU, 1 for the first extension, …</param>
public sealed record FitsHdu(int Index, FitsHeader Header, byte[] Data)
{
    /// <summary>BITPIX of the data (8, 16, 32, 64, −32 or −64).</summary>
    public int Bitpix => (int)Header.Integer("BITPIX")!.Value;

    /// <summary>NAXIS.</summary>
    public int Naxis => (int)Header.Integer("NAXIS")!.Value;

    /// <summary>NAXISn (n from 1); validated when the HDU was read.</summary>
    public long Axis(int n) => Header.Integer("NAXIS" + n.ToString(CultureInfo.InvariantCulture))!.Value;

    /// <summary>XTENSION (trimmed, upper case), or null for the primary HDU.</summary>
    public string? Extension => Index == 0 ? null : Header.Text("XTENSION")?.Trim().ToUpperInvariant();
}

/// <summary>Reads the HDUs of a FITS stream in order, keeping only the data of the HDUs asked for.</summary>
public static class FitsFile
{
    /// <summary>Largest data unit read (bytes); larger ones are refused rather than allocated.</summary>
    public const long MaxDataBytes = 1L << 30;

    /// <summary>
    /// Wraps <paramref name="stream"/> in a gzip decompressor when <paramref name="fileName"/> ends in ".gz"
    /// (RFC 1952, through <see cref="GZipStream"/>).
    /// </summary>
    public static Stream Decompressed(Stream stream, string fileName) =>
        fileName.EndsWith(".gz", StringComparison.OrdinalIgnoreCase) ? new GZipStream(stream, CompressionMode.Decompress) : stream;

    /// <summary>
    /// Reads HDUs from the start of <paramref name="stream"/> until <paramref name="select"/> accepts one
    /// (its data is then read and returned) or the stream ends (null). Data of skipped HDUs is read past, not kept.
    /// </summary>
    /// <param name="select">Given each header (the index is on the header's name), returns true for the HDU wanted.</param>
    /// <param name="seen">Receives the name of every HDU passed, for messages.</param>
    /// <exception cref="FitsFormatException">A truncated or malformed header or data unit, naming the keyword.</exception>
    public static FitsHdu? Find(Stream stream, Func<FitsHeader, int, bool> select, List<string>? seen = null)
    {
        var block = new byte[FitsHeader.BlockBytes];
        bool ReadBlock(byte[] b) => ReadExactly(stream, b, 0, b.Length) == b.Length;
        for (int index = 0; ; index++)
        {
            int got = ReadExactly(stream, block, 0, block.Length);
            if (index > 0 && got == 0) return null;
            bool pending = true;
            // The first block is already in the buffer; the parser asks for the rest one by one.
            var header = FitsHeader.Parse(b =>
            {
                if (!pending) return ReadBlock(b);
                pending = false;
                return got == b.Length;
            }, index, block);
            seen?.Add(header.HduName);
            long bytes = DataBytes(header, index, out string sizeKeyword);
            if (select(header, index))
            {
                if (bytes > MaxDataBytes)
                    throw header.Bad(sizeKeyword, string.Create(CultureInfo.InvariantCulture, $"the data unit of {bytes} bytes is too large to read"));
                var data = new byte[bytes];
                int n = ReadExactly(stream, data, 0, data.Length);
                if (n < data.Length)
                    throw header.Bad(sizeKeyword, string.Create(CultureInfo.InvariantCulture,
                        $"the data unit is truncated: BITPIX and {sizeKeyword} promise {bytes} bytes, the file holds {n}"));
                return new FitsHdu(index, header, data);
            }
            long padded = (bytes + FitsHeader.BlockBytes - 1) / FitsHeader.BlockBytes * FitsHeader.BlockBytes;
            if (Skip(stream, padded) < bytes)
                throw header.Bad(sizeKeyword, $"the data unit is truncated (BITPIX and {sizeKeyword} promise {bytes} bytes)");
        }
    }

    /// <summary>Validates the mandatory keywords and returns the size of the data unit in bytes (no padding).</summary>
    private static long DataBytes(FitsHeader h, int index, out string sizeKeyword)
    {
        if (index == 0 && h["SIMPLE"] is not true)
            throw h.Bad("SIMPLE", "SIMPLE must be T (the file does not conform to the FITS standard)");
        long bitpix = h.Integer("BITPIX") ?? throw h.Bad("BITPIX", "mandatory keyword BITPIX is missing");
        if (bitpix is not (8 or 16 or 32 or 64 or -32 or -64))
            throw h.Bad("BITPIX", string.Create(CultureInfo.InvariantCulture, $"BITPIX = {bitpix} is not one of 8, 16, 32, 64, -32, -64"));
        long naxis = h.RequiredInteger("NAXIS", 0, 999);
        long product = naxis == 0 ? 0 : 1;
        sizeKeyword = "NAXIS";
        for (int i = 1; i <= naxis; i++)
        {
            string k = "NAXIS" + i.ToString(CultureInfo.InvariantCulture);
            long n = h.RequiredInteger(k, 0, int.MaxValue);
            // Clamped so that a hostile header cannot overflow the size; anything above the cap is refused anyway.
            product = Math.Min(product * n, MaxDataBytes + 1);
            sizeKeyword = k;
        }
        if (index == 0 && naxis > 0 && h.Integer("NAXIS1") == 0 && h["GROUPS"] is true)
            throw h.Bad("GROUPS", "random-groups data is not a spectrum");
        long pcount = 0, gcount = 1;
        if (index > 0)
        {
            pcount = h.RequiredInteger("PCOUNT", 0, MaxDataBytes);
            gcount = h.RequiredInteger("GCOUNT", 1, 1_000_000);
        }
        return Math.Abs(bitpix) / 8 * gcount * (pcount + product);
    }

    /// <summary>Physical values of <paramref name="count"/> array elements from <paramref name="first"/> (BZERO + BSCALE · stored; BLANK and IEEE NaN give NaN).</summary>
    public static double[] Values(FitsHdu hdu, long first, int count)
    {
        var h = hdu.Header;
        int bitpix = hdu.Bitpix;
        double scale = h.Real("BSCALE") ?? 1, zero = h.Real("BZERO") ?? 0;
        long? blank = bitpix > 0 ? h.Integer("BLANK") : null;
        var result = new double[count];
        Decode(hdu.Data.AsSpan(checked((int)(first * Math.Abs(bitpix) / 8))), bitpix, result, 1, scale, zero, blank);
        return result;
    }

    /// <summary>
    /// Decodes big-endian values of type <paramref name="bitpix"/> into <paramref name="output"/>, reading one
    /// element every <paramref name="strideBytes"/> (0: packed) and applying the linear scaling and null value.
    /// </summary>
    internal static void Decode(ReadOnlySpan<byte> src, int bitpix, Span<double> output, int strideBytes, double scale, double zero, long? blank)
    {
        int size = Math.Abs(bitpix) / 8;
        int step = Math.Max(strideBytes, size);
        bool scaled = scale != 1 || zero != 0;
        for (int i = 0; i < output.Length; i++)
        {
            var b = src.Slice(i * step, size);
            double v;
            long raw;
            switch (bitpix)
            {
                case 8: raw = b[0]; break;
                case 16: raw = BinaryPrimitives.ReadInt16BigEndian(b); break;
                case 32: raw = BinaryPrimitives.ReadInt32BigEndian(b); break;
                case 64: raw = BinaryPrimitives.ReadInt64BigEndian(b); break;
                case -32: output[i] = scaled ? zero + scale * BinaryPrimitives.ReadSingleBigEndian(b) : BinaryPrimitives.ReadSingleBigEndian(b); continue;
                default: output[i] = scaled ? zero + scale * BinaryPrimitives.ReadDoubleBigEndian(b) : BinaryPrimitives.ReadDoubleBigEndian(b); continue;
            }
            v = blank == raw ? double.NaN : zero + scale * raw;
            output[i] = v;
        }
    }

    private static int ReadExactly(Stream s, byte[] buffer, int offset, int count)
    {
        int total = 0;
        while (total < count)
        {
            int n = s.Read(buffer, offset + total, count - total);
            if (n == 0) break;
            total += n;
        }
        return total;
    }

    private static long Skip(Stream s, long bytes)
    {
        if (s.CanSeek)
        {
            long left = s.Length - s.Position;
            long step = Math.Min(left, bytes);
            s.Seek(step, SeekOrigin.Current);
            return step;
        }
        var buf = new byte[Math.Min(bytes, 1 << 16)];
        long total = 0;
        while (total < bytes)
        {
            int n = s.Read(buf, 0, (int)Math.Min(buf.Length, bytes - total));
            if (n == 0) break;
            total += n;
        }
        return total;
    }
}
