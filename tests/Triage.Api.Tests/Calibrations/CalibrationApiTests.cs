using System.Net;
using System.Text;
using System.Text.Json;
using Triage.Api.Tests.Infrastructure;
using Triage.Storage.Access;

namespace Triage.Api.Tests.Calibrations;

/// <summary>
/// Calibrations through the API on a database of their own (which one is active is global):
/// a job on a small synthetic library, a table import with line-numbered errors, activation, plots.
/// </summary>
public sealed class CalibrationApiTests(IsolatedDatabaseFactory api) : IClassFixture<IsolatedDatabaseFactory>
{
    private const string Table = """
        # a ready-made table computed elsewhere (numbers invented for the test)
        subtype,resolution,snr,phase_bin,recall,recall_low,recall_high,precision,spectra,objects
        Ia,100,10,all,0.90,0.85,0.94,0.88,120,30
        Ia,1000,10,all,0.93,0.89,0.96,0.90,120,30
        Ic,100,10,all,0.40,0.30,0.51,0.45,60,12
        Ic,1000,10,all,0.70,0.60,0.79,0.66,60,12
        """;

    private static StringContent Csv(string text) => new(text, Encoding.UTF8, "text/csv");

    [Fact]
    public async Task ImportedTable_BecomesActiveOnRequest_AndIsServedWhole()
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var created = await admin.PostAsync("/api/calibrations/imports?activate=true", Csv(Table));
        Assert.Equal(HttpStatusCode.Created, created.StatusCode);
        var id = JsonDocument.Parse(await created.Content.ReadAsStringAsync()).RootElement.GetProperty("id").GetString();

        var reader = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        var active = JsonDocument.Parse(await reader.GetStringAsync("/api/calibrations/active")).RootElement;
        Assert.Equal(id, active.GetProperty("calibration").GetProperty("id").GetString());
        Assert.Equal("imported", active.GetProperty("calibration").GetProperty("source").GetString());
        var cells = active.GetProperty("document").GetProperty("cells").EnumerateArray().ToList();
        Assert.Equal(4, cells.Count);
        Assert.Equal(0.70, cells.Single(c => c.GetProperty("subtype").GetString() == "Ic" && c.GetProperty("resolution").GetDouble() == 1000).GetProperty("recall").GetDouble());

