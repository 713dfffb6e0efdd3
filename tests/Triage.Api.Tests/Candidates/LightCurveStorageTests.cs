using System.Globalization;
using System.Net;
using System.Text.Json.Nodes;
using Dapper;
using Npgsql;
using Triage.Api.Tests.Infrastructure;
using Triage.Core.Candidates;
using Triage.Storage.Access;
using Triage.Storage.Candidates;

namespace Triage.Api.Tests.Candidates;

/// <summary>
/// Photometry stored as one light-curve row of arrays per candidate (migration 0075): what goes
/// in comes back out point for point, updates merge by band and time, concurrent snapshots lose
/// nothing, and a batch that fails in the database leaves nothing behind.
/// </summary>
[Collection(ApiCollection.Name)]
public sealed class LightCurveStorageTests(TriageApiFactory api)
{
    private static readonly DateTimeOffset Start = new(2026, 11, 1, 0, 0, 0, TimeSpan.Zero);

    /// <summary>A point at <paramref name="day"/> after the start: a detection by flux, an upper limit, or a magnitude.</summary>
    private static JsonObject Point(double day, string band, double value, string kind = "flux") => kind switch
    {
        "mag" => new JsonObject { ["timeUtc"] = Start.AddDays(day).ToString("O"), ["band"] = band, ["magAb"] = value, ["magAbError"] = 0.07 },
        "limit" => new JsonObject { ["timeUtc"] = Start.AddDays(day).ToString("O"), ["band"] = band, ["fluxMicroJy"] = value, ["fluxMicroJyError"] = value / 3, ["upperLimit"] = true },
        _ => new JsonObject { ["timeUtc"] = Start.AddDays(day).ToString("O"), ["band"] = band, ["fluxMicroJy"] = value, ["fluxMicroJyError"] = value / 20 },
    };

    private static JsonObject CandidateWith(string id, params JsonObject[] points)
    {
        var c = CandidateBodies.Candidate(id, points: 1);
        (c["raDeg"], c["decDeg"]) = (311.7, 12.3); // away from the other candidate tests' cone
        c["photometry"] = new JsonArray(points.Select(p => (JsonNode)p.DeepClone()).ToArray());
        return c;
    }

