using System.Buffers.Binary;
using System.Text;

namespace Triage.Storage.Candidates;

/// <summary>
/// One-dimensional PostgreSQL arrays in the binary format that <c>array_recv</c> reads (the
/// format of a binary COPY field or a binary parameter): a header of five big-endian int32 —
/// number of dimensions (1), whether any element is NULL (0/1), the element type's OID, the
/// length, the lower bound (1) — then per element an int32 byte length (−1 for NULL) and the
/// element's own binary form: float8 as a big-endian IEEE 754 double, bool as one byte,
/// timestamptz as a big-endian int64 of microseconds since 2000-01-01 00:00 UTC, text as UTF-8.
/// </summary>
/// <remarks>
/// References: (1) PostgreSQL 15 documentation, COPY, "Binary Format"; (2) PostgreSQL source,
/// src/backend/utils/adt/arrayfuncs.c (array_recv, array_send), float.c (float8recv), bool.c
/// (boolrecv), timestamp.c (timestamptz_recv), varlena.c (textrecv); (3) the element type OIDs of
/// src/include/catalog/pg_type.dat (bool 16, text 25, float8 701, timestamptz 1184).
/// </remarks>
internal static class PgBinaryArray
{
    private const int BoolOid = 16, TextOid = 25, Float8Oid = 701, TimestampTzOid = 1184;
    private const int HeaderBytes = 20;

    // 2000-01-01T00:00:00Z in .NET ticks (100 ns).
    private const long PostgresEpochTicks = 630_822_816_000_000_000;

    /// <summary>A float8[] (NULL elements allowed).</summary>
    public static byte[] Float8(IReadOnlyList<double?> values)
    {
        int nulls = 0;
        foreach (var v in values)
        {
            nulls += v is null ? 1 : 0;
        }
        var buffer = Header(values.Count, nulls > 0, Float8Oid, (values.Count - nulls) * 12 + nulls * 4);
        int at = HeaderBytes;
        foreach (var v in values)
        {
            at = v is { } x ? Element(buffer, at, x) : Null(buffer, at);
        }
        return buffer;
    }

    /// <summary>A float8[] without NULL elements.</summary>
    public static byte[] Float8(IReadOnlyList<double> values)
    {
        var buffer = Header(values.Count, false, Float8Oid, values.Count * 12);
        int at = HeaderBytes;
        foreach (var v in values)
        {
            at = Element(buffer, at, v);
        }
        return buffer;
    }

    /// <summary>A bool[].</summary>
    public static byte[] Bool(IReadOnlyList<bool> values)
    {
        var buffer = Header(values.Count, false, BoolOid, values.Count * 5);
        int at = HeaderBytes;
        foreach (var v in values)
        {
            BinaryPrimitives.WriteInt32BigEndian(buffer.AsSpan(at), 1);
            buffer[at + 4] = v ? (byte)1 : (byte)0;
            at += 5;
        }
        return buffer;
    }

    /// <summary>A timestamptz[] of UTC instants (sub-microsecond ticks are truncated).</summary>
    public static byte[] TimestampTz(IReadOnlyList<DateTime> values)
    {
        var buffer = Header(values.Count, false, TimestampTzOid, values.Count * 12);
        int at = HeaderBytes;
        foreach (var v in values)
        {
            if (v.Kind != DateTimeKind.Utc)
            {
                throw new ArgumentException("Photometry times must be UTC.", nameof(values));
            }
            BinaryPrimitives.WriteInt32BigEndian(buffer.AsSpan(at), 8);
            BinaryPrimitives.WriteInt64BigEndian(buffer.AsSpan(at + 4), (v.Ticks - PostgresEpochTicks) / 10);
            at += 12;
        }
        return buffer;
    }

    /// <summary>A text[] without NULL elements.</summary>
    public static byte[] Text(IReadOnlyList<string> values)
    {
        int bytes = 0;
        foreach (var v in values)
        {
            bytes += 4 + Encoding.UTF8.GetByteCount(v);
        }
        var buffer = Header(values.Count, false, TextOid, bytes);
        int at = HeaderBytes;
        foreach (var v in values)
        {
            int length = Encoding.UTF8.GetBytes(v, buffer.AsSpan(at + 4));
            BinaryPrimitives.WriteInt32BigEndian(buffer.AsSpan(at), length);
            at += 4 + length;
        }
        return buffer;
    }

    private static byte[] Header(int count, bool hasNulls, int elementOid, int elementBytes)
    {
        var buffer = new byte[HeaderBytes + elementBytes];
        var span = buffer.AsSpan();
        BinaryPrimitives.WriteInt32BigEndian(span, 1);
        BinaryPrimitives.WriteInt32BigEndian(span[4..], hasNulls ? 1 : 0);
        BinaryPrimitives.WriteInt32BigEndian(span[8..], elementOid);
        BinaryPrimitives.WriteInt32BigEndian(span[12..], count);
        BinaryPrimitives.WriteInt32BigEndian(span[16..], 1);
        return buffer;
    }

    private static int Element(byte[] buffer, int at, double value)
    {
        BinaryPrimitives.WriteInt32BigEndian(buffer.AsSpan(at), 8);
        BinaryPrimitives.WriteDoubleBigEndian(buffer.AsSpan(at + 4), value);
        return at + 12;
    }

    private static int Null(byte[] buffer, int at)
    {
        BinaryPrimitives.WriteInt32BigEndian(buffer.AsSpan(at), -1);
        return at + 4;
    }
}
