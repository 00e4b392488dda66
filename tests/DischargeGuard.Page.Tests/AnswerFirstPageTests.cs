using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using Microsoft.Playwright;

namespace DischargeGuard.Page.Tests;

/// <summary>
/// Issue 22: the answer on the first screen (after Check and for /?evaluation={id}), no sideways scroll, a readable chart
/// with limit labels in words that cover nothing, the new inputs, history rows that open their evaluation, and the
/// printable change record (GET /v1/evaluations/{id}/report) with its PDF. Invented Marlow Fen station, asset C-204B.
/// </summary>
[Collection(BrowserGroup.Name)]
public sealed partial class AnswerFirstPageTests(BrowserFixture browser)
{
    // Lubricated reciprocating air stage with PEEK valves and FKM seals: several temperature limits apply at once, so
    // their labels must share the chart.
    // At 3 barg the governing limit is reached within the curve's range, so the answer has a highest discharge pressure.
    private static readonly StageEntry AirStage = new(
        "0", "30", "3", Lubricant: "mineral-vdl", ValveMaterial: "peek", SealMaterial: "fkm", Measured: "190", Normal: "170");

    // What must be on the first screen, without scrolling, the page's header included.
    private static readonly string[] FirstScreen =
    [
        "#result-body > .verdict", "[data-answer='governing']", "[data-answer='margin']", "[data-answer='estimated']",
        "[data-answer='max-pressure']", ".standing-caution",
    ];

    private async Task<PageSession> OpenAsync(int width, int height, Uri? host = null)
    {
        browser.Require();
        var session = await PageSession.OpenAsync(browser.Browser, host ?? browser.Host.BaseAddress, width, height, isMobile: width < 1100);
        await session.LoadAsync();
        return session;
    }

