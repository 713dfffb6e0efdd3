using System.Buffers.Binary;
using System.Text;
using Npgsql;

namespace Triage.Storage.Candidates;

/// <summary>
/// The rows of one binary <c>COPY … FROM STDIN (FORMAT BINARY)</c>, encoded in memory and sent in
/// one piece through Npgsql's raw copy stream. Format: an 11-byte signature, an int32 of flags (0)
/// and an int32 header-extension length (0); per row an int16 field count, then per field an
/// int32 byte length (−1 for NULL) and the bytes the column type's receive function reads; an
/// int16 −1 at the end. All integers big-endian. Field forms: uuid 16 bytes in RFC 4122 order;
/// text as UTF-8; float8 as an IEEE 754 double; int4; bool one byte; timestamptz an int64 of
/// microseconds since 2000-01-01 00:00 UTC; bytea the bytes; jsonb a version byte (1) then the
/// JSON text; a one-dimensional array a header of five int32 — dimensions (1), whether any
/// element is NULL, the element type's OID, the length, the lower bound (1) — then its elements
/// as fields.
/// </summary>
/// <remarks>
/// Why: writing a 5,000-candidate batch value by value through <c>NpgsqlBinaryImporter.Write</c>
/// (about 150,000 calls) cost the client two to three times the database's own work for the batch;
/// encoding the same bytes here takes a few milliseconds (docs/operations.md, "Batch intake at scale").
/// References: (1) PostgreSQL 15 documentation, COPY, "Binary Format"; (2) PostgreSQL source,
/// src/backend/utils/adt/arrayfuncs.c (array_recv), uuid.c (uuid_recv), float.c (float8recv),
/// int.c (int4recv), bool.c (boolrecv), timestamp.c (timestamptz_recv), varlena.c (textrecv,
/// bytearecv), jsonb.c (jsonb_recv); (3) the element type OIDs of src/include/catalog/pg_type.dat
/// (bool 16, text 25, float8 701, timestamptz 1184).
/// </remarks>
internal sealed class PgCopyRows
{
    private const int BoolOid = 16, TextOid = 25, Float8Oid = 701, TimestampTzOid = 1184;

    // 2000-01-01T00:00:00Z in .NET ticks (100 ns).
    private const long PostgresEpochTicks = 630_822_816_000_000_000;

    private byte[] _buffer;
    private int _at;

    public PgCopyRows(int capacity = 1 << 16)
    {
        _buffer = new byte[Math.Max(capacity, 64)];
        // "PGCOPY\n\377\r\n\0"
        ReadOnlySpan<byte> signature = [(byte)'P', (byte)'G', (byte)'C', (byte)'O', (byte)'P', (byte)'Y', (byte)'\n', 0xFF, (byte)'\r', (byte)'\n', 0];
        signature.CopyTo(_buffer);
        _at = signature.Length;
        Int32(0); // flags
        Int32(0); // header extension length
    }

    /// <summary>Number of rows written.</summary>
    public int Rows { get; private set; }

    /// <summary>Starts a row of <paramref name="fields"/> fields.</summary>
    public void StartRow(short fields)
    {
        BinaryPrimitives.WriteInt16BigEndian(Room(2), fields);
        _at += 2;
        Rows++;
    }

    public void Null() => Int32(-1);

    public void Uuid(Guid value)
    {
        Int32(16);
        value.TryWriteBytes(Room(16), bigEndian: true, out _);
        _at += 16;
    }

    public void Text(string value)
    {
        int max = Encoding.UTF8.GetMaxByteCount(value.Length);
        var room = Room(4 + max);
        int length = Encoding.UTF8.GetBytes(value, room[4..]);
        BinaryPrimitives.WriteInt32BigEndian(room, length);
        _at += 4 + length;
    }

    public void TextOrNull(string? value) { if (value is null) { Null(); } else { Text(value); } }

    /// <summary>A jsonb field from its JSON text.</summary>
    public void Jsonb(string? json)
    {
        if (json is null)
        {
            Null();
            return;
        }
        int max = Encoding.UTF8.GetMaxByteCount(json.Length);
        var room = Room(5 + max);
        room[4] = 1;
        int length = Encoding.UTF8.GetBytes(json, room[5..]);
        BinaryPrimitives.WriteInt32BigEndian(room, length + 1);
        _at += 5 + length;
    }

    public void Bytea(byte[] value)
    {
        var room = Room(4 + value.Length);
        BinaryPrimitives.WriteInt32BigEndian(room, value.Length);
        value.CopyTo(room[4..]);
        _at += 4 + value.Length;
    }

    public void Int4(int value)
    {
        var room = Room(8);
        BinaryPrimitives.WriteInt32BigEndian(room, 4);
        BinaryPrimitives.WriteInt32BigEndian(room[4..], value);
        _at += 8;
    }

