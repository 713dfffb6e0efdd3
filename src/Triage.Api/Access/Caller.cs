using System.Security.Claims;
using Triage.Storage.Access;

namespace Triage.Api.Access;

/// <summary>The authenticated key behind a request, as the handlers need it.</summary>
public sealed record Caller(Guid KeyId, string PublicId, IReadOnlySet<Scope> Scopes, string? Observatory)
{
    public bool IsAdmin => Scopes.Contains(Scope.Admin);

    /// <summary>Admins manage everything; an observatory key manages what its observatory owns.</summary>
    public bool Manages(string? owner) => IsAdmin || (owner is not null && Scopes.Contains(Scope.Observatory) && owner == Observatory);

    public static Caller From(ClaimsPrincipal user)
    {
        var scopes = new HashSet<Scope>();
        foreach (var c in user.FindAll(TriageClaims.Scope))
        {
            if (KeyStore.TryParseScope(c.Value, out var s))
            {
                scopes.Add(s);
            }
        }
        return new Caller(
            Guid.Parse(user.FindFirstValue(TriageClaims.KeyId) ?? Guid.Empty.ToString()),
            user.FindFirstValue(TriageClaims.PublicId) ?? "",
            scopes,
            user.FindFirstValue(TriageClaims.Observatory));
    }
}
