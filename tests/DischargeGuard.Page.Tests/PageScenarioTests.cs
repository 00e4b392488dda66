using System.Text.Json;
using System.Text.RegularExpressions;
using Microsoft.Playwright;

namespace DischargeGuard.Page.Tests;

/// <summary>
/// The technicians' page in Debian's Chromium against the real service on a loopback port. Scenarios are in the
/// invented Marlow Fen station (Tarnbrook Midstream Ltd.), asset C-204B; each one saves a screenshot.
/// </summary>
[Collection(BrowserGroup.Name)]
public sealed partial class PageScenarioTests(BrowserFixture browser)
{
    private const string Asset = "C-204B";
    private const string Site = "marlow-fen";

    // The invented station sits on fenland a few metres above sea level.
    private const string SiteElevation = "4";

    private static readonly StageEntry AirStage = new(
        "0", "25", "1.5", Efficiency: "0.82", Lubricant: "mineral-vdl", ValveMaterial: "peek", SealMaterial: "fkm", Measured: "140", Normal: "125");

    private async Task<PageSession> OpenAsync(int width = 1280, int height = 800, bool mobile = false)
    {
        browser.Require();
        var session = await PageSession.OpenAsync(browser.Browser, browser.Host.BaseAddress, width, height, mobile);
        await session.LoadAsync();
        return session;
    }

    private static async Task FillAirStageAsync(PageSession page)
    {
        await page.FillHeaderAsync(Asset, Site, SiteElevation, "preset:dry-air");
        await page.SelectAsync("#service", "air");
        await page.FillStageAsync(0, AirStage);
        await page.At("#stages fieldset.stage[data-index='0'] details.more:has(#stage-0-coolant) summary").ClickAsync();
        await page.FillAsync("#stage-0-coolant", "30");
        await page.SelectAsync("#stage-0-unloaded", "false");
    }