    private static async Task<JsonElement> CheckAirStageAsync(PageSession page)
    {
        await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "preset:dry-air");
        await page.SelectAsync("#service", "air");
        await page.FillStageAsync(0, AirStage);
        var answer = await page.CheckAsync();
        Assert.NotNull(answer);
        return answer.Value;
    }

    [SkippableTheory]
    [InlineData("phone", 390, 844)]
    [InlineData("tablet-portrait", 820, 1180)]
    [InlineData("landscape", 1280, 800)]
    public async Task AnswerFirst_AfterCheckAndWhenOpenedById_ShowsVerdictGoverningLimitEstimateAndPressureAsTypedOnTheFirstScreen(string name, int width, int height)
    {
        // A host of its own: no earlier records of the asset, so no trend rule changes what governs.
        browser.Require();
        await using var host = PageHost.StartOpen();
        await using var page = await OpenAsync(width, height, host.BaseAddress);
        Assert.Equal(0, await OverflowAsync(page));
        var answer = await CheckAirStageAsync(page);
        await AssertAnswerFirstAsync(page, answer, name, width, height);
        await page.ScreenshotAsync($"20-answer-first-{name}-screen", fullPage: false);
        await page.ScreenshotAsync($"20-answer-first-{name}-page");

        // The same answer opened from its id, as a history row or a shared link would.
        var id = answer.GetProperty("id").GetString()!;
        await page.Page.GotoAsync(new Uri(page.BaseAddress, $"/?evaluation={id}").ToString());
        await page.At("body[data-ready='true']").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Attached });
        await page.At("#result-body > .verdict").WaitForAsync();
        Assert.Equal(id, await page.At(".evaluation-id").InnerTextAsync());
        await AssertAnswerFirstAsync(page, answer, name + " opened by id", width, height);
        await page.ScreenshotAsync($"21-opened-by-id-{name}-screen", fullPage: false);
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task AnswerFirst_WhenARuleWithNoNumberGoverns_NamesItAndSaysNoLimitFigureOnThePageAndTheReport()
    {
        // Ammonia with a standard FKM seal: R-SEAL-FKM-AMMONIA-AMINE fails the stage with no number, while every
        // temperature limit passes. The first screen names that rule as governing and says no figure makes it acceptable,
        // never a passing limit's positive margin; the printable record says the same (and is served, not a 500).
        browser.Require();
        await using var host = PageHost.StartOpen();
        await using var page = await OpenAsync(390, 844, host.BaseAddress);
        const string body = """
            {"asset": "C-311A", "site": {"id": "marlow-fen", "barometricPressure": "101.3 kPa"},
             "gas": {"composition": {"NH3": 1}},
             "stages": [{"suction": {"pressure": "2 bara", "temperature": "20 °C"}, "discharge": {"pressure": "8 bara"},
               "efficiency": {"isentropic": 0.8},
               "equipment": {"compressorType": "recip-lubricated", "lubricant": "pao-dab", "valveMaterial": "peek", "sealMaterial": "fkm"}}]}
            """;
        var posted = await page.Page.APIRequest.PostAsync(new Uri(host.BaseAddress, "/v1/evaluations").ToString(), new APIRequestContextOptions
        {
            Headers = new Dictionary<string, string> { ["Content-Type"] = "application/json" },
            Data = body,
        });
        Assert.Equal(200, posted.Status);
        using var answer = JsonDocument.Parse(await posted.TextAsync());
        Assert.Equal("R-SEAL-FKM-AMMONIA-AMINE", answer.RootElement.GetProperty("governing").GetProperty("ruleId").GetString());
        var id = answer.RootElement.GetProperty("id").GetString()!;

        await page.Page.GotoAsync(new Uri(host.BaseAddress, $"/?evaluation={id}").ToString());
        await page.At("#result-body > .verdict").WaitForAsync();
        Assert.Equal("fail", await page.At("#result-body > .verdict").GetAttributeAsync("data-verdict"));
        Assert.Contains("R-SEAL-FKM-AMMONIA-AMINE", await page.At("[data-answer='governing'] dd").InnerTextAsync(), StringComparison.Ordinal);
        var margin = await page.At("[data-answer='margin'] dd").InnerTextAsync();
        Assert.Contains("the condition itself fails the stage", margin, StringComparison.Ordinal);
        Assert.DoesNotContain("below the limit", margin, StringComparison.Ordinal);
        Assert.Equal(0, await OverflowAsync(page));
        await page.AssertCleanAsync();

        var report = await page.Page.APIRequest.GetAsync(new Uri(host.BaseAddress, $"/v1/evaluations/{id}/report").ToString());
        Assert.Equal(200, report.Status);
        var html = await report.TextAsync();
        Assert.Contains("R-SEAL-FKM-AMMONIA-AMINE", html, StringComparison.Ordinal);
        Assert.Contains("no limit figure", html, StringComparison.Ordinal);
    }

    private static async Task AssertAnswerFirstAsync(PageSession page, JsonElement answer, string name, int width, int height)
    {
        var outside = await page.Page.EvaluateAsync<string[]>(
            """
            (selectors) => selectors.map(sel => {
              const e = document.querySelector(sel);
              if (!e) return sel + ' missing';
              const r = e.getBoundingClientRect();
              const top = r.top + window.scrollY, bottom = r.bottom + window.scrollY;
              return top >= 0 && bottom <= window.innerHeight && r.left >= 0 && r.right <= window.innerWidth
                ? null : `${sel} at ${Math.round(top)}–${Math.round(bottom)} px`;
            }).filter(Boolean)
            """, FirstScreen);
        Assert.True(outside.Length == 0, $"{name}: not on the first {width}×{height} screen: {string.Join("; ", outside)}");
        Assert.Equal(0, await OverflowAsync(page));

        // The verdict in word and shape; the governing limit in words with the answer's limit and margin.
        var verdict = answer.GetProperty("verdict").GetString()!;
        Assert.Equal(verdict, await page.At("#result-body > .verdict").GetAttributeAsync("data-verdict"));
        Assert.Equal(1, await page.At($"#result-body > .verdict svg.shape-{verdict}").CountAsync());
        var governing = answer.GetProperty("governing");
        var rule = governing.GetProperty("ruleId").GetString()!;
        var stage = answer.GetProperty("stages")[governing.GetProperty("stage").GetInt32()];
        var title = stage.GetProperty("findings").EnumerateArray().First(f => f.GetProperty("ruleId").GetString() == rule).GetProperty("title").GetString()!;
        var governingText = await page.At("[data-answer='governing'] dd").InnerTextAsync();
        Assert.Contains(title, governingText, StringComparison.Ordinal);
        var limit = stage.GetProperty("governing").GetProperty("limit");
        var marginText = await page.At("[data-answer='margin'] dd").InnerTextAsync();
        Assert.Contains(Shown(limit), marginText, StringComparison.Ordinal);
        Assert.Contains(Shown(governing.GetProperty("margin"), absolute: true), marginText, StringComparison.Ordinal);
        Assert.Contains(Shown(stage.GetProperty("dischargeTemperature").GetProperty("estimated")), await page.At("[data-answer='estimated'] dd").InnerTextAsync(), StringComparison.Ordinal);

        // The discharge pressure was typed in barg, so the highest allowed one reads in barg, as the answer gives it.
        var asTyped = stage.GetProperty("envelope").GetProperty("maxDischargePressureAsTyped");
        Assert.Equal("barg", asTyped.GetProperty("unit").GetString());
        Assert.Contains(Shown(asTyped), await page.At("[data-answer='max-pressure'] dd").InnerTextAsync(), StringComparison.Ordinal);

        // The chart below: every text at least 11 px as rendered, limit labels in words, none over another label, a
        // curve or the operating point.
        var chart = await ChartReportAsync(page, "#result-body");
        Assert.True(chart.Small.Length == 0, $"{name}: chart text under 11 px: {string.Join("; ", chart.Small)}");
        Assert.True(chart.Ids.Length == 0, $"{name}: limit labels that are rule ids: {string.Join("; ", chart.Ids)}");
        Assert.True(chart.Overlaps.Length == 0, $"{name}: chart labels overlapping: {string.Join("; ", chart.Overlaps)}");
        Assert.True(chart.Labels >= 2, $"{name}: only {chart.Labels} limit labels drawn");
    }

    [SkippableFact]
    public async Task Report_OpenedFromThePage_CarriesTheRecordInputsFindingsChartCautionsAndSignOffAndPrintsToPdf()
    {
        await using var page = await OpenAsync(390, 844);
        await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "preset:dry-air");
        await page.SelectAsync("#service", "air");
        await page.FillStageAsync(0, AirStage with { Efficiency = "0.8" });
        await page.At("#relative-humidity").FillAsync("60");
        await page.FillAsync("#stage-0-uncertainty", "0.03");
        var checkedAnswer = await page.CheckAsync();
        Assert.NotNull(checkedAnswer);
        var answer = checkedAnswer.Value;
        var id = answer.GetProperty("id").GetString()!;

        await page.At("a.report-link").ClickAsync();
        await page.At("body[data-ready='true']").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Attached });
        Assert.EndsWith($"/report.html?evaluation={id}", page.Page.Url, StringComparison.Ordinal);
        var report = page.At($"article.report[data-evaluation='{id}']");
        var text = await report.InnerTextAsync();

        // Who, where, when, which record and which rules.
        Assert.Contains("C-204B", text, StringComparison.Ordinal);
        Assert.Contains("marlow-fen", await page.At("tr:has(th:text-is('Site')) td").InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(id, await page.At("tr[data-value='id'] td").InnerTextAsync());
        Assert.Equal(answer.GetProperty("ruleSet").GetProperty("digest").GetString(), await page.At("tr[data-value='digest'] td").InnerTextAsync());
        foreach (var layer in answer.GetProperty("ruleSet").GetProperty("layers").EnumerateArray())
        {
            Assert.Contains(layer.GetProperty("name").GetString()!, await page.At("tr[data-value='layers'] td").InnerTextAsync(), StringComparison.Ordinal);
        }

        // Every input echoed as typed: gauge stays gauge; humidity and the efficiency with its uncertainty.
        Assert.Equal("0 barg", await page.At("table[data-part='stages[0]'] tr[data-path='suction.pressure'] td").InnerTextAsync());
        Assert.Equal("3 barg", await page.At("table[data-part='stages[0]'] tr[data-path='discharge.pressure'] td").InnerTextAsync());
        Assert.Equal("0.6", await page.At("tr[data-path='gas.relativeHumidity'] td").InnerTextAsync());
        Assert.Equal("dry-air", await page.At("tr[data-path='gas.preset'] td").InnerTextAsync());
        Assert.Equal("0.03", await page.At("table[data-part='stages[0]'] tr[data-path='efficiency.uncertainty'] td").InnerTextAsync());
        Assert.Equal("peek", await page.At("table[data-part='stages[0]'] tr[data-path='equipment.valveMaterial'] td").InnerTextAsync());
        Assert.Contains("H2O", await page.At("tr[data-value='composition'] td").InnerTextAsync(), StringComparison.Ordinal);

        // Per-stage results and every finding with its limit, margin and basis, as the answer gives them.
        var stage = answer.GetProperty("stages")[0];
        Assert.Contains(Shown(stage.GetProperty("dischargeTemperature").GetProperty("estimated")), await page.At("section.stage tr[data-value='estimated'] td").InnerTextAsync(), StringComparison.Ordinal);
        foreach (var finding in stage.GetProperty("findings").EnumerateArray())
        {
            var item = page.At($"section.stage li.finding[data-rule='{finding.GetProperty("ruleId").GetString()}']");
            var words = await item.InnerTextAsync();
            Assert.Contains(finding.GetProperty("basis").GetString()!, words, StringComparison.Ordinal);
            if (finding.TryGetProperty("margin", out var margin))
            {
                Assert.Contains("margin " + Shown(margin), words, StringComparison.Ordinal);
            }
        }

        // The envelope chart inline, readable on the phone, labels in words and clear of each other.
        Assert.Equal(1, await report.Locator("svg.chart-svg path.curve-estimated").CountAsync());
        var chart = await ChartReportAsync(page, "article.report");
        Assert.True(chart.Small.Length == 0, "report chart text under 11 px: " + string.Join("; ", chart.Small));
        Assert.True(chart.Ids.Length == 0, "report limit labels that are rule ids: " + string.Join("; ", chart.Ids));
        Assert.True(chart.Overlaps.Length == 0, "report chart labels overlapping: " + string.Join("; ", chart.Overlaps));

        // The cautions: the standing one and every one the answer carried; then the sign-off block.
        var standing = await report.Locator(".standing-caution").InnerTextAsync();
        Assert.Contains("manufacturer's limits", standing, StringComparison.Ordinal);
        Assert.Contains("local codes", standing, StringComparison.Ordinal);
        Assert.Contains("licensed engineer", standing, StringComparison.Ordinal);
        var cautions = answer.GetProperty("cautions").EnumerateArray().Select(c => c.GetString()!).ToList();
        Assert.Equal(cautions, await report.Locator("ul.cautions li").AllInnerTextsAsync());
        var signOff = await report.Locator(".sign-off").InnerTextAsync();
        foreach (var words in new[] { "Prepared by", "Reviewed by (licensed engineer)", "Approved by", "Date", "Signature" })
        {
            Assert.Contains(words, signOff, StringComparison.Ordinal);
        }

        Assert.Equal(0, await OverflowAsync(page));
        await page.ScreenshotAsync("22-report-phone");

        // Printed: a PDF from the browser's own print path, kept beside the screenshots.
        Directory.CreateDirectory(RepoPaths.Screenshots);
        var pdf = await page.Page.PdfAsync(new PagePdfOptions { Path = Path.Combine(RepoPaths.Screenshots, "23-report.pdf"), Format = "A4", PrintBackground = true });
        Assert.Equal("%PDF-", System.Text.Encoding.ASCII.GetString(pdf, 0, 5));
        Assert.True(pdf.Length > 20_000, $"the PDF is only {pdf.Length} bytes");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Report_WithKeys_IsFetchedWithTheSavedKeyNeverInAUrlAndHasTheRecordsAccessRulesAndPolicy()
    {
        browser.Require();
        const string key = "page-report-key-2c4e6a8b0d1f3a5c7e9b1d3f5a7c9e0b";
        await using var host = PageHost.StartWithTechnicianKey("tablet-31", key);
        await using var page = await OpenAsync(820, 1180, host.BaseAddress);
        var urls = new List<string>();
        page.Page.Request += (_, request) => urls.Add(request.Url);
        await page.FillAsync("#api-key", key);
        await page.At("#key-form button[type='submit']").ClickAsync();
        await page.At("#gas option[value='preset:dry-air']").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Attached });
        var answer = await CheckAirStageAsync(page);
        var id = answer.GetProperty("id").GetString()!;
        await page.At("a.report-link").ClickAsync();
        await page.At($"article.report[data-evaluation='{id}']").WaitForAsync();
        Assert.DoesNotContain(urls, u => u.Contains(key, StringComparison.Ordinal));

        // The endpoint itself: no key 401, the key 200 as HTML under the same policy as the record.
        var reportUrl = new Uri(host.BaseAddress, $"/v1/evaluations/{id}/report").ToString();
        var refused = await page.Page.APIRequest.GetAsync(reportUrl);
        Assert.Equal(401, refused.Status);
        var served = await page.Page.APIRequest.GetAsync(reportUrl, new APIRequestContextOptions { Headers = new Dictionary<string, string> { ["X-Api-Key"] = key } });
        Assert.Equal(200, served.Status);
        Assert.StartsWith("text/html", served.Headers["content-type"], StringComparison.Ordinal);
        var record = await page.Page.APIRequest.GetAsync(new Uri(host.BaseAddress, $"/v1/evaluations/{id}").ToString(), new APIRequestContextOptions { Headers = new Dictionary<string, string> { ["X-Api-Key"] = key } });
        Assert.Equal(record.Headers["content-security-policy"], served.Headers["content-security-policy"]);
        var html = await served.TextAsync();
        Assert.DoesNotContain("<script", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain(" style=", html, StringComparison.OrdinalIgnoreCase);
        var missing = await page.Page.APIRequest.GetAsync(new Uri(host.BaseAddress, $"/v1/evaluations/{Guid.NewGuid()}/report").ToString(), new APIRequestContextOptions { Headers = new Dictionary<string, string> { ["X-Api-Key"] = key } });
        Assert.Equal(404, missing.Status);
        await page.ScreenshotAsync("24-report-tablet");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task History_RowsShowLocalTimeVerdictT2AndMargin_AndARowOpensItsEvaluation()
    {
        browser.Require();
        await using var host = PageHost.StartOpen();
        await using var page = await OpenAsync(390, 844, host.BaseAddress);
        var first = await CheckAirStageAsync(page);
        await page.FillAsync("#stage-0-discharge-pressure", "2.5");
        var second = await page.CheckAsync();
        Assert.NotNull(second);

        var firstId = first.GetProperty("id").GetString()!;
        var row = page.At($"#history-list li[data-id='{firstId}']");
        await row.Locator(".history-numbers[data-t2]").WaitForAsync(new LocatorWaitForOptions { State = WaitForSelectorState.Attached });
        Assert.Matches(LocalTime(), await row.Locator(".history-time").InnerTextAsync());
        Assert.Equal(first.GetProperty("verdict").GetString()!.ToUpperInvariant(), await row.Locator(".history-verdict").InnerTextAsync());
        var numbers = await row.Locator(".history-numbers").InnerTextAsync();
        var t2 = first.GetProperty("stages")[0].GetProperty("dischargeTemperature").GetProperty("estimated").GetProperty("value").GetDouble();
        Assert.Contains("T2 " + t2.ToString(Math.Abs(t2) >= 100 ? "0" : "0.0", CultureInfo.InvariantCulture), numbers, StringComparison.Ordinal);
        Assert.Contains("margin", numbers, StringComparison.Ordinal);
        Assert.True((await row.Locator("a").BoundingBoxAsync())!.Height >= 44);
        await page.ScreenshotAsync("25-history-rows");

        // A row opens its evaluation, answer first.
        await row.Locator("a").ClickAsync();
        await page.At($".evaluation-id[data-id='{firstId}']").WaitForAsync();
        Assert.EndsWith($"?evaluation={firstId}", page.Page.Url, StringComparison.Ordinal);
        Assert.Contains(firstId, await page.At("#result-status").InnerTextAsync(), StringComparison.Ordinal);
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Inputs_LubricantShowsItsClassFirst_AndTheNewInputsReachTheRequest()
    {
        await using var page = await OpenAsync(390, 844);
        await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "preset:dry-air");

        // The class and its rated temperature lead, so VDL (220 °C) and VBL (140 °C) differ in a closed select.
        Assert.StartsWith("VDL · 220 °C", await page.At("#stage-0-lubricant option[value='mineral-vdl']").InnerTextAsync(), StringComparison.Ordinal);
        Assert.StartsWith("VBL · 140 °C", await page.At("#stage-0-lubricant option[value='mineral-vbl']").InnerTextAsync(), StringComparison.Ordinal);
        await page.SelectAsync("#stage-0-lubricant", "mineral-vdl");
        var shown = await page.Page.EvaluateAsync<double[]>("() => { const s = document.querySelector('#stage-0-lubricant'); return [s.getBoundingClientRect().right, window.innerWidth]; }");
        Assert.True(shown[0] <= shown[1], "the lubricant select is wider than the phone");

        // Flow, a second stage behind an intercooler, materials, design temperature and calibration are sent as the contract spells them.
        await page.FillStageAsync(0, new StageEntry("0", "25", "3", Lubricant: "mineral-vdl"));
        await page.FillAsync("#flow", "900");
        await page.At("#add-stage").ClickAsync();
        await page.At("#stages fieldset.stage[data-index='1'] details.intercooler summary").ClickAsync();
        await page.FillAsync("#stage-1-ic-outlet", "35");
        await page.FillAsync("#stage-1-ic-drop", "20");
        await page.FillAsync("#stage-1-discharge-pressure", "9");
        await page.At("#stages fieldset.stage[data-index='1'] details.more:has(#stage-1-design-temperature) summary").ClickAsync();
        await page.SelectAsync("#stage-1-discharge-material", "carbon-steel");
        await page.FillAsync("#stage-1-design-temperature", "175");
        var posted = page.Page.WaitForRequestAsync(r => r.Url.Contains("/v1/evaluations?curve=true", StringComparison.Ordinal));
        var answer = await page.CheckAsync();
        var request = JsonDocument.Parse((await posted).PostData!).RootElement;
        Assert.Equal("900 kg/h", request.GetProperty("flow").GetProperty("mass").GetString());
        var second = request.GetProperty("stages")[1];
        Assert.False(second.TryGetProperty("suction", out _));
        Assert.Equal("35 °C", second.GetProperty("intercooler").GetProperty("outletTemperature").GetString());
        Assert.Equal("20 kPa", second.GetProperty("intercooler").GetProperty("pressureDrop").GetString());
        Assert.Equal("carbon-steel", second.GetProperty("equipment").GetProperty("dischargeMaterial").GetString());
        Assert.Equal("175 °C", second.GetProperty("equipment").GetProperty("designTemperature").GetString());
        Assert.NotNull(answer);
        Assert.Equal(2, answer.Value.GetProperty("stages").GetArrayLength());
        await page.ScreenshotAsync("26-new-inputs");
        await page.AssertCleanAsync();
    }

    private sealed record ChartCheck(string[] Small, string[] Ids, string[] Overlaps, int Labels);

    private static async Task<ChartCheck> ChartReportAsync(PageSession page, string scope)
    {
        var result = await page.Page.EvaluateAsync<JsonElement>(
            """
            (scope) => {
              const out = { small: [], ids: [], overlaps: [], labels: 0 };
              const hit = (a, b) => a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom;
              for (const svg of document.querySelectorAll(scope + ' svg.chart-svg')) {
                const scale = svg.getBoundingClientRect().width / svg.viewBox.baseVal.width;
                for (const t of svg.querySelectorAll('text')) {
                  const px = parseFloat(getComputedStyle(t).fontSize) * scale;
                  if (px < 11) out.small.push(`${t.textContent} ${px.toFixed(1)} px`);
                }
                const labels = [...svg.querySelectorAll('.limit-label')].map(t => ({ t: t.textContent, r: t.getBoundingClientRect() }));
                out.labels += labels.length;
                for (const l of labels) if (/^(▶ )?R-/.test(l.t)) out.ids.push(l.t);
                for (let i = 0; i < labels.length; i++) for (let j = i + 1; j < labels.length; j++) if (hit(labels[i].r, labels[j].r)) out.overlaps.push(`${labels[i].t} / ${labels[j].t}`);
                for (const p of svg.querySelectorAll('.operating-point, .envelope-point')) for (const l of labels) if (hit(l.r, p.getBoundingClientRect())) out.overlaps.push(`${l.t} / ${p.getAttribute('class')}`);
                for (const path of svg.querySelectorAll('path.curve-estimated, path.curve-isentropic')) {
                  const n = path.getTotalLength(), m = path.getScreenCTM();
                  for (let k = 0; k <= 300; k++) {
                    const p = path.getPointAtLength(n * k / 300).matrixTransform(m);
                    for (const l of labels) if (p.x > l.r.left && p.x < l.r.right && p.y > l.r.top && p.y < l.r.bottom) out.overlaps.push(`${l.t} / ${path.getAttribute('class')}`);
                  }
                }
              }
              out.overlaps = [...new Set(out.overlaps)];
              return out;
            }
            """, scope);
        string[] Strings(string name) => result.GetProperty(name).EnumerateArray().Select(e => e.GetString()!).ToArray();
        return new ChartCheck(Strings("small"), Strings("ids"), Strings("overlaps"), result.GetProperty("labels").GetInt32());
    }

    private static Task<int> OverflowAsync(PageSession page) =>
        page.Page.EvaluateAsync<int>("() => Math.max(0, document.documentElement.scrollWidth - window.innerWidth)");

    // The page's own number format: one decimal below 100, none from 100 (render.js formatNumber uses 1000; both agree
    // to the digits compared here, which are the answer's rounded value).
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

    [GeneratedRegex("^\\d{4}-\\d\\d-\\d\\d \\d\\d:\\d\\d \\(UTC[+−]\\d\\d:\\d\\d\\)$")]
    private static partial Regex LocalTime();
}
