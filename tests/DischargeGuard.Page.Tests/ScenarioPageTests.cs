using System.Globalization;
using System.Text.Json;
using Microsoft.Playwright;

namespace DischargeGuard.Page.Tests;

/// <summary>
/// The "what if" inputs: a later stage fed directly (its cooler bypassed), the scenarios a technician adds (hot day,
/// fouled cooler, cooling-water failure, recycle), the request they make, and the scenario table and governing case in
/// the answer. The page computes nothing: every figure checked here is the service's own answer, as the page must show
/// it. Invented Marlow Fen station, asset C-204B.
/// </summary>
[Collection(BrowserGroup.Name)]
public sealed class ScenarioPageTests(BrowserFixture browser)
{
    // The first stage of a two-stage lubricated air train; the second is filled behind its intercooler.
    private static readonly StageEntry FirstStage = new("0", "30", "1.2", Efficiency: "0.80", Lubricant: "mineral-vdl");

    private async Task<PageSession> OpenAsync(int width, int height, Uri? host = null)
    {
        browser.Require();
        var session = await PageSession.OpenAsync(browser.Browser, host ?? browser.Host.BaseAddress, width, height, isMobile: width < 1100);
        await session.LoadAsync();
        return session;
    }

    /// <summary>Two stages: the second behind an intercooler with a 10 K approach over 28 °C water and a 2 % drop.</summary>
    private static async Task FillTwoStageTrainAsync(PageSession page)
    {
        await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "preset:dry-air");
        await page.SelectAsync("#service", "air");
        await page.FillStageAsync(0, FirstStage);
        await page.At("#add-stage").ClickAsync();
        await page.At("#stages fieldset.stage[data-index='1'] details.intercooler summary").ClickAsync();
        await page.FillAsync("#stage-1-ic-approach", "10");
        await page.FillAsync("#stage-1-ic-coolant", "28");
        await page.FillAsync("#stage-1-ic-drop", "2");
        await page.SelectAsync("#stage-1-ic-drop-unit", "%");
        await page.FillAsync("#stage-1-discharge-pressure", "4");
        await page.FillAsync("#stage-1-efficiency", "0.80");
    }

    private static async Task AddScenarioAsync(PageSession page, string kind)
    {
        await page.SelectAsync("#scenario-kind", kind);
        await page.At("#add-scenario").ClickAsync();
    }

    /// <summary>Checks and returns the request the page posted with the answer it got.</summary>
    private static async Task<(JsonElement Request, JsonElement? Answer)> CheckAsync(PageSession page)
    {
        var posted = page.Page.WaitForRequestAsync(r => r.Url.Contains("/v1/evaluations?curve=true", StringComparison.Ordinal));
        var answer = await page.CheckAsync();
        var request = JsonDocument.Parse((await posted).PostData!).RootElement.Clone();
        return (request, answer);
    }

    [SkippableFact]
    public async Task Scenarios_AddedOnAPhone_AreSentAsTheContractSpellsThem_AndTheTableShowsEachVerdictRuleAndMargin()
    {
        // A host of its own: no earlier records of the asset, so no trend rule changes what governs.
        browser.Require();
        await using var host = PageHost.StartOpen();
        await using var page = await OpenAsync(390, 844, host.BaseAddress);
        await FillTwoStageTrainAsync(page);

        await AddScenarioAsync(page, "hotDay");
        await page.FillAsync("#scenario-0-suction-rise", "12");
        await page.FillAsync("#scenario-0-coolant-rise", "6");
        await AddScenarioAsync(page, "fouledCooler");
        await page.SelectAsync("#scenario-1-fouled-stage", "1");
        await page.FillAsync("#scenario-1-approach-rise", "8");
        await AddScenarioAsync(page, "coolingWaterFailure");
        await page.SelectAsync("#scenario-2-failed-stage", "1");
        await AddScenarioAsync(page, "recycle");
        await page.FillAsync("#scenario-3-recycle-fraction", "25");
        await page.FillAsync("#scenario-3-recycle-cooled", "45");

        // Every scenario field has a label in Chromium's sense (its own label or an aria-label naming the scenario).
        var unlabelled = await page.Page.EvaluateAsync<string[]>(
            "() => [...document.querySelectorAll('#scenario-list input, #scenario-list select')]"
            + ".filter(e => e.labels.length === 0 && !e.getAttribute('aria-label')).map(e => e.id)");
        Assert.Empty(unlabelled);
        Assert.Equal(0, await OverflowAsync(page));

        var (request, answer) = await CheckAsync(page);

        // Request: names, zero-based stages, rises as K differences, the recycle share typed in % sent as a fraction.
        var scenarios = request.GetProperty("scenarios");
        Assert.Equal(4, scenarios.GetArrayLength());
        Assert.Equal(
            """{"name":"hot-day","hotDay":{"suctionTemperatureRise":"12 K","coolantTemperatureRise":"6 K"}}""",
            scenarios[0].GetRawText());
        Assert.Equal("""{"name":"fouled-cooler","fouledCooler":{"stages":[1],"approachRise":"8 K"}}""", scenarios[1].GetRawText());
        Assert.Equal("""{"name":"cooling-water-failure","coolingWaterFailure":{"stages":[1]}}""", scenarios[2].GetRawText());
        Assert.Equal("""{"name":"recycle","recycle":{"fraction":0.25,"cooledTo":"45 °C"}}""", scenarios[3].GetRawText());
        Assert.False(request.GetProperty("stages")[1].TryGetProperty("fedDirectly", out _));

        // Answer: the table has the base case and one row per scenario, each with the answer's verdict, rule, stage and margin.
        Assert.NotNull(answer);
        var body = answer.Value;
        var answered = body.GetProperty("scenarios");
        Assert.Equal(4, answered.GetArrayLength());
        Assert.Equal(5, await page.At(".scenario-table tbody tr").CountAsync());
        Assert.Equal(Word(body.GetProperty("baseVerdict").GetString()!), await page.At(".scenario-table tr[data-scenario=''] .tag").InnerTextAsync());
        foreach (var scenario in answered.EnumerateArray())
        {
            var name = scenario.GetProperty("name").GetString()!;
            var row = page.At($".scenario-table tr[data-scenario='{name}']");
            Assert.Equal(Word(scenario.GetProperty("verdict").GetString()!), await row.Locator(".tag").InnerTextAsync());
            var governing = scenario.GetProperty("governing");
            var rule = await row.Locator("[data-value='rule']").InnerTextAsync();
            Assert.Contains(governing.GetProperty("ruleId").GetString()!, rule, StringComparison.Ordinal);
            Assert.Contains($"stage {governing.GetProperty("stage").GetInt32() + 1}", rule, StringComparison.Ordinal);
            var margin = governing.GetProperty("margin");
            var marginText = await row.Locator("[data-value='margin']").InnerTextAsync();
            Assert.Contains(Shown(margin, absolute: true), marginText, StringComparison.Ordinal);
            Assert.Contains(margin.GetProperty("value").GetDouble() < 0 ? "beyond" : "below", marginText, StringComparison.Ordinal);
            Assert.Contains(scenario.GetProperty("changes")[0].GetString()!, await page.At($".scenario-changes li[data-scenario='{name}']").InnerTextAsync(), StringComparison.Ordinal);
        }

        // The top-level governing case is named, in the table and on the first screen, with the verdict of the worst case.
        var top = body.GetProperty("governing");
        var governingName = top.TryGetProperty("scenario", out var s) ? s.GetString()! : "";
        Assert.Equal(1, await page.At(".scenario-table tr[data-governing='true']").CountAsync());
        Assert.Equal(governingName, await page.At(".scenario-table tr[data-governing='true']").GetAttributeAsync("data-scenario"));
        Assert.Contains("governs", await page.At(".scenario-table tr[data-governing='true'] th").InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(body.GetProperty("verdict").GetString(), await page.At("#result-body > .verdict").GetAttributeAsync("data-verdict"));
        var caseText = await page.At("[data-answer='governing'] dt").InnerTextAsync();
        Assert.Contains(governingName.Length > 0 ? $"scenario {governingName}" : "base case", caseText, StringComparison.Ordinal);

        // The answer-first lines follow the governing case: its stage's estimate and its margin, not the base case's.
        if (governingName.Length > 0)
        {
            var held = answered.EnumerateArray().First(x => x.GetProperty("name").GetString() == governingName);
            var stage = held.GetProperty("stages")[top.GetProperty("stage").GetInt32()];
            Assert.Contains(Shown(stage.GetProperty("dischargeTemperature").GetProperty("estimated")), await page.At("[data-answer='estimated'] dd").InnerTextAsync(), StringComparison.Ordinal);
            Assert.Contains(Shown(top.GetProperty("margin"), absolute: true), await page.At("[data-answer='margin'] dd").InnerTextAsync(), StringComparison.Ordinal);
            Assert.Contains(top.GetProperty("ruleId").GetString()!, await page.At("[data-answer='governing'] dd").InnerTextAsync(), StringComparison.Ordinal);
        }

        // Answer first still holds at 390×844 with scenarios: verdict, governing case and limit, margin and estimate on the first screen.
        var outside = await page.Page.EvaluateAsync<string[]>(
            """
            (selectors) => selectors.map(sel => {
              const e = document.querySelector(sel);
              if (!e) return sel + ' missing';
              const r = e.getBoundingClientRect();
              const top = r.top + window.scrollY, bottom = r.bottom + window.scrollY;
              return top >= 0 && bottom <= window.innerHeight && r.left >= 0 && r.right <= window.innerWidth ? null : `${sel} at ${Math.round(top)}–${Math.round(bottom)} px`;
            }).filter(Boolean)
            """,
            new[] { "#result-body > .verdict", "[data-answer='governing']", "[data-answer='margin']", "[data-answer='estimated']", ".standing-caution" });
        await page.ScreenshotAsync("27-scenarios-phone-screen", fullPage: false);
        Assert.True(outside.Length == 0, "not on the first 390×844 screen: " + string.Join("; ", outside));
        Assert.Equal(0, await OverflowAsync(page));

        // The table stays inside the result box (which clips rather than scrolls the page sideways).
        var spill = await page.Page.EvaluateAsync<double>(
            "() => document.querySelector('.scenario-table').getBoundingClientRect().right - document.querySelector('#result-body').getBoundingClientRect().right");
        Assert.True(spill <= 0, $"the scenario table runs {spill} px past the result");
        await page.At(".scenario-results").ScrollIntoViewIfNeededAsync();
        await page.ScreenshotAsync("28-scenario-table-phone", fullPage: false);
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task FedDirectly_OnALaterStage_IsSentWithoutSuctionOrCoolerTemperatures_AndOnlyLaterStagesOfferIt()
    {
        await using var page = await OpenAsync(390, 844);
        await FillTwoStageTrainAsync(page);
        Assert.Equal(0, await page.At("#stage-0-fed-directly").CountAsync());
        await page.At("label[for='stage-1-fed-directly']").ClickAsync();
        Assert.True(await page.At("#stage-1-fed-directly").IsCheckedAsync());

        var (request, answer) = await CheckAsync(page);
        var second = request.GetProperty("stages")[1];
        Assert.True(second.GetProperty("fedDirectly").GetBoolean());
        Assert.False(second.TryGetProperty("suction", out _));
        // The cooler's pressure drop still applies; its temperatures are not used, so not sent.
        Assert.Equal("""{"pressureDrop":"2 %"}""", second.GetProperty("intercooler").GetRawText());
        Assert.False(request.TryGetProperty("scenarios", out _));
        Assert.False(request.GetProperty("stages")[0].TryGetProperty("fedDirectly", out _));

        // The answer's cautions (among them the one for a stage fed directly) are all on the page.
        Assert.NotNull(answer);
        var cautions = await page.At("#result-body .cautions").InnerTextAsync();
        foreach (var caution in answer.Value.GetProperty("cautions").EnumerateArray())
        {
            Assert.Contains(caution.GetString()!, cautions, StringComparison.Ordinal);
        }

        Assert.Contains(answer.Value.GetProperty("cautions").EnumerateArray(), c => c.GetString()!.Contains("fed directly", StringComparison.Ordinal));
        Assert.Equal(0, await page.At(".scenario-results").CountAsync());
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Scenario_RemovedRowsRenumber_AndAServiceErrorIsShownBesideTheScenarioField()
    {
        await using var page = await OpenAsync(390, 844);
        await FillTwoStageTrainAsync(page);
        await AddScenarioAsync(page, "coolingWaterFailure");
        await AddScenarioAsync(page, "recycle");
        Assert.Equal("Scenario 2: Recycle", await page.At("#scenario-list fieldset.scenario[data-index='1'] legend").InnerTextAsync());

        // Removing the first row makes the recycle row scenarios[0]: its ids and request paths follow.
        await page.At("#scenario-list fieldset.scenario[data-index='0'] .remove-scenario").ClickAsync();
        Assert.Equal("add-scenario", await page.Page.EvaluateAsync<string>("() => document.activeElement.id"));
        Assert.Equal(1, await page.At("#scenario-list fieldset.scenario").CountAsync());
        Assert.Equal("scenarios[0].recycle.fraction", await page.At("#scenario-0-recycle-fraction").Locator("xpath=..").GetAttributeAsync("data-path"));

        // 120 % is outside the contract's [0, 1): the service refuses it at scenarios[0].recycle.fraction, and the
        // page puts the message beside that field (docs/scenarios.md names this path).
        await page.FillAsync("#scenario-0-recycle-fraction", "120");
        var (request, answer) = await CheckAsync(page);
        Assert.Null(answer);
        Assert.Equal(1.2, request.GetProperty("scenarios")[0].GetProperty("recycle").GetProperty("fraction").GetDouble(), 9);
        Assert.Equal("recycle", request.GetProperty("scenarios")[0].GetProperty("name").GetString());
        Assert.Equal("none", await page.At("#result-body > .verdict").GetAttributeAsync("data-verdict"));
        Assert.Equal("true", await page.At("#scenario-0-recycle-fraction").GetAttributeAsync("aria-invalid"));
        Assert.Equal(1, await page.At("[data-path='scenarios[0].recycle.fraction'] .field-error").CountAsync());
        await page.At("#error-summary").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Visible });
        await page.ScreenshotAsync("29-scenario-error");
        await page.AssertCleanAsync();
    }

    private static Task<int> OverflowAsync(PageSession page) =>
        page.Page.EvaluateAsync<int>("() => document.documentElement.scrollWidth - window.innerWidth");

    private static string Word(string verdict) => verdict switch
    {
        "pass" => "PASS",
        "review" => "REVIEW",
        "fail" => "FAIL",
        _ => "NO VERDICT",
    };

    /// <summary>A quantity as the page prints it (render.js formatNumber: 1 decimal from 1 up, 3 significant digits below).</summary>
    private static string Shown(JsonElement quantity, bool absolute = false)
    {
        var value = quantity.GetProperty("value").GetDouble();
        value = absolute ? Math.Abs(value) : value;
        var text = Math.Abs(value) >= 1000 ? value.ToString("0", CultureInfo.InvariantCulture)
            : Math.Abs(value) >= 1 ? value.ToString("0.0", CultureInfo.InvariantCulture)
            : value.ToString("G3", CultureInfo.InvariantCulture);
        var unit = quantity.GetProperty("unit").GetString();
        return unit == "1" ? text : text + " " + unit;
    }
}
