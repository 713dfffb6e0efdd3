using System.Security.Cryptography;
using System.Text;
using Dapper;
using Npgsql;

namespace Triage.Storage.Access;

/// <summary>What an API key may do.</summary>
public enum Scope
{
    /// <summary>Post candidates.</summary>
    Broker,
    /// <summary>Manage its own sites and spectrographs; report observations.</summary>
    Observatory,
    /// <summary>Read and trigger plans.</summary>
    Scheduler,
    /// <summary>Keys and everything else.</summary>
    Admin,
}

/// <summary>A stored key, without its secret.</summary>
public sealed record ApiKeyRow(
    Guid Id,
    string PublicId,
    string Name,
    IReadOnlyList<Scope> Scopes,
    string? Observatory,
    DateTimeOffset CreatedAt,
    DateTimeOffset? RevokedAt);

/// <summary>A newly issued key: the only moment the full secret exists outside its holder.</summary>
public sealed record IssuedKey(ApiKeyRow Key, string Secret);

/// <summary>
/// API keys: random, shown once, stored as SHA-256 hashes, looked up by their public part
/// and compared in constant time.
/// </summary>
/// <remarks>
/// A key reads <c>trk_{publicId}_{secret}</c>: 8 characters of public id for the lookup and
/// 32 random bytes (base64url) of secret. SHA-256 without salt is adequate because the secret
/// is 256 bits of randomness, not a password (common practice).
/// </remarks>
public sealed class KeyStore(NpgsqlDataSource dataSource)
{
    private const string Prefix = "trk_";

    public static string ScopeText(Scope s) => s.ToString().ToLowerInvariant();

    public static bool TryParseScope(string text, out Scope scope)
    {
        foreach (var s in Enum.GetValues<Scope>())
        {
            if (string.Equals(ScopeText(s), text, StringComparison.Ordinal))
            {
                scope = s;
                return true;
            }
        }
        scope = default;
        return false;
    }

    private const string InsertSql = """
        INSERT INTO api_keys (id, public_id, secret_hash, name, scopes, observatory, created_at)
        VALUES (@Id, @PublicId, @Hash, @Name, @Scopes, @Observatory, @Now)
        """;