    public void Float8(double value)
    {
        var room = Room(12);
        BinaryPrimitives.WriteInt32BigEndian(room, 8);
        BinaryPrimitives.WriteDoubleBigEndian(room[4..], value);
        _at += 12;
    }

    public void Float8(double? value) { if (value is { } v) { Float8(v); } else { Null(); } }

    /// <summary>A timestamptz from a UTC instant (sub-microsecond ticks truncated toward zero).</summary>
    public void TimestampTz(DateTime utc)
    {
        var room = Room(12);
        BinaryPrimitives.WriteInt32BigEndian(room, 8);
        BinaryPrimitives.WriteInt64BigEndian(room[4..], Microseconds(utc));
        _at += 12;
    }

    /// <summary>A text[] without NULL elements.</summary>
    public void TextArray(IReadOnlyList<string> values)
    {
        int start = ArrayHeader(values.Count, false, TextOid);
        foreach (var v in values)
        {
            Text(v);
        }
        EndArray(start);
    }

    /// <summary>A timestamptz[] of UTC instants.</summary>
    public void TimestampTzArray(IReadOnlyList<DateTime> values)
    {
        int start = ArrayHeader(values.Count, false, TimestampTzOid);
        foreach (var v in values)
        {
            TimestampTz(v);
        }
        EndArray(start);
    }

    /// <summary>A float8[] without NULL elements.</summary>
    public void Float8Array(IReadOnlyList<double> values)
    {
        int start = ArrayHeader(values.Count, false, Float8Oid);
        foreach (var v in values)
        {
            Float8(v);
        }
        EndArray(start);
    }

    /// <summary>A float8[] (NULL elements allowed).</summary>
    public void Float8Array(IReadOnlyList<double?> values)
    {
        bool nulls = false;
        foreach (var v in values)
        {
            nulls |= v is null;
        }
        int start = ArrayHeader(values.Count, nulls, Float8Oid);
        foreach (var v in values)
        {
            Float8(v);
        }
        EndArray(start);
    }

    /// <summary>A bool[].</summary>
    public void BoolArray(IReadOnlyList<bool> values)
    {
        int start = ArrayHeader(values.Count, false, BoolOid);
        foreach (var v in values)
        {
            var room = Room(5);
            BinaryPrimitives.WriteInt32BigEndian(room, 1);
            room[4] = v ? (byte)1 : (byte)0;
            _at += 5;
        }
        EndArray(start);
    }

    /// <summary>
    /// Sends the rows (with the trailer) as the data of <paramref name="copyCommand"/>, a
    /// <c>COPY … FROM STDIN (FORMAT BINARY)</c>. A refusal by the database (a unique key, a
    /// check) surfaces as the <see cref="PostgresException"/> it raised.
    /// </summary>
    public async Task SendAsync(NpgsqlConnection conn, string copyCommand, CancellationToken ct)
    {
        BinaryPrimitives.WriteInt16BigEndian(Room(2), -1);
        _at += 2;
        await using var stream = await conn.BeginRawBinaryCopyAsync(copyCommand, ct);
        await stream.WriteAsync(_buffer.AsMemory(0, _at), ct);
    }

    private static long Microseconds(DateTime utc) =>
        utc.Kind == DateTimeKind.Utc ? (utc.Ticks - PostgresEpochTicks) / 10 : throw new ArgumentException("Times must be UTC.", nameof(utc));

    // The field length (filled in by EndArray) and the array header; answers where the field starts.
    private int ArrayHeader(int count, bool hasNulls, int elementOid)
    {
        int start = _at;
        var room = Room(24);
        BinaryPrimitives.WriteInt32BigEndian(room[4..], 1);
        BinaryPrimitives.WriteInt32BigEndian(room[8..], hasNulls ? 1 : 0);
        BinaryPrimitives.WriteInt32BigEndian(room[12..], elementOid);
        BinaryPrimitives.WriteInt32BigEndian(room[16..], count);
        BinaryPrimitives.WriteInt32BigEndian(room[20..], 1);
        _at += 24;
        return start;
    }

    private void EndArray(int start) => BinaryPrimitives.WriteInt32BigEndian(_buffer.AsSpan(start), _at - start - 4);

    private void Int32(int value)
    {
        BinaryPrimitives.WriteInt32BigEndian(Room(4), value);
        _at += 4;
    }

    // At least `bytes` free bytes at the write position.
    private Span<byte> Room(int bytes)
    {
        if (_at + bytes > _buffer.Length)
        {
            Array.Resize(ref _buffer, Math.Max(_buffer.Length * 2, _at + bytes));
        }
        return _buffer.AsSpan(_at);
    }
}
