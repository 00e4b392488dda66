using System.Runtime.CompilerServices;
using Microsoft.Playwright;

namespace DischargeGuard.Page.Tests;

/// <summary>
/// Debian's Chromium driven by Playwright's bundled driver, plus one open service host shared by the scenarios.
/// Without /usr/bin/chromium the scenarios fail under CI=true and otherwise skip, naming the install command.
/// </summary>
public sealed class BrowserFixture : IAsyncLifetime
{
    public const string ChromiumPath = "/usr/bin/chromium";

    public static readonly string[] ChromiumArgs =
    [
        "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run",
    ];

    private IPlaywright? _playwright;
    private IBrowser? _browser;
    private PageHost? _host;

    /// <summary>Why the browser is missing, or null.</summary>
    public string? Missing { get; private set; }

    public IBrowser Browser => _browser ?? throw new InvalidOperationException(Missing ?? "browser not started");

    public PageHost Host => _host ?? throw new InvalidOperationException("host not started");

    public async Task InitializeAsync()
    {
        if (!File.Exists(ChromiumPath))
        {
            Missing = $"{ChromiumPath} is missing: install Debian's Chromium with `apt-get install -y chromium` to run the page tests.";
            return;
        }

        _playwright = await Playwright.CreateAsync();
        _browser = await LaunchAsync(_playwright);
        _host = PageHost.StartOpen();
    }

    public static Task<IBrowser> LaunchAsync(IPlaywright playwright)
    {
        ArgumentNullException.ThrowIfNull(playwright);
        return playwright.Chromium.LaunchAsync(new BrowserTypeLaunchOptions
        {
            ExecutablePath = ChromiumPath,
            Headless = true,
            Args = ChromiumArgs,
        });
    }

    /// <summary>Fails under CI=true, else skips, when Chromium is missing.</summary>
    public void Require()
    {
        if (Missing is null)
        {
            return;
        }

        if (string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase))
        {
            Assert.Fail(Missing);
        }

        Skip.If(true, Missing);
    }

    public async Task DisposeAsync()
    {
        if (_host is not null)
        {
            await _host.DisposeAsync();
        }

        if (_browser is not null)
        {
            await _browser.CloseAsync();
        }

        _playwright?.Dispose();
    }
}

[CollectionDefinition(Name)]
public sealed class BrowserGroup : ICollectionFixture<BrowserFixture>
{
    public const string Name = "browser";
}

/// <summary>Settings needed before any host or driver starts.</summary>
internal static class TestEnvironment
{
    [ModuleInitializer]
    internal static void Initialize()
    {
        // Never fetch a browser build: the tests use Debian's Chromium only.
        Environment.SetEnvironmentVariable("PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD", "1");

        // No configuration-file watcher per host (each holds an inotify instance; a Linux user gets 128 by default).
        Environment.SetEnvironmentVariable("DOTNET_hostBuilder__reloadConfigOnChange", "false");
        Environment.SetEnvironmentVariable("ASPNETCORE_hostBuilder__reloadConfigOnChange", "false");
    }
}
