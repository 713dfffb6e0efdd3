using System.Net;
using Dapper;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Faults;

/// <summary>
/// Roster writes that lose a race to a concurrent change answer 409 naming the field, never 500.
/// The concurrent change is made deterministic with a trigger in this host's own database that
/// commits the rival change inside the write, after the service's own checks passed; a burst of
/// truly concurrent renames then shows the same outcome without the trigger.
/// </summary>
public sealed class RosterRaceTests(ProxiedDatabaseFactory api) : IClassFixture<ProxiedDatabaseFactory>
{
    private async Task ExecuteAsync(string sql)
    {
        await using var conn = await api.Direct.OpenConnectionAsync();
        await conn.ExecuteAsync(sql);
    }

    [Fact]
    public async Task RenameLosingToAConcurrentRename_Is409NamingName()
    {
        await ExecuteAsync("""
            CREATE OR REPLACE FUNCTION race_take_name() RETURNS trigger LANGUAGE plpgsql AS $$
            BEGIN
                IF NEW.name LIKE 'raced-%' AND NEW.name <> OLD.name THEN
                    INSERT INTO sites SELECT (jsonb_populate_record(NULL::sites,
                        to_jsonb(OLD) || jsonb_build_object('id', gen_random_uuid(), 'name', NEW.name))).*;
                END IF;
                RETURN NEW;
            END $$;
            DROP TRIGGER IF EXISTS race_take_name ON sites;
            CREATE TRIGGER race_take_name BEFORE UPDATE ON sites FOR EACH ROW EXECUTE FUNCTION race_take_name();
            """);
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var created = await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()));
        var site = await created.ReadObjectAsync();
        var put = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{site["id"]}") { Content = Bodies.Json(Bodies.Site(Unique.Name("raced"))) };
        put.Headers.TryAddWithoutValidation("If-Match", created.Headers.ETag!.Tag);

        await Bodies.AssertProblemNamingAsync(await client.SendAsync(put), 409, "name");
    }

    [Fact]
    public async Task SpectrographAddedToASiteRemovedMeanwhile_Is409NamingSiteId()
    {
        await ExecuteAsync("""
            CREATE OR REPLACE FUNCTION race_remove_site() RETURNS trigger LANGUAGE plpgsql AS $$
            BEGIN
                IF NEW.name LIKE 'orphan-%' THEN
                    DELETE FROM sites WHERE id = NEW.site_id;
                END IF;
                RETURN NEW;
            END $$;
            DROP TRIGGER IF EXISTS race_remove_site ON spectrographs;
            CREATE TRIGGER race_remove_site BEFORE INSERT ON spectrographs FOR EACH ROW EXECUTE FUNCTION race_remove_site();
            """);
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var site = await (await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()))).ReadObjectAsync();

        var answer = await client.PostAsync($"/api/sites/{site["id"]}/spectrographs", Bodies.Json(Bodies.Spectrograph(Unique.Name("orphan"))));

        await Bodies.AssertProblemNamingAsync(answer, 409, "siteId");
    }

    [Fact]
    public async Task ConcurrentRenamesToOneName_OneWins_OthersAre409_No500()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var target = Unique.Name("same");
        var sites = new List<(string Id, string ETag)>();
        for (var i = 0; i < 8; i++)
        {
            var created = await client.PostAsync("/api/sites", Bodies.Json(Bodies.Site()));
            sites.Add(((await created.ReadObjectAsync())["id"]!.GetValue<string>(), created.Headers.ETag!.Tag));
        }
        var answers = await Task.WhenAll(sites.Select(async s =>
        {
            var put = new HttpRequestMessage(HttpMethod.Put, $"/api/sites/{s.Id}") { Content = Bodies.Json(Bodies.Site(target)) };
            put.Headers.TryAddWithoutValidation("If-Match", s.ETag);
            return await client.SendAsync(put);
        }));
        Assert.Equal(1, answers.Count(a => a.StatusCode == HttpStatusCode.OK));
        foreach (var loser in answers.Where(a => a.StatusCode != HttpStatusCode.OK))
        {
            await Bodies.AssertProblemNamingAsync(loser, 409, "name");
        }
    }
}
