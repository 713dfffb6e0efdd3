using System.Text.RegularExpressions;
using Microsoft.Playwright;

namespace Triage.Browser.Tests.Infrastructure;

/// <summary>One browser page on the night view with its console errors collected.</summary>
public sealed partial class ViewSession : IAsyncDisposable
{
    /// <summary>
    /// Endpoints the view asks for that are being written in parallel (the night's sky and the
    /// calibrations). Until they exist the view answers their 404 with a clear note, and the browser
    /// logs a "Failed to load resource" line for them; only those lines are set aside.
    /// </summary>
    [GeneratedRegex(@"/api/sites/[^/]+/nights/|/api/calibrations")]
    private static partial Regex PendingEndpoints();

    private readonly IBrowserContext _context;
    private readonly List<string> _errors = [];

    public IPage Page { get; }

    /// <summary>Console errors, except the 404s of pending endpoints (listed in <see cref="SetAside"/>).</summary>
    public IReadOnlyList<string> ConsoleErrors => _errors;

    public List<string> SetAside { get; } = [];

    private ViewSession(IBrowserContext context, IPage page)
    {
        _context = context;
        Page = page;
        page.Console += (_, message) =>
        {
            if (message.Type != "error")
            {
                return;
            }
            var line = $"{message.Text} at {message.Location}";
            if (message.Text.StartsWith("Failed to load resource: the server responded with a status of 404", StringComparison.Ordinal)
                && PendingEndpoints().IsMatch(message.Location))
            {
                SetAside.Add(line);
            }
            else
            {
                _errors.Add(line);
            }
        };
        page.PageError += (_, error) => _errors.Add("page error: " + error);
    }

    public static async Task<ViewSession> OpenAsync(NightViewHost host)
    {
        var context = await host.Browser.NewContextAsync(new BrowserNewContextOptions { ViewportSize = new ViewportSize { Width = 1360, Height = 900 } });
        return new ViewSession(context, await context.NewPageAsync());
    }

    /// <summary>Opens the view for a night (polling every second), signs in and waits for the page to be drawn.</summary>
    public async Task SignInAsync(NightViewHost host, string key, string night, string page = "tonight")
    {
        await Page.GotoAsync(new Uri(host.Address, $"/?night={night}&poll=1#/{page}").ToString());
        await Page.FillAsync("#key", key);
        await Page.ClickAsync("#signin button[type=submit]");
    }

    /// <summary>A new page signed in with the scenario's key on <paramref name="route"/>, drawn and ready.</summary>
    public static async Task<ViewSession> SignedInAsync(NightViewHost host, NightScenario scenario, string route = "tonight")
    {
        var view = await OpenAsync(host);
        await view.SignInAsync(host, scenario.AdminKey, scenario.NightText, route);
        await view.WaitReadyAsync(route.Split('/')[0]);
        return view;
    }

    public async Task WaitReadyAsync(string page) =>
        await Page.WaitForSelectorAsync($"main[data-ready=\"{page}\"]", new PageWaitForSelectorOptions { Timeout = 20000 });

    public async Task ScreenshotAsync(string name) =>
        await Page.ScreenshotAsync(new PageScreenshotOptions { Path = Path.Combine(NightViewHost.ScreenshotFolder, name + ".png"), FullPage = true });

    public async ValueTask DisposeAsync() => await _context.CloseAsync();
}
