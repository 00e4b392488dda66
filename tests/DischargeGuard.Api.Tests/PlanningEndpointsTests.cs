using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Api.Endpoints;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The planners' read and re-check endpoints (CSV export, replay), the admin's retention run, and the trend finding
/// from an asset's history. Each test uses its own invented asset tag so tests sharing the host do not see each other.
/// </summary>
public abstract class PlanningEndpointsContract(ServiceFactory fixture)
{
    private ServiceFactory factory
    {
        get
        {
            fixture.Require();
            return fixture;
        }
    }

    // ---- Export ----

    [SkippableFact]
    public async Task Export_WhenAnAssetHasATrainAndAnImperialAnswer_WritesOneMetricRowPerStageUnderTheUnitHeader()
    {
        var train = Requests.Minimal("1 bara", "35 °C", "3 bara");
        train["asset"] = "K-601A";
        ((JsonArray)train["stages"]!).Add(new JsonObject
        {
            ["intercooler"] = new JsonObject { ["approach"] = "10 K", ["coolantTemperature"] = "30 °C" },
            ["discharge"] = new JsonObject { ["pressure"] = "8.5 bara" },
            ["efficiency"] = new JsonObject { ["isentropic"] = 0.8 },
        });
        var metric = await EvaluateAsync(train);
        var imperialRequest = train.DeepClone().AsObject();
        imperialRequest["outputUnits"] = "imperial";
        var imperial = await EvaluateAsync(imperialRequest);

        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri("/v1/evaluations/export?asset=K-601A", UriKind.Relative));

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("text/csv", response.Content.Headers.ContentType?.MediaType);
        Assert.StartsWith("attachment;", response.Content.Headers.ContentDisposition?.ToString(), StringComparison.Ordinal);
        var lines = (await response.Content.ReadAsStringAsync()).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(string.Join(',', ExportApi.Header), lines[0]);
        Assert.Equal(5, lines.Length); // header + 2 evaluations × 2 stages
        var rows = lines.Skip(1).Select(l => l.Split(',')).ToArray();
        var column = (string name) => Array.IndexOf(ExportApi.Header, name);

        // Newest first: the imperial answer's rows, then the metric one's; both in metric units, so they agree.
        Assert.Equal(imperial.At("id").GetGuid().ToString(), rows[0][column("evaluation_id")]);
        Assert.Equal(metric.At("id").GetGuid().ToString(), rows[2][column("evaluation_id")]);
        Assert.Equal(["0", "1", "0", "1"], rows.Select(r => r[column("stage_index")]));
        foreach (var name in new[] { "estimated_discharge_temperature_degC", "discharge_pressure_kPa_abs", "isentropic_discharge_temperature_degC" })
        {
            for (var stage = 0; stage < 2; stage++)
            {
                var fromImperial = double.Parse(rows[stage][column(name)], CultureInfo.InvariantCulture);
                var fromMetric = double.Parse(rows[2 + stage][column(name)], CultureInfo.InvariantCulture);
                AssertEx.Near(fromMetric, fromImperial, 0.01, $"{name} stage {stage}");
            }
        }