    [SkippableFact]
    public async Task Passing_air_stage_shows_the_verdict_in_words_and_shape_with_values_cautions_and_id()
    {
        await using var page = await OpenAsync();
        await FillAirStageAsync(page);
        var answer = await page.CheckAsync();

        Assert.NotNull(answer);
        var body = answer.Value;
        Assert.Equal("pass", body.GetProperty("verdict").GetString());
        var verdict = page.At("#result-body > .verdict");
        Assert.Equal("pass", await verdict.GetAttributeAsync("data-verdict"));
        Assert.Contains("PASS", await verdict.InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(1, await verdict.Locator("svg.shape-pass circle").CountAsync());

        // The stage's temperatures as the service gave them, the efficiency's source, the cautions and the id.
        var stage = body.GetProperty("stages")[0];
        var estimated = stage.GetProperty("dischargeTemperature").GetProperty("estimated").GetProperty("value").GetDouble();
        Assert.Contains(estimated.ToString("0.0", System.Globalization.CultureInfo.InvariantCulture), await page.At("tr[data-value='estimated'] td").InnerTextAsync(), StringComparison.Ordinal);
        Assert.Contains("as entered", await page.At("tr[data-value='efficiency'] td").InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(1, await page.At("tr[data-value='constant-k']").CountAsync());
        var cautions = body.GetProperty("cautions").EnumerateArray().Select(c => c.GetString()!).ToList();
        Assert.NotEmpty(cautions);
        var shown = await page.At("ul.cautions li").AllInnerTextsAsync();
        Assert.Equal(cautions, shown);
        var id = body.GetProperty("id").GetString()!;
        Assert.Equal(id, await page.At(".evaluation-id").InnerTextAsync());
        Assert.Contains(id, await page.At("#result-status").InnerTextAsync(), StringComparison.Ordinal);

        // The standing caution defers to the manufacturer and keeps the machine's own protection in service.
        var standing = await page.At(".standing-caution").InnerTextAsync();
        Assert.Contains("manufacturer", standing, StringComparison.Ordinal);
        Assert.Contains("alarms and shutdowns", standing, StringComparison.Ordinal);

        // Measured against predicted: the service's deviation and a hint that defers to the manufacturer's diagnostics.
        var minus = stage.GetProperty("measured").GetProperty("minusEstimated").GetProperty("value").GetDouble();
        var panel = page.At(".measured-panel");
        Assert.Contains(minus.ToString("0.0", System.Globalization.CultureInfo.InvariantCulture), await panel.Locator(".deviation").InnerTextAsync(), StringComparison.Ordinal);
        Assert.Contains("manufacturer's diagnostic", await panel.InnerTextAsync(), StringComparison.Ordinal);

        // Not checked, with the service's reason.
        foreach (var notChecked in stage.GetProperty("notChecked").EnumerateArray())
        {
            Assert.Equal(1, await page.At($".not-checked li[data-rule='{notChecked.GetProperty("ruleId").GetString()}']").CountAsync());
        }

        // The asset's history now lists this evaluation.
        await page.At($"#history-list li[data-id='{id}']").WaitForAsync();
        await page.ScreenshotAsync("01-passing-air-stage");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Failing_hydrogen_rich_stage_shows_the_governing_rule_and_each_violation_with_its_basis()
    {
        await using var page = await OpenAsync();
        await page.FillHeaderAsync(Asset, Site, SiteElevation, "new:");
        await page.FillAsync("#composition", "H2 0.80\nCH4 0.20");
        await page.FillStageAsync(0, new StageEntry("10", "35", "40", PressureUnit: "bara", Lubricant: "pao-dab"));
        var answer = await page.CheckAsync();

        Assert.NotNull(answer);
        var body = answer.Value;
        Assert.Equal("fail", body.GetProperty("verdict").GetString());
        Assert.Contains("hydrogen-rich", body.GetProperty("gas").GetProperty("serviceClasses").EnumerateArray().Select(s => s.GetString()));
        var verdict = page.At("#result-body > .verdict");
        Assert.Equal("fail", await verdict.GetAttributeAsync("data-verdict"));
        Assert.Contains("FAIL", await verdict.InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(1, await verdict.Locator("svg.shape-fail path.shape").CountAsync());

        var governing = body.GetProperty("stages")[0].GetProperty("governing");
        var rule = governing.GetProperty("ruleId").GetString()!;
        var block = page.At(".governing");
        Assert.Equal(rule, await block.GetAttributeAsync("data-rule"));
        var text = await block.InnerTextAsync();
        Assert.Contains($"Governing limit: {rule}", text, StringComparison.Ordinal);
        Assert.Contains("beyond the limit", text, StringComparison.Ordinal);

        // The gas model the temperatures come from, as the answer names it.
        var method = body.GetProperty("stages")[0].GetProperty("method").GetString();
        Assert.Contains(method == "ideal-gas" ? "ideal gas" : "real gas", await page.At("tr[data-value='method'] td").InnerTextAsync(), StringComparison.Ordinal);

        // The hydrogen-rich rule is among the violations, with its basis.
        var h2 = page.At("li.finding[data-rule='R-API618-H2']");
        Assert.Equal("violation", await h2.GetAttributeAsync("data-severity"));
        Assert.Contains("LIMIT EXCEEDED", await h2.InnerTextAsync(), StringComparison.Ordinal);
        Assert.Contains("Basis:", await h2.InnerTextAsync(), StringComparison.Ordinal);
        await page.ScreenshotAsync("02-failing-hydrogen-stage");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Dense_co2_stage_uses_the_real_gas_and_shows_both_answers_z_and_the_model()
    {
        await using var page = await OpenAsync();
        await page.FillHeaderAsync(Asset, Site, SiteElevation, "new:");
        await page.FillAsync("#composition", "CO2 1");
        await page.FillStageAsync(0, new StageEntry("30", "40", "90", PressureUnit: "bara", Lubricant: "pao-dab"));
        var answer = await page.CheckAsync();

        Assert.NotNull(answer);
        var stage = answer.Value.GetProperty("stages")[0];
        // The page's method select defaults to auto, which picks GERG-2008 for pure CO2 in its normal range.
        Assert.Equal("gerg-2008", stage.GetProperty("method").GetString());
        Assert.Contains("real gas (GERG-2008)", await page.At("tr[data-value='method'] td").InnerTextAsync(), StringComparison.Ordinal);
        var text = await page.At(".stage-result").InnerTextAsync();
        Assert.Contains("Ideal-gas estimate", text, StringComparison.Ordinal);
        Assert.Contains("Real-gas (GERG-2008) estimate", text, StringComparison.Ordinal);
        Assert.Contains("Peng-Robinson estimate (second opinion)", text, StringComparison.Ordinal);
        Assert.Contains("Real minus ideal", text, StringComparison.Ordinal);

        // Z as the answer gives it (the page formats, never computes).
        var z = await page.At("tr[data-value='z'] td").InnerTextAsync();
        var zSuction = stage.GetProperty("properties").GetProperty("zSuction").GetDouble();
        Assert.StartsWith(zSuction.ToString("0.###", System.Globalization.CultureInfo.InvariantCulture)[..4], z, StringComparison.Ordinal);
        await page.ScreenshotAsync("02b-dense-co2-real-gas");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Gauge_pressure_without_site_data_shows_the_error_beside_the_field_and_no_verdict()
    {
        await using var page = await OpenAsync();
        await page.FillHeaderAsync(Asset, Site, "", "preset:dry-air");
        await page.FillStageAsync(0, new StageEntry("0.2", "25", "3"));
        var answer = await page.CheckAsync();

        Assert.Null(answer);
        Assert.Equal("none", await page.At("#result-body > .verdict").GetAttributeAsync("data-verdict"));
        Assert.Contains("NO VERDICT", await page.At("#result-body").InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(0, await page.At(".stage-result").CountAsync());

        var suction = page.At(".field[data-path='stages[0].suction.pressure'] .field-error");
        Assert.True(await suction.IsVisibleAsync());
        var words = await suction.InnerTextAsync();
        Assert.Contains("gauge pressure", words, StringComparison.Ordinal);
        Assert.Contains("the site's elevation", words, StringComparison.Ordinal);
        Assert.DoesNotContain("site.elevation", words, StringComparison.Ordinal);
        Assert.Equal("true", await page.At("#stage-0-suction-pressure").GetAttributeAsync("aria-invalid"));
        var describedBy = await page.At("#stage-0-suction-pressure").GetAttributeAsync("aria-describedby");
        Assert.Contains(await suction.GetAttributeAsync("id"), describedBy!.Split(' '));
        Assert.True(await page.At(".field[data-path='stages[0].discharge.pressure'] .field-error").IsVisibleAsync());

        // The summary lists the entries and takes focus, so a screen reader hears it at once.
        Assert.True(await page.At("#error-summary").IsVisibleAsync());
        Assert.Equal("error-summary", await page.Page.EvaluateAsync<string>("() => document.activeElement.id"));
        await page.ScreenshotAsync("03-gauge-without-site-field-error");

        // Fixing the entry clears the marks with the next check.
        await page.FillAsync("#site-elevation", SiteElevation);
        Assert.NotNull(await page.CheckAsync());
        Assert.Equal(0, await page.At(".field-error[data-generated]").CountAsync());
        Assert.Null(await page.At("#stage-0-suction-pressure").GetAttributeAsync("aria-invalid"));
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Two_stage_train_shows_each_stage_with_its_own_chart()
    {
        await using var page = await OpenAsync();
        await page.FillHeaderAsync(Asset, Site, SiteElevation, "preset:methane");
        await page.SelectAsync("#service", "hydrocarbon");
        await page.FillStageAsync(0, new StageEntry("2", "30", "9", Lubricant: "mineral-vdl"));
        await page.At("#add-stage").ClickAsync();
        Assert.Equal(2, await page.At("#stages > fieldset.stage").CountAsync());
        Assert.Equal("stage-1-suction-pressure", await page.Page.EvaluateAsync<string>("() => document.activeElement.id"));

        // The second stage starts with the first stage's equipment.
        Assert.Equal("mineral-vdl", await page.At("#stage-1-lubricant").InputValueAsync());
        await page.FillStageAsync(1, new StageEntry("8.6", "40", "30", Lubricant: "mineral-vdl"));
        var answer = await page.CheckAsync();

        Assert.NotNull(answer);
        Assert.Equal(2, answer.Value.GetProperty("stages").GetArrayLength());
        Assert.Equal(2, await page.At(".stage-result").CountAsync());
        Assert.Equal(2, await page.At(".stage-result svg.chart-svg").CountAsync());
        Assert.Contains("Stage 2", await page.At(".stage-result[data-stage='1'] h3").InnerTextAsync(), StringComparison.Ordinal);
        for (var i = 0; i < 2; i++)
        {
            var expected = answer.Value.GetProperty("stages")[i].GetProperty("verdict").GetString();
            Assert.Contains(expected!.ToUpperInvariant(), await page.At($".stage-result[data-stage='{i}'] h3").InnerTextAsync(), StringComparison.Ordinal);
        }

        await page.ScreenshotAsync("04-two-stage-train");

        // Removing the stage again leaves one.
        await page.At("#remove-stage").ClickAsync();
        Assert.Equal(1, await page.At("#stages > fieldset.stage").CountAsync());
        Assert.True(await page.At("#remove-stage").IsDisabledAsync());
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Chart_draws_the_curve_band_each_limit_line_the_operating_point_and_the_envelope_point()
    {
        await using var page = await OpenAsync();
        await page.FillHeaderAsync(Asset, Site, SiteElevation, "preset:dry-air");
        await page.SelectAsync("#service", "air");
        await page.FillStageAsync(0, new StageEntry("0", "30", "3", Lubricant: "mineral-vdl", ValveMaterial: "peek", SealMaterial: "fkm"));
        var answer = await page.CheckAsync();

        Assert.NotNull(answer);
        var stage = answer.Value.GetProperty("stages")[0];
        var svg = page.At(".stage-result svg.chart-svg");
        Assert.Equal("img", await svg.GetAttributeAsync("role"));
        Assert.Equal(1, await svg.Locator("path.curve-estimated").CountAsync());
        Assert.Equal(1, await svg.Locator("path.curve-isentropic").CountAsync());
        Assert.Equal(1, await svg.Locator("polygon.band").CountAsync());
        var points = Regex.Count(await svg.Locator("path.curve-estimated").GetAttributeAsync("d") ?? "", "[ML]");
        Assert.Equal(stage.GetProperty("curve").GetArrayLength(), points);

        // One labelled line per temperature limit in the envelope's byLimit list; the governing one marked.
        var byLimit = stage.GetProperty("envelope").GetProperty("byLimit").EnumerateArray().ToList();
        Assert.NotEmpty(byLimit);
        foreach (var limit in byLimit)
        {
            var ruleId = limit.GetProperty("ruleId").GetString()!;
            var group = svg.Locator($"g.limit[data-rule='{ruleId}']");
            Assert.Equal(1, await group.Locator("line.limit-line").CountAsync());
            // Labelled in words (the rule's title up to its first comma) with its limit, not by the rule id.
            var title = stage.GetProperty("findings").EnumerateArray().First(f => f.GetProperty("ruleId").GetString() == ruleId).GetProperty("title").GetString()!;
            var label = await group.Locator("text.limit-label").TextContentAsync();
            Assert.Contains(title.Split(',')[0][..Math.Min(30, title.Split(',')[0].Length)], label, StringComparison.Ordinal);
            Assert.DoesNotContain(ruleId, label, StringComparison.Ordinal);
        }

        var governing = stage.GetProperty("governing").GetProperty("ruleId").GetString()!;
        Assert.Equal(1, await svg.Locator($"g.limit[data-rule='{governing}'] line.governing-line").CountAsync());
        Assert.Equal(1, await svg.Locator("line.governing-line").CountAsync());

        // The operating point and the envelope point sit where the response puts them, in the chart's own scale:
        // the envelope's maximum discharge pressure is below the operating pressure, so its diamond is to the left.
        var operating = svg.Locator("circle.operating-point");
        Assert.Equal(1, await operating.CountAsync());
        var envelope = svg.Locator($"g.envelope[data-rule='{governing}'] polygon.envelope-point");
        Assert.Equal(1, await envelope.CountAsync());
        var cx = double.Parse(await operating.GetAttributeAsync("cx") ?? "", System.Globalization.CultureInfo.InvariantCulture);
        var ex = double.Parse((await envelope.GetAttributeAsync("points"))!.Split(' ')[0].Split(',')[0], System.Globalization.CultureInfo.InvariantCulture);
        Assert.True(ex < cx, $"envelope point x {ex} should be left of the operating point x {cx}");

        // The chart has a text equivalent naming the governing limit.
        Assert.Contains(governing, await svg.Locator("desc").TextContentAsync(), StringComparison.Ordinal);
        await svg.ScrollIntoViewIfNeededAsync();
        await page.ScreenshotAsync("05-chart-limits-operating-point");
        await svg.ScreenshotAsync(new LocatorScreenshotOptions { Path = Path.Combine(RepoPaths.Screenshots, "05-chart-only.png") });
        await page.AssertCleanAsync();
    }

    [SkippableTheory]
    [InlineData("tablet-portrait", 800, 1280, true)]
    [InlineData("tablet-landscape", 1280, 800, true)]
    [InlineData("phone", 390, 844, true)]
    public async Task Viewport_fits_without_sideways_scrolling_and_every_target_is_at_least_44_px(string name, int width, int height, bool mobile)
    {
        await using var page = await OpenAsync(width, height, mobile);
        await FillAirStageAsync(page);
        Assert.NotNull(await page.CheckAsync());

        var overflow = await page.Page.EvaluateAsync<int>("() => document.documentElement.scrollWidth - window.innerWidth");
        Assert.True(overflow <= 0, $"{name}: the page is {overflow} px wider than the viewport");

        // Buttons, fields and summaries are at least 44 px tall and wide; a radio button counts with its label.
        var small = await page.Page.EvaluateAsync<string[]>(
            """
            () => [...document.querySelectorAll('button, input, select, textarea, summary')]
              .filter(e => e.offsetParent !== null && e.type !== 'hidden')
              .map(e => ({ e, box: (e.type === 'radio' || e.type === 'checkbox') && e.closest('label') ? e.closest('label').getBoundingClientRect() : e.getBoundingClientRect() }))
              .filter(x => x.box.height < 44 || x.box.width < 44)
              .map(x => `${x.e.id || x.e.tagName} ${Math.round(x.box.width)}x${Math.round(x.box.height)}`)
            """);
        Assert.True(small.Length == 0, $"{name}: targets under 44 px: {string.Join(", ", small)}");

        // The verdict is readable without scrolling sideways and the body text is at least 16 px.
        var fontSize = await page.Page.EvaluateAsync<double>("() => parseFloat(getComputedStyle(document.body).fontSize)");
        Assert.True(fontSize >= 16, $"{name}: body text {fontSize} px");
        var verdictBox = await page.At("#result-body > .verdict").BoundingBoxAsync();
        Assert.NotNull(verdictBox);
        Assert.True(verdictBox.X >= 0 && verdictBox.X + verdictBox.Width <= width, $"{name}: verdict outside the viewport");
        await page.ScreenshotAsync($"06-viewport-{name}");
        await page.Page.EvaluateAsync("() => window.scrollTo(0, 0)");
        await page.ScreenshotAsync($"06-viewport-{name}-screen-top", fullPage: false);
        await page.At("#result-heading").ScrollIntoViewIfNeededAsync();
        await page.ScreenshotAsync($"06-viewport-{name}-screen-result", fullPage: false);
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Every_input_and_select_has_an_accessible_label()
    {
        await using var page = await OpenAsync();
        await page.SelectAsync("#gas", "new:");
        await page.At("#add-stage").ClickAsync();
        await page.At("#site-basis-barometric").CheckAsync();

        // In the DOM: each field has a <label for>, a wrapping label, aria-labelledby or aria-label with text.
        var unlabelled = await page.Page.EvaluateAsync<string[]>(
            """
            () => [...document.querySelectorAll('input, select, textarea')].filter(e => {
              const texts = [...(e.labels || [])].map(l => l.textContent.trim());
              const by = (e.getAttribute('aria-labelledby') || '').split(' ').filter(Boolean).map(id => (document.getElementById(id) || {}).textContent || '');
              return ![...texts, ...by, e.getAttribute('aria-label') || ''].some(t => t.trim().length > 0);
            }).map(e => e.id || e.name || e.outerHTML.slice(0, 80))
            """);
        Assert.True(unlabelled.Length == 0, "without a label: " + string.Join(", ", unlabelled));
        var count = await page.At("input, select, textarea").CountAsync();
        Assert.True(count > 30, $"only {count} fields found");

        // In Chromium's accessibility tree: every text box, combo box and radio button has a name.
        var tree = await page.At("body").AriaSnapshotAsync();
        var nameless = tree.Split('\n').Where(l => UnnamedControl().IsMatch(l)).ToList();
        Assert.True(nameless.Count == 0, "unnamed in the accessibility tree: " + string.Join(" | ", nameless));

        // Ids are unique, so every label points at one field.
        var duplicates = await page.Page.EvaluateAsync<string[]>(
            "() => { const ids = [...document.querySelectorAll('[id]')].map(e => e.id); return ids.filter((id, i) => ids.indexOf(id) !== i); }");
        Assert.Empty(duplicates);

        // The result region is announced: a polite live status and a heading that takes focus.
        Assert.Equal("polite", await page.At("#result-status").GetAttributeAsync("aria-live"));
        Assert.Equal("status", await page.At("#result-status").GetAttributeAsync("role"));
        Assert.Equal("-1", await page.At("#result-heading").GetAttributeAsync("tabindex"));
        await page.ScreenshotAsync("07-every-input-labelled");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Keyboard_alone_reaches_the_form_in_reading_order_and_submits_it()
    {
        await using var page = await OpenAsync();
        await FillAirStageAsync(page);
        await page.At("#asset").FocusAsync();
        var order = new List<string>();
        for (var i = 0; i < 20; i++)
        {
            await page.Page.Keyboard.PressAsync("Tab");
            order.Add(await page.Page.EvaluateAsync<string>("() => document.activeElement.id || document.activeElement.tagName"));
        }

        // The asset's history rows (links, as many as it has records) and its "Limits in force" view follow the asset
        // tag in reading order (they belong to the machine group); the humidity follows the gas and its service.
        Assert.Equal(
            ["limits-toggle", "site-id", "site-basis-elevation", "site-elevation", "site-elevation-unit", "gas", "service", "relative-humidity", "dew-point", "dew-point-unit", "stage-0-suction-pressure"],
            order.Where(id => id != "A").Take(11));
        await page.At("#check").FocusAsync();
        await page.Page.Keyboard.PressAsync("Enter");
        await page.At("#result-body .verdict").WaitForAsync();
        await page.At("#check:enabled").WaitForAsync();
        Assert.Equal("result-heading", await page.Page.EvaluateAsync<string>("() => document.activeElement.id"));
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Page_is_sent_with_the_security_headers_and_runs_under_its_policy()
    {
        await using var page = await OpenAsync();
        var headers = await page.Document!.AllHeadersAsync();
        Assert.Equal(
            "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; frame-ancestors 'none'; base-uri 'none'; form-action 'self'",
            headers["content-security-policy"]);
        Assert.Equal("nosniff", headers["x-content-type-options"]);
        Assert.Equal("no-referrer", headers["referrer-policy"]);

        // The API answers carry them too, and the page needs no key to load.
        var api = await page.Page.APIRequest.GetAsync(new Uri(page.BaseAddress, "/v1/gases").ToString());
        Assert.Contains("content-security-policy", api.Headers.Keys);
        var script = await page.Page.APIRequest.GetAsync(new Uri(page.BaseAddress, "/js/app.js").ToString());
        Assert.StartsWith("text/javascript", script.Headers["content-type"], StringComparison.Ordinal);

        // No inline script or style anywhere in the served page.
        Assert.Equal(0, await page.At("script:not([src]), [style], style").CountAsync());
        var html = await (await page.Page.APIRequest.GetAsync(page.BaseAddress.ToString())).TextAsync();
        Assert.DoesNotMatch(InlineHandler(), html);

        // The page worked under the policy: gases and catalogues loaded, and an evaluation renders.
        Assert.True(await page.At("#gas option[value='preset:dry-air']").CountAsync() == 1);
        Assert.True(await page.At("#stage-0-lubricant option[value='tarnbrook-pao-150']").CountAsync() == 0);
        await FillAirStageAsync(page);
        Assert.NotNull(await page.CheckAsync());
        Assert.True(await page.At("#stage-0-lubricant option[value='tarnbrook-pao-150']").CountAsync() == 1, "the site layer's lubricant is offered once the site is known");
        await page.ScreenshotAsync("08-security-headers");
        await page.AssertCleanAsync();
    }

    [GeneratedRegex("^\\s*- (textbox|combobox|radio|checkbox|spinbutton|listbox)( \\[[^\\]]*\\])*:?\\s*$")]
    private static partial Regex UnnamedControl();

    [GeneratedRegex("\\son[a-z]+\\s*=", RegexOptions.IgnoreCase)]
    private static partial Regex InlineHandler();
}

/// <summary>Scenarios with a host of their own: the service stopping, and API keys.</summary>
[Collection(BrowserGroup.Name)]
public sealed class PageOwnHostTests(BrowserFixture browser)
{
    [SkippableFact]
    public async Task Service_down_says_no_verdict_plainly_and_removes_the_earlier_result()
    {
        browser.Require();
        var host = PageHost.StartOpen();
        await using var page = await PageSession.OpenAsync(browser.Browser, host.BaseAddress);
        try
        {
            await page.LoadAsync();
            await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "preset:dry-air");
            await page.FillStageAsync(0, new StageEntry("0", "25", "1.5", Lubricant: "mineral-vdl"));
            Assert.NotNull(await page.CheckAsync());
            Assert.Equal(1, await page.At(".stage-result").CountAsync());
        }
        finally
        {
            await host.DisposeAsync();
        }

        // The same page, the service gone: the earlier answer must not stay on screen.
        Assert.Null(await page.CheckAsync());
        var verdict = page.At("#result-body > .verdict");
        Assert.Equal("none", await verdict.GetAttributeAsync("data-verdict"));
        var text = await verdict.InnerTextAsync();
        Assert.Contains("NO VERDICT", text, StringComparison.Ordinal);
        Assert.Contains("could not be reached", text, StringComparison.Ordinal);
        Assert.Equal(0, await page.At(".stage-result").CountAsync());
        Assert.Equal(0, await page.At(".evaluation-id").CountAsync());
        Assert.StartsWith("No verdict.", await page.At("#result-status").InnerTextAsync(), StringComparison.Ordinal);
        await page.ScreenshotAsync("09-service-down-no-verdict");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Key_is_entered_once_kept_on_the_device_sent_as_x_api_key_and_forgotten_with_one_tap()
    {
        browser.Require();
        const string key = "page-test-key-7f3a9c1e5b2d4f60a8c7e9b1d3f5a7c9";
        await using var host = PageHost.StartWithTechnicianKey("tablet-12", key);
        await using var page = await PageSession.OpenAsync(browser.Browser, host.BaseAddress, 800, 1280, isMobile: true);
        await page.LoadAsync();

        // Without the key the page loads but the service refuses its data, and the page says so.
        Assert.Contains("API key", await page.At("#gas-hint").InnerTextAsync(), StringComparison.Ordinal);
        await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "new:");
        await page.FillAsync("#composition", "N2 0.79\nO2 0.21");
        await page.FillStageAsync(0, new StageEntry("0", "25", "1.5", CompressorType: ""));
        Assert.Null(await page.CheckAsync());
        Assert.Contains("needs a valid API key", await page.At("#result-body").InnerTextAsync(), StringComparison.Ordinal);

        // Entered once: stored, the form hidden, the gases loaded.
        var sent = new List<string?>();
        page.Page.Request += (_, request) =>
        {
            if (request.Url.Contains("/v1/", StringComparison.Ordinal))
            {
                sent.Add(request.Headers.TryGetValue("x-api-key", out var value) ? value : null);
            }
        };
        await page.FillAsync("#api-key", key);
        await page.At("#key-form button[type='submit']").ClickAsync();
        await page.At("#gas option[value='preset:dry-air']").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Attached });
        Assert.Equal(key, await page.Page.EvaluateAsync<string>("() => localStorage.getItem('dischargeguard.apiKey')"));
        Assert.True(await page.At("#key-form").IsHiddenAsync());

        // A reload keeps it; the evaluation and the history are sent with it.
        await page.LoadAsync();
        await page.At("#gas option[value='preset:dry-air']").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Attached });
        await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "preset:dry-air");
        await page.FillStageAsync(0, new StageEntry("0", "25", "1.5", Lubricant: "mineral-vdl"));
        var answer = await page.CheckAsync();
        Assert.NotNull(answer);
        await page.At($"#history-list li[data-id='{answer.Value.GetProperty("id").GetString()}']").WaitForAsync();
        Assert.NotEmpty(sent);
        Assert.All(sent, value => Assert.Equal(key, value));
        await page.ScreenshotAsync("10-key-saved");

        // One tap forgets it.
        await page.At("#forget-key").ClickAsync();
        Assert.Null(await page.Page.EvaluateAsync<string?>("() => localStorage.getItem('dischargeguard.apiKey')"));
        Assert.True(await page.At("#key-form").IsVisibleAsync());
        Assert.Equal("api-key", await page.Page.EvaluateAsync<string>("() => document.activeElement.id"));
        await page.ScreenshotAsync("11-key-forgotten");
        await page.AssertCleanAsync();
    }
}