        // The recall plot draws every subtype; an imported table has no confusion matrices.
        var svg = await reader.GetAsync($"/api/calibrations/{id}/plots/recall.svg?snr=10");
        Assert.Equal("image/svg+xml", svg.Content.Headers.ContentType?.MediaType);
        var text = await svg.Content.ReadAsStringAsync();
        Assert.Contains("<svg", text, StringComparison.Ordinal);
        Assert.Contains("Ic", text, StringComparison.Ordinal);
        var equal = await reader.GetAsync($"/api/calibrations/{id}/plots/equal-exposure.svg");
        Assert.Equal("image/svg+xml", equal.Content.Headers.ContentType?.MediaType);
        var equalText = await equal.Content.ReadAsStringAsync();
        Assert.True(equalText.Contains("Equal exposure", StringComparison.Ordinal), equalText[..Math.Min(3000, equalText.Length)]);
        await Bodies.AssertProblemNamingAsync(await reader.GetAsync($"/api/calibrations/{id}/plots/confusion.svg?resolution=100&snr=10"), 404, "resolution");
        await Bodies.AssertProblemNamingAsync(await reader.GetAsync($"/api/calibrations/{id}/plots/recall.svg?snr=7"), 400, "snr");
    }

    [Theory]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low\nIa,100,10,all,0.9,0.8\n", "line 1: recall_high")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\nIb-weird,100,10,all,0.9,0.8,0.95\n", "line 2: subtype")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\nIa,100,10,all,0.9,0.8,0.95\nIa,0,10,all,0.9,0.8,0.95\n", "line 3: resolution")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\nIa,100,loud,all,0.9,0.8,0.95\n", "line 2: snr")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\nIa,100,10,someday,0.9,0.8,0.95\n", "line 2: phase_bin")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\nIa,100,10,all,1.3,0.8,0.95\n", "line 2: recall")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\nIa,100,10,all,0.5,0.8,0.95\n", "line 2: recall")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\nIa,100,10,all,0.9,0.8,0.95\nIa,100,10,all,0.9,0.8,0.95\n", "line 3: subtype")]
    [InlineData("subtype,resolution,snr,phase_bin,recall,recall_low,recall_high\n", "line 1: header")]
    public async Task BadTable_IsRefusedNamingLineAndColumn_AndNothingIsStored(string csv, string field)
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var before = JsonDocument.Parse(await admin.GetStringAsync("/api/calibrations")).RootElement.GetArrayLength();
        await Bodies.AssertProblemNamingAsync(await admin.PostAsync("/api/calibrations/imports", Csv(csv)), 400, field);
        Assert.Equal(before, JsonDocument.Parse(await admin.GetStringAsync("/api/calibrations")).RootElement.GetArrayLength());
    }

    [Fact]
    public async Task Import_NeedsAdminAndCsv()
    {
        var scheduler = api.ClientWith(await api.KeyAsync(Scope.Scheduler));
        Assert.Equal(HttpStatusCode.Forbidden, (await scheduler.PostAsync("/api/calibrations/imports", Csv(Table))).StatusCode);
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        await Bodies.AssertProblemNamingAsync(await admin.PostAsync("/api/calibrations/imports", Bodies.Raw("{}")), 415, "Content-Type");
    }

    [Theory]
    [InlineData("{\"library\":\"cloud\"}", "library")]
    [InlineData("{\"library\":\"folder\",\"libraryPath\":\"/no/such/folder\"}", "libraryPath")]
    [InlineData("{\"objects\":5}", "objects")]
    [InlineData("{\"folds\":1}", "folds")]
    [InlineData("{\"resolutions\":[0.5]}", "resolutions[0]")]
    [InlineData("{\"resolutions\":[4.9, 100]}", "resolutions[0]")]                  // below the lowest R supported (5)
    [InlineData("{\"resolutions\":[100, 6000, 6001]}", "resolutions[2]")]           // above the synthetic library's native R 6000
    [InlineData("{\"snr\":[-3]}", "snr[0]")]
    public async Task BadCalibrationRequest_IsProblemNamingTheField(string body, string field)
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        await Bodies.AssertProblemNamingAsync(await admin.PostAsync("/api/calibrations", Bodies.Raw(body)), 400, field);
    }

    [Fact]
    public async Task ResolutionsBeyondAFolderLibrary_AreRefusedUpFront_AndNoJobIsQueued()
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var folder = Path.Combine(Path.GetTempPath(), "triage-r-limit-" + Guid.NewGuid().ToString("N"));
        var empty = Path.Combine(Path.GetTempPath(), "triage-r-empty-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(empty);
        try
        {
            // A library observed at R 1500: nothing can be degraded to R 2000 from it.
            var library = Triage.Core.Spectra.Synthetic.SyntheticLibrary.Generate(
                new Triage.Core.Spectra.Synthetic.SynthOptions { Objects = 30, Seed = 2, NativeResolution = 1500 }).Library;
            Triage.Learning.LibraryFiles.Write(folder, library, ["R limit test"]);
            await using var conn = await api.DataSource.OpenConnectionAsync();
            var jobsBefore = await Dapper.SqlMapper.ExecuteScalarAsync<long>(conn, "SELECT count(*) FROM jobs");

            var above = await admin.PostAsync("/api/calibrations", Bodies.Raw(JsonSerializer.Serialize(new
            {
                library = "folder", libraryPath = folder, resolutions = new[] { 100.0, 1500.0, 2000.0 }, snr = new[] { 10.0 },
            })));
            await Bodies.AssertProblemNamingAsync(above, 400, "resolutions[2]");
            Assert.Contains("1500", await above.Content.ReadAsStringAsync());
            var unreadable = await admin.PostAsync("/api/calibrations", Bodies.Raw(JsonSerializer.Serialize(new { library = "folder", libraryPath = empty })));
            await Bodies.AssertProblemNamingAsync(unreadable, 400, "libraryPath");

            Assert.Equal(jobsBefore, await Dapper.SqlMapper.ExecuteScalarAsync<long>(conn, "SELECT count(*) FROM jobs"));
        }
        finally
        {
            Directory.Delete(folder, true);
            Directory.Delete(empty, true);
        }
    }

    [Fact]
    public async Task CalibrationJob_OnASmallSyntheticLibrary_StoresACalibrationThatCanBeActivated()
    {
        var admin = api.ClientWith(await api.KeyAsync(Scope.Admin));
        var accepted = await admin.PostAsync("/api/calibrations", Bodies.Raw(
            """{"library":"synthetic","objects":40,"seed":3,"resolutions":[20,300],"snr":[20],"folds":2}"""));
        Assert.Equal(HttpStatusCode.Accepted, accepted.StatusCode);
        var jobUrl = JsonDocument.Parse(await accepted.Content.ReadAsStringAsync()).RootElement.GetProperty("jobUrl").GetString();
        JsonElement job = default;
        for (var i = 0; i < 900; i++)
        {
            job = JsonDocument.Parse(await admin.GetStringAsync(jobUrl)).RootElement;
            if (job.GetProperty("status").GetString() is "succeeded" or "failed")
            {
                break;
            }
            await Task.Delay(200);
        }
        Assert.True(job.GetProperty("status").GetString() == "succeeded", job.ToString());
        Assert.Equal(100, job.GetProperty("percentDone").GetDouble());
        var id = job.GetProperty("result").GetProperty("calibrationId").GetString();

        var stored = JsonDocument.Parse(await admin.GetStringAsync($"/api/calibrations/{id}")).RootElement;
        Assert.True(stored.GetProperty("calibration").GetProperty("synthetic").GetBoolean());
        Assert.Equal([20.0, 300.0], stored.GetProperty("document").GetProperty("resolutions").EnumerateArray().Select(r => r.GetDouble()));
        Assert.False(string.IsNullOrEmpty(stored.GetProperty("calibration").GetProperty("libraryFingerprint").GetString()));

        Assert.Equal(HttpStatusCode.NoContent, (await admin.PostAsync($"/api/calibrations/{id}/activation", null)).StatusCode);
        var active = JsonDocument.Parse(await admin.GetStringAsync("/api/calibrations/active")).RootElement;
        Assert.Equal(id, active.GetProperty("calibration").GetProperty("id").GetString());
        var confusion = await admin.GetAsync($"/api/calibrations/{id}/plots/confusion.svg?resolution=300&snr=20");
        Assert.Equal(HttpStatusCode.OK, confusion.StatusCode);
        await Bodies.AssertProblemNamingAsync(await admin.PostAsync($"/api/calibrations/{Guid.NewGuid()}/activation", null), 404, "id");
    }
}
