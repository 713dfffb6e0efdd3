using Npgsql;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Operations;

/// <summary>A host whose connection pool holds one connection and waits one second for it.</summary>
public sealed class OneConnectionFactory : TriageApiFactory
{
    protected override IReadOnlyDictionary<string, string?> Settings => new Dictionary<string, string?>
    {
        ["ConnectionStrings:Triage"] = new NpgsqlConnectionStringBuilder(ConnectionString) { MaxPoolSize = 1, Timeout = 1 }.ConnectionString,
        // The background workers would compete for the one connection; this test is about requests.
        ["Triage:Candidates:FitInBackground"] = "false",
        ["Triage:Jobs:PollInterval"] = "01:00:00",
    };
}

public sealed class SaturationTests(OneConnectionFactory api) : IClassFixture<OneConnectionFactory>
{
    [Fact]
    public async Task PoolExhausted_Answers503ProblemWithRetryAfter_ThenRecovers()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        Assert.Equal(200, (int)(await client.GetAsync("/api/sites?name=none")).StatusCode);

        await using (var held = await api.DataSource.OpenConnectionAsync())
        {
            var busy = await client.GetAsync("/api/sites?name=none");
            Assert.Equal(503, (int)busy.StatusCode);
            Assert.Equal("application/problem+json", busy.Content.Headers.ContentType?.MediaType);
            Assert.Equal("1", busy.Headers.GetValues("Retry-After").Single());
            Assert.Contains("nothing was stored", await busy.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        }

        Assert.Equal(200, (int)(await client.GetAsync("/api/sites?name=none")).StatusCode);
    }
}