    /// <summary>Creates a key with the given scopes; returns it with its secret, which is not kept.</summary>
    public async Task<IssuedKey> IssueAsync(string name, IReadOnlyList<Scope> scopes, string? observatory, DateTimeOffset now, CancellationToken ct = default)
    {
        if (scopes.Count == 0)
        {
            throw new ArgumentException("A key needs at least one scope.", nameof(scopes));
        }
        var secret = NewSecret();
        TryPublicId(secret, out var publicId);
        var row = new ApiKeyRow(Guid.NewGuid(), publicId, name, scopes.Distinct().ToList(), observatory, now, null);
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition(InsertSql, new
        {
            row.Id, row.PublicId, Hash = Hash(secret), row.Name,
            Scopes = row.Scopes.Select(ScopeText).ToArray(), row.Observatory, Now = now,
        }, cancellationToken: ct));
        return new IssuedKey(row, secret);
    }

    private const string RegisterSql = InsertSql + " ON CONFLICT (public_id) DO NOTHING";

    /// <summary>Registers a key whose secret was chosen outside (the first admin key from the environment).</summary>
    public async Task<ApiKeyRow?> RegisterAsync(string secret, string name, IReadOnlyList<Scope> scopes, DateTimeOffset now, CancellationToken ct = default)
    {
        if (!TryPublicId(secret, out var publicId))
        {
            return null;
        }
        var row = new ApiKeyRow(Guid.NewGuid(), publicId, name, scopes, null, now, null);
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var n = await conn.ExecuteAsync(new CommandDefinition(RegisterSql, new
        {
            row.Id, row.PublicId, Hash = Hash(secret), row.Name,
            Scopes = scopes.Select(ScopeText).ToArray(), row.Observatory, Now = now,
        }, cancellationToken: ct));
        return n == 1 ? row : null;
    }

    /// <summary>A new random key string in the documented format (not stored).</summary>
    public static string NewSecret() =>
        $"{Prefix}{Convert.ToHexString(RandomNumberGenerator.GetBytes(4)).ToLowerInvariant()}_{Base64Url(RandomNumberGenerator.GetBytes(32))}";

    private const string FindSql = """
        SELECT id AS Id, public_id AS PublicId, secret_hash AS SecretHash, name AS Name, scopes AS Scopes,
               observatory AS Observatory, created_at AS CreatedAt, revoked_at AS RevokedAt
        FROM api_keys WHERE public_id = @publicId
        """;

    /// <summary>The active key matching <paramref name="presented"/>, or null.</summary>
    public async Task<ApiKeyRow?> AuthenticateAsync(string presented, CancellationToken ct = default)
    {
        if (!TryPublicId(presented, out var publicId))
        {
            return null;
        }
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var row = await conn.QuerySingleOrDefaultAsync<KeyRecord>(new CommandDefinition(FindSql, new { publicId }, cancellationToken: ct));
        if (row is null || row.RevokedAt is not null)
        {
            return null;
        }
        return CryptographicOperations.FixedTimeEquals(row.SecretHash, Hash(presented)) ? row.ToRow() : null;
    }

    private const string ListSql = """
        SELECT id AS Id, public_id AS PublicId, secret_hash AS SecretHash, name AS Name, scopes AS Scopes,
               observatory AS Observatory, created_at AS CreatedAt, revoked_at AS RevokedAt
        FROM api_keys ORDER BY created_at
        """;

    public async Task<IReadOnlyList<ApiKeyRow>> ListAsync(CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<KeyRecord>(new CommandDefinition(ListSql, cancellationToken: ct));
        return rows.Select(r => r.ToRow()).ToList();
    }

    /// <summary>Revokes a key; false when no such active key exists.</summary>
    public async Task<bool> RevokeAsync(Guid id, DateTimeOffset now, CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteAsync(new CommandDefinition(
            "UPDATE api_keys SET revoked_at = @now WHERE id = @id AND revoked_at IS NULL", new { id, now }, cancellationToken: ct)) == 1;
    }

    /// <summary>Whether any active admin key exists (for the first-start bootstrap).</summary>
    public async Task<bool> AnyActiveAdminAsync(CancellationToken ct = default)
    {
        await using var conn = await dataSource.OpenConnectionAsync(ct);
        return await conn.ExecuteScalarAsync<bool>(new CommandDefinition(
            "SELECT EXISTS (SELECT 1 FROM api_keys WHERE 'admin' = ANY (scopes) AND revoked_at IS NULL)", cancellationToken: ct));
    }

    private static bool TryPublicId(string presented, out string publicId)
    {
        publicId = "";
        if (presented.Length < Prefix.Length + 10 || !presented.StartsWith(Prefix, StringComparison.Ordinal))
        {
            return false;
        }
        var rest = presented.AsSpan(Prefix.Length);
        var underscore = rest.IndexOf('_');
        if (underscore <= 0 || underscore > 16)
        {
            return false;
        }
        publicId = rest[..underscore].ToString();
        return true;
    }

    private static byte[] Hash(string secret) => SHA256.HashData(Encoding.UTF8.GetBytes(secret));

    private static string Base64Url(byte[] bytes) =>
        Convert.ToBase64String(bytes).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    private sealed class KeyRecord
    {
        public Guid Id { get; init; }
        public string PublicId { get; init; } = "";
        public byte[] SecretHash { get; init; } = [];
        public string Name { get; init; } = "";
        public string[] Scopes { get; init; } = [];
        public string? Observatory { get; init; }
        public DateTime CreatedAt { get; init; }
        public DateTime? RevokedAt { get; init; }

        public ApiKeyRow ToRow() => new(Id, PublicId, Name,
            Scopes.Select(s => TryParseScope(s, out var sc) ? sc : throw new InvalidOperationException($"Unknown scope '{s}' in the database.")).ToList(),
            Observatory, Utc.From(CreatedAt), Utc.From(RevokedAt));
    }
}
