using Microsoft.AspNetCore.Mvc;

namespace Triage.Api.Access;

/// <summary>Settings of the failed-authentication limit (section <c>Triage:Access</c>).</summary>
public sealed record FailedAuthenticationOptions
{
    /// <summary>Failed authentications (unknown, revoked or malformed keys) one address may make per window before it is refused (default 20).</summary>
    public int FailuresPerWindow { get; init; } = 20;

    /// <summary>Length of the counting window, and of the refusal once the limit is reached (default 60 s).</summary>
    public double WindowSeconds { get; init; } = 60;
}

/// <summary>
/// Counts failed authentications per client address and refuses an address that reached the
/// limit with 429 before any key lookup, so a flood of made-up keys costs no database work.
/// A burst of refusals is logged once when it starts and once, with its count, when it ends.
/// </summary>
public sealed class FailedAuthenticationLimit(FailedAuthenticationOptions options, TimeProvider clock, ILogger<FailedAuthenticationLimit> log)
{
    /// <summary>Set on requests whose request-log line is left out because their burst is logged as a whole.</summary>
    public const string QuietItem = "triage:quiet-refusal";

    private const int MaxAddresses = 100_000;
    private readonly Dictionary<string, Entry> _entries = new(StringComparer.Ordinal);
    private readonly Lock _gate = new();
    private readonly TimeSpan _window = TimeSpan.FromSeconds(Math.Max(1, options.WindowSeconds));

    private sealed class Entry
    {
        public DateTimeOffset WindowStart;
        public int Failures;
        public int Refused;
    }

    /// <summary>True (and counted) when <paramref name="address"/> is refused now.</summary>
    public bool IsRefused(string address, out TimeSpan retryAfter)
    {
        var now = clock.GetUtcNow();
        retryAfter = TimeSpan.Zero;
        lock (_gate)
        {
            if (!_entries.TryGetValue(address, out var e))
            {
                return false;
            }
            if (now - e.WindowStart >= _window)
            {
                EndBurst(address, e);
                _entries.Remove(address);
                return false;
            }
            if (e.Failures < options.FailuresPerWindow)
            {
                return false;
            }
            if (e.Refused++ == 0)
            {
                log.LogWarning("Refusing {Address} for up to {Seconds} s: {Failures} failed authentications", address, _window.TotalSeconds, e.Failures);
            }
            retryAfter = _window - (now - e.WindowStart);
            return true;
        }
    }

    /// <summary>Counts one failed authentication; true when it is the address's first in its window (worth a log line).</summary>
    public bool RecordFailure(string address)
    {
        var now = clock.GetUtcNow();
        lock (_gate)
        {
            if (!_entries.TryGetValue(address, out var e) || now - e.WindowStart >= _window)
            {
                if (e is not null)
                {
                    EndBurst(address, e);
                }
                if (_entries.Count >= MaxAddresses)
                {
                    Prune(now);
                }
                _entries[address] = e = new Entry { WindowStart = now };
            }
            return ++e.Failures == 1;
        }
    }

    private void EndBurst(string address, Entry e)
    {
        if (e.Refused > 0)
        {
            log.LogWarning("Refused {Count} requests from {Address} after {Failures} failed authentications", e.Refused, address, e.Failures);
        }
    }

    private void Prune(DateTimeOffset now)
    {
        foreach (var (address, e) in _entries.Where(kv => now - kv.Value.WindowStart >= _window).ToList())
        {
            EndBurst(address, e);
            _entries.Remove(address);
        }
        if (_entries.Count >= MaxAddresses)
        {
            _entries.Clear();
        }
    }

    public static string AddressOf(HttpContext http) => http.Connection.RemoteIpAddress?.ToString() ?? "unknown";
}

public static class FailedAuthenticationLimitExtensions
{
    /// <summary>Refuses addresses over the failed-authentication limit before authentication runs (so before any database work).</summary>
    public static WebApplication UseFailedAuthenticationLimit(this WebApplication app)
    {
        var limit = app.Services.GetRequiredService<FailedAuthenticationLimit>();
        app.Use(async (http, next) =>
        {
            if (http.Request.Headers.Authorization.Count > 0 && limit.IsRefused(FailedAuthenticationLimit.AddressOf(http), out var retryAfter))
            {
                http.Items[FailedAuthenticationLimit.QuietItem] = true;
                http.Response.StatusCode = StatusCodes.Status429TooManyRequests;
                http.Response.Headers.RetryAfter = Math.Max(1, (int)Math.Ceiling(retryAfter.TotalSeconds)).ToString(System.Globalization.CultureInfo.InvariantCulture);
                await http.RequestServices.GetRequiredService<IProblemDetailsService>().WriteAsync(new ProblemDetailsContext
                {
                    HttpContext = http,
                    ProblemDetails = new ProblemDetails
                    {
                        Status = 429,
                        Title = "Too many failed authentications",
                        Detail = "This address sent too many unknown or revoked keys; it is refused for a while. Check the key and retry later.",
                        Extensions = { ["field"] = "Authorization" },
                    },
                });
                return;
            }
            await next(http);
        });
        return app;
    }
}