        var estimated = metric.At("stages[1].dischargeTemperature.estimated.value").GetDouble();
        AssertEx.Near(estimated, double.Parse(rows[3][column("estimated_discharge_temperature_degC")], CultureInfo.InvariantCulture), 0.0005, "stage 2 estimate");
    }

    [SkippableFact]
    public async Task Export_WhenFilterIsInvalid_Answers400NamingIt()
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri("/v1/evaluations/export?verdict=maybe", UriKind.Relative));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("pass", AssertEx.Error(problem, "verdict"), StringComparison.Ordinal);
    }

    [SkippableTheory]
    [InlineData("=HYPERLINK(\"http://x\")", "'=HYPERLINK(\"http://x\")")]
    [InlineData("+1+1", "'+1+1")]
    [InlineData("-2+3", "'-2+3")]
    [InlineData("@SUM(A1)", "'@SUM(A1)")]
    [InlineData("\tcmd", "'\tcmd")]
    [InlineData("K-101A", "K-101A")]
    public void Neutralise_WhenTextWouldStartAFormula_PrefixesAnApostrophe(string cell, string expected) =>
        Assert.Equal(expected, ExportApi.Neutralise(cell));

    [SkippableFact]
    public void AppendRow_WhenCellsHoldCommasQuotesAndFormulas_QuotesAndNeutralisesTextButNotNumbers()
    {
        var sb = new StringBuilder();

        ExportApi.AppendRow(sb, ["a,b", "say \"hi\"", "=1+1", "-3.25", "12"], header: false);

        Assert.Equal("\"a,b\",\"say \"\"hi\"\"\",'=1+1,-3.25,12\r\n", sb.ToString());
    }

    // ---- Replay ----

    [SkippableFact]
    public async Task Replay_WhenRulesAreUnchanged_RecordsANewEvaluationThatNamesTheOriginalAndReportsNoChange()
    {
        var request = Requests.PassingStage();
        request["asset"] = "K-602A";
        var original = await EvaluateAsync(request);
        var before = await CountAsync("K-602A");

        var (response, body) = await PostAsync($"/v1/evaluations/{original.At("id").GetGuid()}/replay", null);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal(original.At("id").GetGuid(), body.At("original.id").GetGuid());
        Assert.False(body.At("changes.changed").GetBoolean(), body.At("changes").ToString());
        Assert.Equal(0, body.At("changes.layers").GetArrayLength());
        Assert.Equal(JsonValueKind.Null, body.At("changes.verdictMovedBy").ValueKind);
        Assert.Equal(original.At("verdict").GetString(), body.At("replay.verdict").GetString());
        var replayId = body.At("replay.id").GetGuid();
        Assert.NotEqual(original.At("id").GetGuid(), replayId);
        Assert.Equal(before + 1, await CountAsync("K-602A"));

        var (_, stored) = await factory.GetJsonAsync($"/v1/evaluations/{replayId}");
        Assert.Equal(original.At("id").GetGuid(), stored.At("replayOf").GetGuid());
        Assert.Equal(body.At("replay").GetRawText(), stored.At("response").GetRawText());
    }

    [SkippableFact]
    public async Task Replay_WhenAnAssetLayerNowTightensTheLimit_ReportsTheNewVerdictGoverningRuleAndMargin()
    {
        var request = Requests.PassingStage();
        request["asset"] = "K-603A";
        var original = await EvaluateAsync(request);
        Assert.Equal("pass", original.At("verdict").GetString());

        // An asset layer written after the original evaluation: the air rule's limit drops below the estimate.
        var layer = Path.Combine(factory.RulesDirectory, "assets", "K-603A.yaml");
        await File.WriteAllTextAsync(layer, """
            schemaVersion: 1
            layer:
              kind: asset
              id: K-603A
              site: kestrel-ridge
              title: K-603A replay test layer (invented)
            overrides:
              - rule: R-AIR-RECIP
                limit: 120 °C
                warningBand: 10 K
            """);
        try
        {
            var (reload, reloaded) = await PostAsync("/v1/rules/reload", null);
            Assert.True(reload.StatusCode == HttpStatusCode.OK, reloaded.ToString());

            var (response, body) = await PostAsync($"/v1/evaluations/{original.At("id").GetGuid()}/replay", null);

            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            Assert.True(body.At("changes.changed").GetBoolean());
            Assert.Equal("pass", body.At("changes.verdict.from").GetString());
            Assert.Equal("fail", body.At("changes.verdict.to").GetString());
            Assert.True(body.At("changes.ruleDigest.changed").GetBoolean());
            Assert.Equal("asset:K-603A", body.At("changes.layers[0].name").GetString());
            Assert.Equal("added", body.At("changes.layers[0].change").GetString());
            Assert.Equal("asset:K-603A", Assert.Single(body.At("changes.verdictMovedBy.layers").EnumerateArray()).GetString());
            var stage = body.At("changes.stages[0]");
            Assert.Equal("R-AIR-RECIP", stage.At("governingRule.to").GetString());
            Assert.True(stage.At("governingMargin.to.value").GetDouble() < 0, stage.ToString());
            var change = stage.At("governingMargin.change.value").GetDouble();
            AssertEx.Near(stage.At("governingMargin.to.value").GetDouble() - stage.At("governingMargin.from.value").GetDouble(), change, 0.0011, "margin change");
        }
        finally
        {
            File.Delete(layer);
            await PostAsync("/v1/rules/reload", null);
        }
    }

    [SkippableFact]
    public async Task Replay_WhenIdIsUnknown_Answers404()
    {
        using var client = factory.CreateClient();
        using var response = await client.PostWithoutBodyAsync($"/v1/evaluations/{Guid.CreateVersion7()}/replay");

        await AssertEx.ProblemAsync(response, HttpStatusCode.NotFound, "not-found");
    }

    // ---- Retention ----

    [SkippableFact]
    public async Task Retention_WhenCutoffIsOldEnough_DeletesWhatTheDryRunCountedKeepsYoungerRecordsAndTheChainVerifies()
    {
        // Retention removes the oldest run of the hash chain evaluated before the cut-off (docs/audit.md). This host is
        // shared, so a back-dated record appended now sits behind younger ones and stays; the store's contract tests
        // (ApplyRetention_WhenItRemovesTheOldestRecords_…) show old records at the chain's start being removed.
        var store = factory.Services.GetRequiredService<IAuditStore>();
        await AppendOldRecordAsync(store, DateTimeOffset.UtcNow.AddDays(-1200));
        var recent = await EvaluateAsync(WithAsset(Requests.Minimal(), "K-604A"));
        var cutoff = DateTimeOffset.UtcNow.AddDays(-1000).ToString("O", CultureInfo.InvariantCulture);

        var (dryResponse, dry) = await PostAsync("/v1/admin/retention", $$"""{"deleteBefore": "{{cutoff}}", "reason": "records policy RP-7: keep 2 years", "dryRun": true}""");
        Assert.Equal(HttpStatusCode.OK, dryResponse.StatusCode);
        Assert.True(dry.At("dryRun").GetBoolean());

        var (runResponse, run) = await PostAsync("/v1/admin/retention", $$"""{"deleteBefore": "{{cutoff}}", "reason": "records policy RP-7: keep 2 years"}""");
        Assert.Equal(HttpStatusCode.OK, runResponse.StatusCode);
        Assert.Equal(dry.At("records").GetInt64(), run.At("records").GetInt64());
        Assert.True(run.At("grantId").GetInt64() > 0);
        Assert.NotNull(await store.GetAsync(recent.At("id").GetGuid(), CancellationToken.None));
        var verification = await store.VerifyChainAsync(CancellationToken.None);
        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(run.At("grantId").GetInt64(), verification.Anchor.GrantId);
    }

    [SkippableFact]
    public async Task Retention_WhenCutoffIsYoungerThanTheMinimum_Answers422AndDeletesNothing()
    {
        var cutoff = DateTimeOffset.UtcNow.AddDays(-30).ToString("O", CultureInfo.InvariantCulture);

        var (response, body) = await PostAsync("/v1/admin/retention", $$"""{"deleteBefore": "{{cutoff}}", "reason": "too soon"}""");

        Assert.Equal(HttpStatusCode.UnprocessableEntity, response.StatusCode);
        Assert.Equal("retention-too-recent", body.At("code").GetString());
        Assert.True(body.At("errors").TryGetProperty("deleteBefore", out _));
    }

    [SkippableFact]
    public async Task Retention_WhenReasonIsMissing_Answers400NamingIt()
    {
        var (response, body) = await PostAsync("/v1/admin/retention", """{"deleteBefore": "2001-01-01T00:00:00Z"}""");

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.True(body.At("errors").TryGetProperty("reason", out _), body.ToString());
    }

    // ---- Trend finding ----

    [SkippableFact]
    public async Task Trend_WhenDeviationRisesTwoKelvinPerEvaluationAtSteadyPressures_NewestCarriesTheTrendWarning()
    {
        // Deviations 1, 3, 5, 7, 9 K: a straight line, so the fitted rise over five evaluations is 8 K (above R-DEVIATION-TREND's 5 K),
        // while each deviation stays below R-DEVIATION's 10 K limit on its own (the newest, 9 K, is inside its 5 K note band: info).
        var estimated = await EstimatedAsync("K-605A");
        JsonElement last = default;
        foreach (var deviation in new[] { 1.0, 3.0, 5.0, 7.0, 9.0 })
        {
            last = await EvaluateAsync(Measured("K-605A", estimated + deviation));
        }

        var trend = Findings(last).Single(f => f.At("ruleId").GetString() == "R-DEVIATION-TREND");
        Assert.Equal("warning", trend.At("severity").GetString());
        AssertEx.Near(8.0, AssertEx.Quantity(trend.At("value"), "K"), 0.01, "fitted rise");
        Assert.Equal("review", last.At("verdict").GetString());
        Assert.DoesNotContain(Findings(last), f => f.At("ruleId").GetString() == "R-DEVIATION" && f.At("severity").GetString() is "warning" or "violation");
    }

    [SkippableFact]
    public async Task Trend_WhenPressuresChangedBetweenEvaluations_TheyDoNotCountAndTheTrendIsNotChecked()
    {
        var estimated = await EstimatedAsync("K-606A");
        await EvaluateAsync(Measured("K-606A", estimated + 1, dischargePressure: "260 kPa(a)"));
        await EvaluateAsync(Measured("K-606A", estimated + 3, dischargePressure: "290 kPa(a)"));
        var last = await EvaluateAsync(Measured("K-606A", estimated + 9));

        Assert.DoesNotContain(Findings(last), f => f.At("ruleId").GetString() == "R-DEVIATION-TREND");
        var notChecked = last.At("stages[0].notChecked").EnumerateArray().Single(n => n.At("ruleId").GetString() == "R-DEVIATION-TREND");
        Assert.Contains("history", notChecked.At("missing[0]").GetString(), StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Trend_WhenDeviationIsSteady_ThePassIsReportedWithItsMargin()
    {
        var estimated = await EstimatedAsync("K-607A");
        JsonElement last = default;
        foreach (var deviation in new[] { 4.0, 4.5, 3.5, 4.0 })
        {
            last = await EvaluateAsync(Measured("K-607A", estimated + deviation));
        }

        var trend = Findings(last).Single(f => f.At("ruleId").GetString() == "R-DEVIATION-TREND");
        Assert.Equal("pass", trend.At("severity").GetString());
        // A pass in the compact answer carries its limit and margin; its value (the fitted rise) is the limit less the margin.
        Assert.True(Math.Abs(AssertEx.Quantity(trend.At("limit"), "K") - AssertEx.Quantity(trend.At("margin"), "K")) < 1, trend.ToString());
    }

    private static JsonObject WithAsset(JsonObject request, string asset)
    {
        request["asset"] = asset;
        return request;
    }

    private static JsonElement[] Findings(JsonElement response) => [.. response.At("stages[0].findings").EnumerateArray()];

    // The recip air stage without a measurement: its estimate, to build measurements around.
    private async Task<double> EstimatedAsync(string asset)
    {
        var request = WithAsset(Requests.PassingStage(), asset);
        request.Stage(0).Remove("measured");
        var body = await EvaluateAsync(request);
        return AssertEx.Quantity(body.At("stages[0].dischargeTemperature.estimated"), "°C");
    }

    private static JsonObject Measured(string asset, double measuredCelsius, string dischargePressure = "230 kPa(a)")
    {
        var request = WithAsset(Requests.PassingStage(), asset);
        request.Stage(0)["measured"] = new JsonObject { ["dischargeTemperature"] = string.Create(CultureInfo.InvariantCulture, $"{measuredCelsius:0.###} °C") };
        request.Stage(0)["discharge"] = new JsonObject { ["pressure"] = dischargePressure };
        request.Stage(0).Remove("operation");
        return request;
    }

    private async Task<JsonElement> EvaluateAsync(JsonObject request)
    {
        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);
        Assert.True(response.StatusCode == HttpStatusCode.OK, body.ToString());
        return body;
    }

    private async Task<(HttpResponseMessage Response, JsonElement Body)> PostAsync(string path, string? json)
    {
        using var client = factory.CreateClient();
        using var content = json is null ? null : new StringContent(json, Encoding.UTF8, "application/json");
        var response = content is null ? await client.PostWithoutBodyAsync(path) : await client.PostAsync(new Uri(path, UriKind.Relative), content);
        return (response, await Json.ReadAsync(response));
    }

    private async Task<int> CountAsync(string asset)
    {
        var n = 0;
        await foreach (var _ in factory.Services.GetRequiredService<IAuditStore>().QueryAsync(new AuditQuery { Asset = asset }, CancellationToken.None))
        {
            n++;
        }

        return n;
    }

    private static async Task<Guid> AppendOldRecordAsync(IAuditStore store, DateTimeOffset at)
    {
        var id = Guid.CreateVersion7(at);
        await store.AppendAsync(
            new AuditRecord
            {
                Id = id,
                EvaluatedAt = at,
                Caller = AuditRecord.AnonymousCaller,
                Asset = "K-604A",
                Verdict = AuditVerdict.Pass,
                RuleDigest = new string('a', 64),
                EngineVersion = "0.0.1",
                Request = """{"asset":"K-604A"}"""u8.ToArray(),
                Response = """{"verdict":"pass"}"""u8.ToArray(),
            },
            CancellationToken.None);
        return id;
    }
}

/// <summary>The planning contract on the default SQLite audit file.</summary>
public sealed class PlanningEndpointsTests(ServiceFactory factory) : PlanningEndpointsContract(factory), IClassFixture<ServiceFactory>;

/// <summary>The planning contract with the audit store on a real PostgreSQL server.</summary>
public sealed class PostgresPlanningEndpointsTests(PostgresServiceFactory factory) : PlanningEndpointsContract(factory), IClassFixture<PostgresServiceFactory>;
