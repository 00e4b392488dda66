using System.Text.Json;
using Microsoft.Playwright;

namespace DischargeGuard.Page.Tests;

/// <summary>
/// One browser context and page against a host, recording CSP violations, uncaught page errors and console messages,
/// with helpers to fill the form the way a technician would.
/// </summary>
public sealed class PageSession : IAsyncDisposable
{
    private readonly List<string> _pageErrors = [];
    private readonly List<string> _console = [];

    private PageSession(IBrowserContext context, IPage page, Uri baseAddress)
    {
        Context = context;
        Page = page;
        BaseAddress = baseAddress;
        page.PageError += (_, error) => _pageErrors.Add(error);
        page.Console += (_, message) => _console.Add($"{message.Type}: {message.Text}");
    }

    public IBrowserContext Context { get; }

    public IPage Page { get; }

    public Uri BaseAddress { get; }

    /// <summary>The answer to the page's last load of "/".</summary>
    public IResponse? Document { get; private set; }

    public static async Task<PageSession> OpenAsync(IBrowser browser, Uri baseAddress, int width = 1280, int height = 800, bool isMobile = false)
    {
        ArgumentNullException.ThrowIfNull(browser);
        var context = await browser.NewContextAsync(new BrowserNewContextOptions
        {
            ViewportSize = new ViewportSize { Width = width, Height = height },
            IsMobile = isMobile,
            HasTouch = isMobile,
            DeviceScaleFactor = 1,
            Locale = "en-GB",
        });

        // Runs before the page's own scripts; the browser reports every CSP violation as an event.
        await context.AddInitScriptAsync(
            "window.__cspViolations = [];"
            + "document.addEventListener('securitypolicyviolation', e => window.__cspViolations.push(e.violatedDirective + ' ' + e.blockedURI));");
        var page = await context.NewPageAsync();
        var session = new PageSession(context, page, baseAddress);
        return session;
    }

    /// <summary>Loads "/" and waits until the page has its gases and catalogues.</summary>
    public async Task LoadAsync()
    {
        Document = await Page.GotoAsync(BaseAddress.ToString());
        await Page.Locator("body[data-ready='true']").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Attached });
    }

    public ILocator At(string selector) => Page.Locator(selector);

    public Task FillAsync(string selector, string value) => Page.Locator(selector).FillAsync(value);

    /// <summary>Selects the option whose value is <paramref name="value"/>; an empty value leaves the select as it is.</summary>
    public async Task SelectAsync(string selector, string value)
    {
        if (value.Length > 0)
        {
            await Page.Locator(selector).SelectOptionAsync(value);
        }
    }

    /// <summary>Fills stage <paramref name="index"/> (0-based); empty strings leave a field blank.</summary>
    public async Task FillStageAsync(int index, StageEntry stage)
    {
        ArgumentNullException.ThrowIfNull(stage);
        var p = $"#stage-{index}-";
        await FillAsync(p + "suction-pressure", stage.SuctionPressure);
        await SelectAsync(p + "suction-pressure-unit", stage.PressureUnit);
        await FillAsync(p + "suction-temperature", stage.SuctionTemperature);
        await FillAsync(p + "discharge-pressure", stage.DischargePressure);
        await SelectAsync(p + "discharge-pressure-unit", stage.PressureUnit);
        await SelectAsync(p + "compressor-type", stage.CompressorType);
        await FillAsync(p + "efficiency", stage.Efficiency);
        await SelectAsync(p + "lubricant", stage.Lubricant);
        await SelectAsync(p + "valve-material", stage.ValveMaterial);
        await SelectAsync(p + "seal-material", stage.SealMaterial);
        await FillAsync(p + "measured", stage.Measured);
        await FillAsync(p + "normal", stage.Normal);
    }

    /// <summary>Fills the machine, site and gas.</summary>
    public async Task FillHeaderAsync(string asset, string siteId, string elevationMetres, string gas)
    {
        await FillAsync("#asset", asset);
        await At("#asset").DispatchEventAsync("change");
        await FillAsync("#site-id", siteId);
        await At("#site-id").DispatchEventAsync("change");
        await At("#site-basis-elevation").CheckAsync();
        await FillAsync("#site-elevation", elevationMetres);
        await SelectAsync("#gas", gas);
    }

    /// <summary>Presses Check and waits for the answer (a verdict or "no verdict"); returns the evaluation's JSON, if one came.</summary>
    public async Task<JsonElement?> CheckAsync()
    {
        var response = Page.WaitForResponseAsync(r => r.Url.Contains("/v1/evaluations?curve=true", StringComparison.Ordinal));
        await At("#check").ClickAsync();
        await At("#result-body .verdict").WaitForAsync();
        await At("#check:enabled").WaitForAsync();
        try
        {
            var answer = await response.WaitAsync(TimeSpan.FromSeconds(5));
            return answer.Ok ? JsonDocument.Parse(await answer.TextAsync()).RootElement.Clone() : null;
        }
        catch (Exception ex) when (ex is TimeoutException or PlaywrightException)
        {
            return null;
        }
    }

    /// <summary>Saves a screenshot (the whole page, or what the screen shows) under TestResults/screenshots.</summary>
    public async Task ScreenshotAsync(string name, bool fullPage = true)
    {
        Directory.CreateDirectory(RepoPaths.Screenshots);
        await Page.ScreenshotAsync(new PageScreenshotOptions { Path = Path.Combine(RepoPaths.Screenshots, name + ".png"), FullPage = fullPage });
    }

    /// <summary>Asserts no CSP violation and no uncaught script error happened on the page.</summary>
    public async Task AssertCleanAsync()
    {
        var violations = await Page.EvaluateAsync<string[]>("() => window.__cspViolations");
        Assert.True(violations.Length == 0, "CSP violations: " + string.Join("; ", violations));
        Assert.True(_pageErrors.Count == 0, "page errors: " + string.Join("; ", _pageErrors));
        var cspConsole = _console.Where(m => m.Contains("Content Security Policy", StringComparison.OrdinalIgnoreCase)).ToList();
        Assert.True(cspConsole.Count == 0, "console: " + string.Join("; ", cspConsole));
    }

    public async ValueTask DisposeAsync()
    {
        await Context.CloseAsync();
    }
}

/// <summary>What a technician types into one stage.</summary>
public sealed record StageEntry(
    string SuctionPressure,
    string SuctionTemperature,
    string DischargePressure,
    string PressureUnit = "barg",
    string CompressorType = "recip-lubricated",
    string Efficiency = "",
    string Lubricant = "",
    string ValveMaterial = "",
    string SealMaterial = "",
    string Measured = "",
    string Normal = "");
