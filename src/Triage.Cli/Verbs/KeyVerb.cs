using System.CommandLine;
using Triage.Storage;
using Triage.Storage.Access;

namespace Triage.Cli.Verbs;

/// <summary><c>key issue --name N --scope S [--scope S] [--observatory O]</c>: issues an API key and prints it once.</summary>
internal static class KeyVerb
{
    public static Command Create()
    {
        var connection = ConnectionOption.Create();
        var name = new Option<string>("--name") { Description = "Who or what holds the key.", Required = true };
        var scopes = new Option<string[]>("--scope")
        {
            Description = "broker, observatory, scheduler or admin (repeatable).",
            Required = true,
            AllowMultipleArgumentsPerToken = false,
        };
        var observatory = new Option<string?>("--observatory") { Description = "For observatory keys: the observatory whose sites the key manages." };
        var issue = new Command("issue", "Issue a key; the secret is printed once and stored only as a hash.") { connection, name, scopes, observatory };
        issue.SetAction(async (parse, ct) =>
        {
            var parsed = new List<Scope>();
            foreach (var s in parse.GetValue(scopes) ?? [])
            {
                if (!KeyStore.TryParseScope(s, out var scope))
                {
                    Console.Error.WriteLine($"--scope: '{s}' is not one of broker, observatory, scheduler, admin.");
                    return 2;
                }
                parsed.Add(scope);
            }
            var obs = parse.GetValue(observatory);
            if (parsed.Contains(Scope.Observatory) && string.IsNullOrWhiteSpace(obs))
            {
                Console.Error.WriteLine("--observatory is required for a key with the observatory scope.");
                return 2;
            }
            await using var data = TriageDataSource.Create(ConnectionOption.Resolve(parse.GetValue(connection)));
            var issued = await new KeyStore(data).IssueAsync(parse.GetValue(name)!, parsed, obs, DateTimeOffset.UtcNow, ct);
            Console.WriteLine(issued.Secret);
            return 0;
        });
        return new Command("key", "API keys.") { issue };
    }
}
