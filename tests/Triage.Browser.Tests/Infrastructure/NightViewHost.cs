using System.Net.Http.Headers;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Playwright;
using Triage.Storage;
using Triage.Storage.Access;
using Triage.Storage.Migrations;

namespace Triage.Browser.Tests.Infrastructure;

/// <summary>
/// The real service on a loopback Kestrel port against a real PostgreSQL
/// (<c>TRIAGE_TEST_CONNECTION</c>), and Debian's Chromium driven by Playwright (no browser download).
/// </summary>
public sealed class NightViewHost : WebApplicationFactory<Program>, IAsyncLifetime
{
    public static string ConnectionString { get; } =
        Environment.GetEnvironmentVariable("TRIAGE_TEST_CONNECTION")
        ?? "Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=triage_test";

    private IPlaywright? _playwright;

    public IBrowser Browser { get; private set; } = null!;

    /// <summary>The service's address, e.g. http://127.0.0.1:40123.</summary>
    public Uri Address { get; private set; } = null!;

    /// <summary>Screenshots go here (test output folder), never into the repository.</summary>
    public static string ScreenshotFolder { get; } = Path.Combine(AppContext.BaseDirectory, "artifacts", "screenshots");

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        builder.UseEnvironment("Testing");
        builder.UseSetting("ConnectionStrings:Triage", ConnectionString);
        builder.UseSetting("Serilog:MinimumLevel:Default", "Warning");
    }

    public async Task InitializeAsync()
    {
        await using (var data = TriageDataSource.Create(ConnectionString))
        {
            await MigrationRunner.ApplyAsync(data, TimeProvider.System);
        }
        UseKestrel(k => k.Listen(System.Net.IPAddress.Loopback, 0));
        StartServer();
        var addresses = Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses;
        Address = new Uri(addresses.First());
        Directory.CreateDirectory(ScreenshotFolder);
        _playwright = await Playwright.CreateAsync();
        Browser = await _playwright.Chromium.LaunchAsync(new BrowserTypeLaunchOptions
        {
            ExecutablePath = "/usr/bin/chromium",
            Headless = true,
            Args = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
        });
    }

    async Task IAsyncLifetime.DisposeAsync()
    {
        if (Browser is not null)
        {
            await Browser.CloseAsync();
        }
        _playwright?.Dispose();
        await DisposeAsync();
    }

    /// <summary>Issues a key straight in the store, for arranging a test.</summary>
    public async Task<string> KeyAsync(Scope scope)
    {
        var issued = await Services.GetRequiredService<KeyStore>().IssueAsync($"browser test {scope}", [scope], null, DateTimeOffset.UtcNow);
        return issued.Secret;
    }

    /// <summary>A client of the running service that sends <paramref name="key"/> as its bearer key.</summary>
    public HttpClient ClientWith(string key)
    {
        var client = new HttpClient { BaseAddress = Address };
        client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        return client;
    }
}

[CollectionDefinition(Name)]
public sealed class BrowserCollection : ICollectionFixture<NightViewHost>
{
    public const string Name = "browser";
}