    /// <summary>Posts one batch holding each of <paramref name="ids"/> with the same points.</summary>
    private static async Task<JsonObject> PostEachAsync(HttpClient client, IEnumerable<string> ids, params JsonObject[] points) =>
        await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch([.. ids.Select(id => CandidateWith(id, points))])))).ReadObjectAsync();

    private async Task<JsonArray> PhotometryAsync(HttpClient client, string brokerId) =>
        (await (await client.GetAsync($"/api/candidates/by-broker-id/{brokerId}")).ReadObjectAsync())["photometry"]!.AsArray();

    /// <summary>
    /// A batch of more than 32 candidates goes in through binary COPY rows encoded by the service
    /// itself (PgCopyRows); a smaller one through Npgsql's own parameter encoding. The same
    /// candidate sent both ways, with every optional field (non-ASCII text, JSON objects, a redshift,
    /// a weight), reads back identically and as sent.
    /// </summary>
    [Fact]
    public async Task PostBatch_EveryOptionalField_CopyPathAndParameterPathReadBackTheSame()
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        JsonObject WithEverything(string id)
        {
            var c = CandidateWith(id, Point(0.5, "g", 52.25), Point(3.25, "r", 20.125, "mag"), Point(1, "i", 9.5, "limit"));
            c["redshift"] = 0.0625;
            c["redshiftError"] = 0.0078125;
            c["scienceWeight"] = 2.5;
            c["notes"] = "Nébula-side host, “bright” core — 東側";
            c["subtypeProbabilities"] = new JsonObject { ["Ia"] = 0.75, ["II"] = 0.25 };
            c["brokerState"] = new JsonObject { ["peakUtc"] = Start.AddDays(4).ToString("O"), ["peakSigmaDays"] = 1.5, ["peakMagAb"] = 19.25, ["peakBand"] = "r", ["trend"] = "rising ↑" };
            return c;
        }
        var viaCopy = Enumerable.Range(0, 40).Select(_ => WithEverything(Unique.Name("all"))).ToArray();
        var viaParameters = WithEverything(Unique.Name("all"));
        var first = await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(viaCopy)))).ReadObjectAsync();
        Assert.Equal(40, (int)first["created"]!);
        Assert.Equal(1, (int)(await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(viaParameters)))).ReadObjectAsync())["created"]!);

        var copied = await (await client.GetAsync($"/api/candidates/by-broker-id/{(string)viaCopy[17]["id"]!}")).ReadObjectAsync();
        var bound = await (await client.GetAsync($"/api/candidates/by-broker-id/{(string)viaParameters["id"]!}")).ReadObjectAsync();

        var (c, b) = (copied["candidate"]!, bound["candidate"]!);
        Assert.Equal(0.0625, (double)c["redshift"]!);
        Assert.Equal(2.5, (double)c["scienceWeight"]!);
        Assert.Equal(0.0078125, (double)copied["redshiftError"]!);
        Assert.Equal("Nébula-side host, “bright” core — 東側", (string)copied["notes"]!);
        Assert.Equal(0.75, (double)copied["brokerSubtypeProbabilities"]!["Ia"]!);
        Assert.Equal(3, copied["photometry"]!.AsArray().Count);
        foreach (var field in new[] { "raDeg", "decDeg", "discoveredUtc", "redshift", "state", "scienceWeight" })
        {
            Assert.True(JsonNode.DeepEquals(b[field], c[field]), $"{field}: {b[field]?.ToJsonString()} vs {c[field]?.ToJsonString()}");
        }
        foreach (var field in new[] { "redshiftError", "notes", "brokerSubtypeProbabilities", "photometry" })
        {
            Assert.True(JsonNode.DeepEquals(bound[field], copied[field]), $"{field}: {bound[field]?.ToJsonString()} vs {copied[field]?.ToJsonString()}");
        }
        // The broker's own state is stored, not shown: compare the stored JSON, the hash and the newest time directly.
        await using var conn = await api.DataSource.OpenConnectionAsync();
        var rows = (await conn.QueryAsync<(string State, byte[] Hash, DateTime Newest, double Peak)>(
            "SELECT broker_state::text, content_hash, newest_observed_at, peak_flux_microjy FROM candidates WHERE id = ANY(@ids) ORDER BY id",
            new { ids = new[] { Guid.Parse((string)c["id"]!), Guid.Parse((string)b["id"]!) } })).ToList();
        Assert.Equal(2, rows.Count);
        Assert.Equal(rows[0], rows[1] with { Hash = rows[0].Hash });
        Assert.Equal(32, rows[0].Hash.Length);
        Assert.Contains("\"trend\": \"rising ↑\"", rows[0].State);
        Assert.Equal(Start.AddDays(3.25).UtcDateTime, rows[0].Newest);
        Assert.Equal(52.25, rows[0].Peak);
    }

    [Theory]
    [InlineData(40)] // staged with binary COPY
    [InlineData(3)] // array parameters
    public async Task PostBatch_MixedPointsOutOfOrder_ReadBackPointForPointInTimeThenBandOrder(int count)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        // Posted out of order; two points share a time in different bands; limits, fluxes and magnitudes mixed.
        JsonObject[] points =
        [
            Point(9.5, "r", 181.25), Point(0.25, "g", 12.5, "limit"), Point(4, "i", 19.375, "mag"), Point(4, "g", 96.0625),
            Point(1.125, "r", 14.0, "limit"), Point(6.75, "z", 20.5, "mag"), Point(12, "g", 143.5), Point(2.5, "g", 40.125),
        ];
        var candidates = Enumerable.Range(0, count).Select(_ => CandidateWith(Unique.Name("lc"), points)).ToArray();

        var answer = await (await client.PostAsync("/api/candidates/batches", Bodies.Json(CandidateBodies.Batch(candidates)))).ReadObjectAsync();

        Assert.Equal(count, (int)answer["created"]!);
        Assert.Equal(count * points.Length, (int)answer["photometryWritten"]!);
        var expected = points.OrderBy(p => DateTimeOffset.Parse((string)p["timeUtc"]!, CultureInfo.InvariantCulture)).ThenBy(p => (string)p["band"]!, StringComparer.Ordinal).ToArray();
        foreach (var c in candidates.Take(3))
        {
            var stored = await PhotometryAsync(client, (string)c["id"]!);
            Assert.Equal(expected.Length, stored.Count);
            for (int k = 0; k < expected.Length; k++)
            {
                var (sent, got) = (expected[k], stored[k]!);
                Assert.Equal(DateTimeOffset.Parse((string)sent["timeUtc"]!, CultureInfo.InvariantCulture), DateTimeOffset.Parse((string)got["timeUtc"]!, CultureInfo.InvariantCulture));
                Assert.Equal((string)sent["band"]!, (string)got["band"]!);
                Assert.Equal((bool?)sent["upperLimit"] ?? false, (bool)got["upperLimit"]!);
                if (sent["magAb"] is { } mag)
                {
                    Assert.Equal((double)mag, (double)got["magAb"]!);
                    Assert.Equal(0.07, (double)got["magAbError"]!);
                    // AB magnitude: m = 23.9 − 2.5 log10(f / µJy) (Oke & Gunn 1983, ApJ 266, 713).
                    Assert.Equal(Math.Pow(10, (23.9 - (double)mag) / 2.5), (double)got["fluxMicroJy"]!, 1e-9 * (double)got["fluxMicroJy"]!);
                }
                else
                {
                    Assert.Equal((double)sent["fluxMicroJy"]!, (double)got["fluxMicroJy"]!);
                    Assert.Equal((double)sent["fluxMicroJyError"]!, (double)got["fluxMicroJyError"]!);
                    Assert.Null(got["magAb"]);
                }
            }
        }
    }

    [Theory]
    [InlineData(40)]
    [InlineData(3)]
    public async Task PostBatch_NextSnapshotChangesSomePointsAndOmitsOthers_MergedByBandAndTime(int count)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var ids = Enumerable.Range(0, count).Select(_ => Unique.Name("lcm")).ToArray();
        await PostEachAsync(client, ids, Point(0, "g", 10), Point(0, "r", 11), Point(3, "g", 30), Point(3, "r", 31), Point(6, "g", 60), Point(6, "r", 61));

        // The next snapshot: day 3 remeasured (both bands), day 6 left out, days 9 (two bands) and 12 new; day 0 sent unchanged.
        var answer = await PostEachAsync(client, ids, Point(0, "g", 10), Point(0, "r", 11), Point(3, "g", 32.5), Point(3, "r", 33.5), Point(9, "g", 90), Point(9, "r", 91), Point(12, "g", 120));

        Assert.Equal(count, (int)answer["updated"]!);
        Assert.Equal(count * 5, (int)answer["photometryWritten"]!); // two remeasured + three new per candidate
        var stored = await PhotometryAsync(client, ids[^1]);
        Assert.Equal(
            ["0/g/10", "0/r/11", "3/g/32.5", "3/r/33.5", "6/g/60", "6/r/61", "9/g/90", "9/r/91", "12/g/120"],
            stored.Select(p => $"{(DateTimeOffset.Parse((string)p!["timeUtc"]!, CultureInfo.InvariantCulture) - Start).TotalDays}/{p!["band"]}/{(double)p["fluxMicroJy"]!}"));
    }

    [Theory]
    [InlineData(40)]
    [InlineData(4)]
    public async Task PostBatch_TwoDifferentSnapshotsAtOnce_BothMergedNoPointLostOrDoubled(int count)
    {
        var client = api.ClientWith(await api.KeyAsync(Scope.Broker));
        var ids = Enumerable.Range(0, count).Select(_ => Unique.Name("lcc")).ToArray();
        await PostEachAsync(client, ids, Point(0, "g", 10), Point(1, "r", 11));

        for (int round = 0; round < 3; round++)
        {
            // Both snapshots end with the same newest point (neither is older than the other) and each adds one point of its own.
            double newest = 20 + round;
            var a = CandidateBodies.Batch([.. ids.Select(id => CandidateWith(id, Point(5 + round, "g", 50 + round), Point(newest, "g", 200)))]);
            var b = CandidateBodies.Batch([.. ids.Select(id => CandidateWith(id, Point(5 + round, "r", 70 + round), Point(newest, "g", 200)))]);

            var responses = await Task.WhenAll(client.PostAsync("/api/candidates/batches", Bodies.Json(a)), client.PostAsync("/api/candidates/batches", Bodies.Json(b)));

            Assert.All(responses, r => Assert.Equal(HttpStatusCode.OK, r.StatusCode));
        }
        await using var conn = await api.DataSource.OpenConnectionAsync();
        var points = (await conn.QueryAsync<(string Id, long Points, long Distinct)>("""
            SELECT c.broker_candidate_id, count(*), count(DISTINCT (p.band, p.observed_at))
            FROM candidates c JOIN candidate_photometry p ON p.candidate_id = c.id WHERE c.broker_candidate_id = ANY(@ids)
            GROUP BY c.broker_candidate_id
            """, new { ids })).ToList();
        // 2 first points + per round: one g and one r point of the two snapshots, and their shared newest point.
        Assert.Equal(count, points.Count);
        Assert.All(points, p => Assert.Equal((2 + 3 * 3, 2 + 3 * 3), (p.Points, p.Distinct)));
    }

    [Theory]
    [InlineData(40)]
    [InlineData(5)]
    public async Task UpsertBatch_DatabaseRefusesARowInTheMiddle_NothingOfTheBatchStored(int count)
    {
        var store = new CandidateStore(api.DataSource);
        string broker = Unique.Name("broker");
        var stored = Enumerable.Range(0, count).Select(i => Intake(Unique.Name("aon"), days: 3)).ToList();
        await store.UpsertBatchAsync(broker, stored, DateTimeOffset.UtcNow);

        // The next snapshot of the stored candidates plus new ones; one new candidate in the middle
        // carries a redshift the table's CHECK refuses (the API's validator would have said 400 first).
        var next = stored.Select(s => Intake(s.Candidate.Id, days: 6)).Concat(Enumerable.Range(0, count).Select(_ => Intake(Unique.Name("aon"), days: 6))).ToList();
        next[count + count / 2] = Intake(next[count + count / 2].Candidate.Id, days: 6, redshift: 7);

        await Assert.ThrowsAsync<PostgresException>(() => store.UpsertBatchAsync(broker, next, DateTimeOffset.UtcNow));

        await using var conn = await api.DataSource.OpenConnectionAsync();
        var all = next.Select(i => i.Candidate.Id).ToArray();
        Assert.Equal(count, await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM candidates WHERE broker = @broker AND broker_candidate_id = ANY(@all)", new { broker, all }));
        Assert.Equal(3 * count, await conn.ExecuteScalarAsync<int>(
            "SELECT count(*) FROM candidate_photometry p JOIN candidates c ON c.id = p.candidate_id WHERE c.broker = @broker", new { broker }));
        Assert.Equal(count, await conn.ExecuteScalarAsync<int>(
            "SELECT count(*) FROM candidate_events e JOIN candidates c ON c.id = e.candidate_id WHERE c.broker = @broker", new { broker }));
        Assert.Equal(count, await conn.ExecuteScalarAsync<int>("SELECT count(*) FROM candidates WHERE broker = @broker AND data_version = 1", new { broker }));
    }

    [Fact]
    public async Task Migration0075_PointRows_BecomeOneTimeOrderedLightCurvePerCandidate_ViewYieldsTheSameRows()
    {
        await using var conn = await api.DataSource.OpenConnectionAsync();
        await using var tx = await conn.BeginTransactionAsync();
        // The former point table (0003) in a scratch schema, filled out of order, then migration 0075 over it.
        await conn.ExecuteAsync("""
            CREATE SCHEMA lc_migration_check;
            SET LOCAL search_path = lc_migration_check;
            CREATE TABLE candidate_photometry (
                candidate_id uuid NOT NULL, band text NOT NULL, observed_at timestamptz NOT NULL, flux_microjy double precision NOT NULL,
                flux_error_microjy double precision NOT NULL CHECK (flux_error_microjy >= 0), upper_limit boolean NOT NULL,
                mag_ab double precision NULL, mag_ab_error double precision NULL, PRIMARY KEY (candidate_id, band, observed_at));
            INSERT INTO candidate_photometry VALUES
                ('00000000-0000-7000-8000-000000000002', 'r', '2026-11-03T00:00:00.000001Z', 20.5, 1.5, false, 20.62, 0.08),
                ('00000000-0000-7000-8000-000000000001', 'r', '2026-11-02T12:00:00Z', 35.25, 2, false, NULL, NULL),
                ('00000000-0000-7000-8000-000000000001', 'g', '2026-11-02T12:00:00Z', 30.5, 2, false, NULL, NULL),
                ('00000000-0000-7000-8000-000000000001', 'g', '2026-11-01T00:00:00Z', 9.75, 3.25, true, NULL, NULL),
                ('00000000-0000-7000-8000-000000000002', 'i', '2026-11-01T06:00:00Z', 18, 1, false, 20.76, 0.06),
                ('00000000-0000-7000-8000-000000000001', 'z', '2026-11-05T00:00:00Z', 41, 2.5, false, 19.87, NULL);
            """, transaction: tx);
        const string points = """
            SELECT candidate_id::text || '/' || band || '/' || to_char(observed_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US') || '/'
                || flux_microjy || '/' || flux_error_microjy || '/' || upper_limit || '/' || coalesce(mag_ab::text, '-') || '/' || coalesce(mag_ab_error::text, '-')
            FROM candidate_photometry ORDER BY candidate_id, observed_at, band
            """;
        var before = (await conn.QueryAsync<string>(points, transaction: tx)).ToList();

        await conn.ExecuteAsync(Triage.Storage.Migrations.MigrationRunner.Embedded.Single(m => m.Version == 75).Sql, transaction: tx);

        Assert.Equal(before, await conn.QueryAsync<string>(points, transaction: tx));
        var curves = (await conn.QueryAsync<(Guid Id, string Bands, string Times)>(
            "SELECT candidate_id, array_to_string(band, ','), array_to_string(observed_at, ',') FROM candidate_light_curves ORDER BY candidate_id",
            transaction: tx)).ToList();
        Assert.Equal(2, curves.Count);
        Assert.Equal("g,g,r,z", curves[0].Bands);
        Assert.Equal("i,r", curves[1].Bands);
        Assert.Equal("view", await conn.ExecuteScalarAsync<string>(
            "SELECT CASE relkind WHEN 'v' THEN 'view' ELSE relkind::text END FROM pg_class WHERE oid = 'candidate_photometry'::regclass", transaction: tx));
        await tx.RollbackAsync();
    }

    /// <summary>A candidate with one r-band detection a day for <paramref name="days"/> days, hashed like the endpoint does.</summary>
    private static CandidateIntake Intake(string id, int days, double? redshift = null)
    {
        var band = PhotometricBands.Get("r");
        var points = Enumerable.Range(0, days).Select(d =>
        {
            var t = Start.AddDays(d);
            return new PhotometryPoint(t, Core.LightCurves.ModifiedJulianDate.FromUtc(t), band, 40 + d, 2, false);
        }).ToList();
        var candidate = new Candidate(id, 150.25, 2.5, Start, redshift, redshift is null ? null : 0.01, points, null, 1, null, null);
        return new CandidateIntake(candidate, System.Security.Cryptography.SHA256.HashData(System.Text.Encoding.UTF8.GetBytes($"{id}/{days}/{redshift}")));
    }
}
