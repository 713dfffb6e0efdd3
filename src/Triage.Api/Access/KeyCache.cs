using System.Collections.Concurrent;
using System.Security.Cryptography;
using System.Text;
using Triage.Storage.Access;

namespace Triage.Api.Access;

/// <summary>Settings of the key cache (section <c>Triage:Access</c>).</summary>
public sealed record KeyCacheOptions
{
    /// <summary>
    /// How long a successful key lookup is reused without asking the database (default 5 s; 0
    /// turns the cache off). A revocation through this service's API takes effect at once; one
    /// made elsewhere (the CLI, another instance) within this many seconds.
    /// </summary>
    public double KeyCacheSeconds { get; init; } = 5;

    /// <summary>
    /// How long a key that matched nothing is remembered as unknown, so repeating it costs no
    /// database work (default 10 s; 0 turns it off). Issued keys carry fresh random secrets, so
    /// this never delays a new key; one registered with a chosen secret (CLI) that was presented
    /// before works within this many seconds.
    /// </summary>
    public double UnknownKeySeconds { get; init; } = 10;
}

/// <summary>
/// Remembers recently authenticated keys for a few seconds so a broker posting candidates one
/// at a time does not cost a database round trip per request for its key. Entries are indexed
/// by the SHA-256 of the presented key (the secret itself is not kept). Unknown keys are
/// remembered as unknown for a short time (<see cref="KeyCacheOptions.UnknownKeySeconds"/>).
/// </summary>
public sealed class KeyCache(KeyStore keys, TimeProvider clock, KeyCacheOptions options)
{
    private const int MaxEntries = 10_000;
    private readonly ConcurrentDictionary<string, (ApiKeyRow? Key, DateTimeOffset Until)> _entries = new(StringComparer.Ordinal);
    private readonly TimeSpan _lifetime = TimeSpan.FromSeconds(Math.Max(0, options.KeyCacheSeconds));
    private readonly TimeSpan _unknownLifetime = TimeSpan.FromSeconds(Math.Max(0, options.UnknownKeySeconds));

    /// <summary>The active key matching <paramref name="presented"/>, or null.</summary>
    public async Task<ApiKeyRow?> AuthenticateAsync(string presented, CancellationToken ct)
    {
        if (_lifetime <= TimeSpan.Zero && _unknownLifetime <= TimeSpan.Zero)
        {
            return await keys.AuthenticateAsync(presented, ct);
        }
        string id = Convert.ToHexString(SHA256.HashData(Encoding.UTF8.GetBytes(presented)));
        var now = clock.GetUtcNow();
        if (_entries.TryGetValue(id, out var entry) && entry.Until > now)
        {
            return entry.Key;
        }
        var key = await keys.AuthenticateAsync(presented, ct);
        var lifetime = key is null ? _unknownLifetime : _lifetime;
        if (lifetime <= TimeSpan.Zero)
        {
            _entries.TryRemove(id, out _);
            return key;
        }
        if (_entries.Count >= MaxEntries)
        {
            _entries.Clear();
        }
        _entries[id] = (key, now + lifetime);
        return key;
    }

    /// <summary>Forgets every key (the notification listener reconnected and may have missed a revocation).</summary>
    public void ForgetAll() => _entries.Clear();

    /// <summary>Forgets every key remembered as unknown (after a key was issued or registered here).</summary>
    public void ForgetUnknown()
    {
        foreach (var (id, entry) in _entries)
        {
            if (entry.Key is null)
            {
                _entries.TryRemove(id, out _);
            }
        }
    }

    /// <summary>Forgets a key at once (after it was revoked here).</summary>
    public void Forget(Guid keyId)
    {
        foreach (var (id, entry) in _entries)
        {
            if (entry.Key?.Id == keyId)
            {
                _entries.TryRemove(id, out _);
            }
        }
    }
}
