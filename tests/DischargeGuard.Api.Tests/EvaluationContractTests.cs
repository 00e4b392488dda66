using System.Net;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Audit;

namespace DischargeGuard.Api.Tests;

public sealed class EvaluationContractTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private static readonly string[] FindingFields = ["ruleId", "title", "severity", "quantity", "basis", "layer", "message"];

    [Fact]
    public async Task Evaluate_WhenStageIsCompleteAndInsideLimits_AnswersEveryContractField()
    {
        // An asset tag of its own: other tests' evaluations of K-101A would give the trend rule a history.
        var request = Requests.PassingStage();
        request["asset"] = "K-101A-CONTRACT";
        // Every input, the stage's design temperature included (R-DESIGN-TEMP; 175 °C is an invented rating).
        request["stages"]![0]!["equipment"]!["designTemperature"] = "175 °C";
        using var response = await factory.EvaluateAsync(request, "?detail=full");
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("application/json", response.Content.Headers.ContentType?.MediaType);
        var id = body.At("id").GetGuid();
        Assert.Equal(7, id.Version);
        Assert.True(body.At("evaluatedAt").TryGetDateTimeOffset(out var at) && at.Offset == TimeSpan.Zero, body.At("evaluatedAt").ToString());
        Assert.InRange(at, DateTimeOffset.UtcNow.AddMinutes(-5), DateTimeOffset.UtcNow.AddMinutes(1));
        Assert.Equal("pass", body.At("verdict").GetString());
        Assert.Equal("ideal-gas", body.At("method").GetString());
        Assert.Matches(@"^\d+\.\d+\.\d+", body.At("engineVersion").GetString());
        Assert.Equal("K-101A-CONTRACT", body.At("asset").GetString());
        Assert.Equal("kestrel-ridge", body.At("site").GetString());
        Assert.Matches("^[0-9a-f]{64}$", body.At("ruleSet.digest").GetString());
        var layer = Assert.Single(body.At("ruleSet.layers").EnumerateArray());
        Assert.Equal("default", layer.At("name").GetString());
        Assert.Matches("^[0-9a-f]{64}$", layer.At("digest").GetString());

        // Dry air 28.9654 g/mol: the preset's composition (Gordon 1982, as in the NASA Glenn 'Air' entry) with CIAAW 2017
        // atomic weights — the value the preset data gives; from memory — verify against the gases document.
        AssertEx.Near(28.9654, AssertEx.Quantity(body.At("gas.molarMass"), "g/mol"), 0.001, "molar mass");
        var composition = body.At("gas.composition").EnumerateObject().ToDictionary(p => p.Name, p => p.Value.GetDouble());
        Assert.Equal(["Ar", "CO2", "N2", "O2"], composition.Keys.Order(StringComparer.Ordinal));
        AssertEx.Near(1, composition.Values.Sum(), 1e-6, "sum of mole fractions");
        Assert.Equal(JsonValueKind.Array, body.At("gas.serviceClasses").ValueKind);

        var stage = body.At("stages[0]");
        Assert.Equal(0, stage.At("index").GetInt32());
        Assert.Equal("pass", stage.At("verdict").GetString());
        AssertEx.Near(2.3, stage.At("pressureRatio").GetDouble(), 1e-9, "pressure ratio 230/100");
        AssertEx.Near(100, AssertEx.Quantity(stage.At("suction.pressureAbsolute"), "kPa"), 1e-9, "suction pressure");
        AssertEx.Near(35, AssertEx.Quantity(stage.At("suction.temperature"), "°C"), 1e-9, "suction temperature");
        AssertEx.Near(230, AssertEx.Quantity(stage.At("discharge.pressureAbsolute"), "kPa"), 1e-9, "discharge pressure");
        AssertEx.Near(0.80, stage.At("efficiency.isentropic").GetDouble(), 1e-12, "ηs");
        Assert.InRange(stage.At("efficiency.polytropic").GetDouble(), 0.80, 0.90);
        Assert.Equal("isentropic", stage.At("efficiency.given").GetString());
        AssertEx.Near(0.01, stage.At("efficiency.uncertainty").GetDouble(), 1e-12, "uncertainty");
        Assert.Equal("request", stage.At("efficiency.source").GetString());

        var t2s = AssertEx.Quantity(stage.At("dischargeTemperature.isentropic"), "°C");
        var t2 = AssertEx.Quantity(stage.At("dischargeTemperature.estimated"), "°C");
        var t2Upper = AssertEx.Quantity(stage.At("dischargeTemperature.estimatedUpperBound"), "°C");
        var t2Lower = AssertEx.Quantity(stage.At("dischargeTemperature.estimatedLowerBound"), "°C");
        Assert.True(35 < t2s && t2s < t2Lower && t2Lower < t2 && t2 < t2Upper, $"ordering T1 < T2s < T2(η+δ) < T2 < T2(η−δ): {t2s} {t2Lower} {t2} {t2Upper}");

        // Constant-k cross-check, T2s = T1·r^((k−1)/k) (ideal gas, isentropic path: any thermodynamics text).
        var k = stage.At("dischargeTemperature.constantK.k").GetDouble();
        AssertEx.Near(1.4, k, 0.002, "k of air near 300 K (NIST-JANAF cp of N2/O2; k = 1.40 common practice, no single source)");
        var t2sConstantK = AssertEx.Quantity(stage.At("dischargeTemperature.constantK.isentropic"), "°C");
        AssertEx.Near(((35 + 273.15) * Math.Pow(2.3, (k - 1) / k)) - 273.15, t2sConstantK, 0.01, "constant-k isentropic");
        var t2ConstantK = AssertEx.Quantity(stage.At("dischargeTemperature.constantK.estimated"), "°C");
        AssertEx.Near(35 + ((t2sConstantK - 35) / 0.8), t2ConstantK, 0.01, "constant-k estimate T1 + (T2s − T1)/ηs");
        AssertEx.Near(t2ConstantK - t2, AssertEx.Quantity(stage.At("dischargeTemperature.constantK.differenceFromCpT"), "K"), 0.002, "difference");
        Assert.Equal(JsonValueKind.Number, stage.At("dischargeTemperature.constantK.differencePercentOfRise").ValueKind);

        AssertEx.Near(t2 - 35, AssertEx.Quantity(stage.At("temperatureRise"), "K"), 0.002, "rise");
        Assert.InRange(stage.At("properties.kSuction").GetDouble(), 1.39, 1.41);
        Assert.InRange(stage.At("properties.kDischarge").GetDouble(), 1.38, stage.At("properties.kSuction").GetDouble());
        // Z of air from Peng-Robinson at 1 bar: 0.9995–0.9998 near room temperature (air Z ≈ 0.9997 at 300 K, 1 bar, from memory).
        Assert.InRange(stage.At("properties.zSuction").GetDouble(), 0.998, 1.0);
        Assert.InRange(stage.At("properties.zDischarge").GetDouble(), 0.998, 1.001);
        Assert.Equal("ideal-gas", stage.At("method").GetString());
        Assert.False(stage.At("realGas.recommended").GetBoolean());
        var wIsentropic = AssertEx.Quantity(stage.At("specificWork.isentropic"), "kJ/kg");
        var wActual = AssertEx.Quantity(stage.At("specificWork.actual"), "kJ/kg");
        AssertEx.Near(wIsentropic / 0.8, wActual, 0.002, "actual work = isentropic work / ηs");
        AssertEx.Near(2.5 * wActual, AssertEx.Quantity(stage.At("power"), "kW"), 0.01, "power = ṁ·(h2 − h1)");

        var governing = stage.At("governing");
        Assert.False(string.IsNullOrEmpty(governing.At("ruleId").GetString()));
        Assert.False(string.IsNullOrEmpty(governing.At("quantity").GetString()));
        AssertEx.Quantity(governing.At("limit"), "°C");
        Assert.True(AssertEx.Quantity(governing.At("margin"), "K") > 0);
        var envelope = stage.At("envelope");
        Assert.True(AssertEx.Quantity(envelope.At("maxDischargePressure"), "kPa") > 230);
        Assert.True(AssertEx.Quantity(envelope.At("maxSuctionTemperature"), "°C") > 35);
        Assert.Equal(governing.At("ruleId").GetString(), envelope.At("governingRule").GetString());
        Assert.False(string.IsNullOrEmpty(envelope.At("note").GetString()));

        var findings = stage.At("findings").EnumerateArray().ToArray();
        Assert.NotEmpty(findings);
        foreach (var f in findings)
        {
            foreach (var field in FindingFields)
            {
                Assert.False(string.IsNullOrEmpty(f.At(field).GetString()), $"finding field {field}: {f}");
            }

            Assert.False(f.Has("stage"), "a stage's own findings carry no stage index");
            Assert.Contains(f.At("severity").GetString(), new[] { "pass", "info", "warning", "violation" });
        }

        // Every limit-type finding of a complete request carries value, limit and margin.
        foreach (var f in findings.Where(f => f.At("severity").GetString() != "info"))
        {
            foreach (var q in new[] { "value", "limit", "margin" })
            {
                Assert.True(f.Has(q), $"finding {f.At("ruleId")} has no {q}");
            }
        }

        var ruleIds = findings.Select(f => f.At("ruleId").GetString()).ToArray();
        Assert.Contains("R-AIT", ruleIds);
        Assert.Contains("R-VALVE-MAT", ruleIds);
        Assert.Contains("R-ELASTOMER", ruleIds);
        Assert.Contains("R-DEVIATION", ruleIds);
        Assert.Contains("R-DESIGN-TEMP", ruleIds);
        Assert.DoesNotContain(findings, f => f.At("severity").GetString() is "warning" or "violation");
        // Every input is given; only the trend waits for history, which a first evaluation of the asset cannot have.
        var waiting = Assert.Single(stage.At("notChecked").EnumerateArray());
        Assert.Equal("R-DEVIATION-TREND", waiting.At("ruleId").GetString());
        Assert.Contains("once they are recorded", waiting.At("reason").GetString(), StringComparison.Ordinal);
        Assert.False(stage.Has("curve"), "no curve without ?curve=true");

        // Each finding is listed once, under its stage; the top level names the governing one by reference.
        Assert.False(body.Has("findings"), "no top-level findings list: each finding appears once, under its stage");
        Assert.Equal(0, body.At("governing.stage").GetInt32());
        Assert.Equal(governing.At("ruleId").GetString(), body.At("governing.ruleId").GetString());
        AssertEx.Near(AssertEx.Quantity(governing.At("margin"), "K"), AssertEx.Quantity(body.At("governing.margin"), "K"), 1e-9, "governing margin");
        Assert.Equal("full", body.At("detail").GetString());

        var cautions = body.At("cautions").EnumerateArray().Select(c => c.GetString()!).ToArray();
        Assert.Contains(cautions, c => c.Contains("manufacturer", StringComparison.Ordinal) && c.Contains("local codes", StringComparison.Ordinal));
        Assert.Contains(cautions, c => c.Contains("alarms and shutdowns", StringComparison.Ordinal));
    }

    [Fact]
    public async Task Evaluate_WhenAFieldIsMissing_ListsTheRuleAsNotCheckedAndCautions()
    {
        var request = Requests.PassingStage();
        request.Stage(0).Remove("measured");

        using var response = await factory.EvaluateAsync(request, "?detail=full");
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var notChecked = body.At("stages[0].notChecked").EnumerateArray().ToArray();
        var deviation = Assert.Single(notChecked, n => n.At("ruleId").GetString() == "R-DEVIATION");
        Assert.Contains(deviation.At("missing").EnumerateArray(), m => m.GetString()!.Contains("measured", StringComparison.OrdinalIgnoreCase));
        Assert.False(string.IsNullOrEmpty(deviation.At("reason").GetString()));
        Assert.Contains(body.At("cautions").EnumerateArray(), c => c.GetString()!.Contains("not a pass", StringComparison.Ordinal));
    }

    [Fact]
    public async Task Evaluate_WhenCurveIsAsked_AddsPointsRisingWithPressure()
    {
        using var response = await factory.EvaluateAsync(Requests.PassingStage(), "?curve=true");
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var points = body.At("stages[0].curve").EnumerateArray().ToArray();
        Assert.Equal(41, points.Length);
        var previous = double.NegativeInfinity;
        foreach (var p in points)
        {
            var pressure = AssertEx.Quantity(p.At("dischargePressure"), "kPa");
            var estimated = AssertEx.Quantity(p.At("estimated"), "°C");
            Assert.True(AssertEx.Quantity(p.At("estimatedUpperBound"), "°C") >= estimated);
            Assert.True(AssertEx.Quantity(p.At("isentropic"), "°C") <= estimated);
            Assert.True(estimated > previous, "the estimate rises with the discharge pressure");
            Assert.True(pressure > 100);
            previous = estimated;
        }
    }

    [Fact]
    public async Task Evaluate_WhenImperialUnitsAreAsked_WritesFahrenheitPsiaBtuAndHorsepower()
    {
        using var metricResponse = await factory.EvaluateAsync(Requests.PassingStage(), "?detail=full");
        var metric = (await Json.ReadAsync(metricResponse)).At("stages[0]");
        var request = Requests.PassingStage();
        request["outputUnits"] = "imperial";

        using var response = await factory.EvaluateAsync(request, "?detail=full");
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var stage = body.At("stages[0]");
        // °F = °C·9/5 + 32; 1 psi = 6.894757293168 kPa and 1 Btu/lb = 2.326 kJ/kg exactly (NIST SP 811, Appendix B);
        // 1 hp = 745.69987158227022 W (mechanical horsepower, 550 ft·lbf/s; NIST SP 811, Appendix B).
        AssertEx.Near((35 * 1.8) + 32, AssertEx.Quantity(stage.At("suction.temperature"), "°F"), 0.001, "T1");
        AssertEx.Near((metric.At("dischargeTemperature.estimated.value").GetDouble() * 1.8) + 32, AssertEx.Quantity(stage.At("dischargeTemperature.estimated"), "°F"), 0.003, "T2");
        AssertEx.Near(100 / 6.894757293168, AssertEx.Quantity(stage.At("suction.pressureAbsolute"), "psia"), 0.001, "P1");
        AssertEx.Near(230 / 6.894757293168, AssertEx.Quantity(stage.At("discharge.pressureAbsolute"), "psia"), 0.001, "P2");
        AssertEx.Near(metric.At("temperatureRise.value").GetDouble() * 1.8, AssertEx.Quantity(stage.At("temperatureRise"), "Δ°F"), 0.003, "rise");
        AssertEx.Near(metric.At("specificWork.actual.value").GetDouble() / 2.326, AssertEx.Quantity(stage.At("specificWork.actual"), "Btu/lb"), 0.002, "work");
        AssertEx.Near(metric.At("power.value").GetDouble() * 1000 / 745.69987158227022, AssertEx.Quantity(stage.At("power"), "hp"), 0.002, "power");
        AssertEx.Quantity(stage.At("governing.margin"), "Δ°F");
        AssertEx.Quantity(stage.At("envelope.maxDischargePressure"), "psia");
        AssertEx.Quantity(body.At("gas.molarMass"), "lb/lbmol");
        Assert.All(stage.At("findings").EnumerateArray().Where(f => f.At("quantity").GetString() == "estimated"), f =>
        {
            AssertEx.Quantity(f.At("value"), "°F");
            AssertEx.Quantity(f.At("margin"), "Δ°F");
        });
    }

    [Fact]
    public async Task Evaluate_WhenQuantitiesAreObjects_AnswersAsForStrings()
    {
        var asObjects = Requests.Minimal();
        asObjects.Stage(0)["suction"]!["temperature"] = new JsonObject { ["value"] = 35, ["unit"] = "°C" };
        asObjects.Stage(0)["suction"]!["pressure"] = new JsonObject { ["value"] = 1, ["unit"] = "bara" };

        using var stringsResponse = await factory.EvaluateAsync(Requests.Minimal());
        using var objectsResponse = await factory.EvaluateAsync(asObjects);
        var strings = (await Json.ReadAsync(stringsResponse)).At("stages[0]");
        var objects = (await Json.ReadAsync(objectsResponse)).At("stages[0]");

        Assert.Equal(HttpStatusCode.OK, objectsResponse.StatusCode);
        Assert.Equal(35, objects.At("suction.temperature.value").GetDouble());
        Assert.Equal(strings.At("dischargeTemperature").ToString(), objects.At("dischargeTemperature").ToString());
    }

    [Fact]
    public async Task Evaluate_WhenTrainHasIntercooler_TakesNextSuctionThroughTheCooler()
    {
        var request = Requests.Minimal("1 bara", "35 °C", "3 bara");
        ((JsonArray)request["stages"]!).Add(new JsonObject
        {
            ["intercooler"] = new JsonObject { ["approach"] = "10 K", ["coolantTemperature"] = "30 °C", ["pressureDrop"] = "2 %" },
            ["discharge"] = new JsonObject { ["pressure"] = "8.5 bara" },
            ["efficiency"] = new JsonObject { ["isentropic"] = 0.8 },
        });

        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var first = body.At("stages[0]");
        var second = body.At("stages[1]");
        Assert.Equal(1, second.At("index").GetInt32());
        var p2 = AssertEx.Quantity(first.At("discharge.pressureAbsolute"), "kPa");
        AssertEx.Near(300, p2, 1e-9, "stage 0 discharge");
        // Outlet = coolant + approach = 40 °C; suction = upstream × (1 − 2 %) — the train's definition of a relative drop.
        AssertEx.Near(p2 * 0.98, AssertEx.Quantity(second.At("suction.pressureAbsolute"), "kPa"), 0.001, "stage 1 suction pressure");
        AssertEx.Near(40, AssertEx.Quantity(second.At("suction.temperature"), "°C"), 0.001, "stage 1 suction temperature");
        AssertEx.Near(850 / 294.0, second.At("pressureRatio").GetDouble(), 1e-6, "stage 1 ratio");
        Assert.NotEmpty(second.At("findings").EnumerateArray());
    }

    [Fact]
    public async Task GetEvaluation_WhenRecorded_ReturnsTheRequestAsSentAndTheResponseByteForByte()
    {
        var requestText = Requests.PassingStage().ToJsonString();
        using var post = await factory.EvaluateRawAsync(requestText);
        var postBytes = await post.Content.ReadAsByteArrayAsync();
        Assert.Equal(HttpStatusCode.OK, post.StatusCode);
        var posted = JsonDocument.Parse(postBytes).RootElement;
        var id = posted.At("id").GetGuid();

        var (get, stored) = await factory.GetJsonAsync($"/v1/evaluations/{id}");

        Assert.Equal(HttpStatusCode.OK, get.StatusCode);
        Assert.Equal(id, stored.At("id").GetGuid());
        Assert.Equal(posted.At("evaluatedAt").GetDateTimeOffset(), stored.At("evaluatedAt").GetDateTimeOffset());
        Assert.Equal("anonymous", stored.At("caller").GetString());
        Assert.Equal("K-101A", stored.At("asset").GetString());
        Assert.Equal("kestrel-ridge", stored.At("site").GetString());
        Assert.Equal(posted.At("verdict").GetString(), stored.At("verdict").GetString());
        Assert.Equal(posted.At("ruleSet.digest").GetString(), stored.At("ruleDigest").GetString());
        Assert.Equal(posted.At("engineVersion").GetString(), stored.At("engineVersion").GetString());
        Assert.Equal(Encoding.UTF8.GetString(postBytes), stored.At("response").GetRawText());
        Assert.Equal(requestText, stored.At("request").GetRawText());
        Assert.Equal(Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(postBytes)), stored.At("responseSha256").GetString());
        Assert.Equal(Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(Encoding.UTF8.GetBytes(requestText))), stored.At("requestSha256").GetString());

        var audit = (IAuditStore)factory.Services.GetService(typeof(IAuditStore))!;
        var record = await audit.GetAsync(id, CancellationToken.None);
        Assert.NotNull(record);
        Assert.Equal(postBytes, record.Response);
    }

    [Fact]
    public async Task VerifyEvaluation_WhenRecordIsUntouched_RecomputesBothHashesAndReportsIntact()
    {
        var requestText = Requests.PassingStage().ToJsonString();
        using var post = await factory.EvaluateRawAsync(requestText);
        var postBytes = await post.Content.ReadAsByteArrayAsync();
        var id = JsonDocument.Parse(postBytes).RootElement.At("id").GetGuid();

        var (response, verify) = await factory.GetJsonAsync($"/v1/evaluations/{id}/verify");

        // SHA-256 as specified in FIPS 180-4, computed here by the framework over the bytes the client sent and received.
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.True(verify.At("intact").GetBoolean());
        Assert.Equal(Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(postBytes)), verify.At("responseSha256").GetString());
        Assert.Equal(verify.At("responseSha256").GetString(), verify.At("storedResponseSha256").GetString());
        Assert.Equal(Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(Encoding.UTF8.GetBytes(requestText))), verify.At("requestSha256").GetString());
        Assert.Equal(verify.At("requestSha256").GetString(), verify.At("storedRequestSha256").GetString());
    }

    [Fact]
    public async Task ListEvaluations_ForOneAsset_PagesNewestFirstWithoutGapsOrRepeats()
    {
        var asset = "K-3" + Guid.NewGuid().ToString("N")[..6];
        var ids = new List<Guid>();
        for (var i = 0; i < 3; i++)
        {
            var request = Requests.PassingStage();
            request["asset"] = asset;
            using var post = await factory.EvaluateRawAsync(request.ToJsonString());
            ids.Add((await Json.ReadAsync(post)).At("id").GetGuid());
        }

        var (first, page1) = await factory.GetJsonAsync($"/v1/evaluations?asset={asset}&limit=2");
        Assert.Equal(HttpStatusCode.OK, first.StatusCode);
        var cursor = page1.At("nextCursor").GetString();
        var (_, page2) = await factory.GetJsonAsync($"/v1/evaluations?asset={asset}&limit=2&cursor={cursor}");

        var listed = page1.At("evaluations").EnumerateArray().Concat(page2.At("evaluations").EnumerateArray()).Select(e => e.At("id").GetGuid()).ToList();
        Assert.Equal(ids.AsEnumerable().Reverse(), listed); // UUIDv7 ids were made in time order; the list is newest first
        Assert.False(page2.Has("nextCursor"));
        Assert.All(page1.At("evaluations").EnumerateArray(), e => Assert.Equal(asset, e.At("asset").GetString()));
    }

    [Theory]
    [InlineData("verdict=passed", "verdict")]
    [InlineData("limit=0", "limit")]
    [InlineData("cursor=not-a-cursor", "cursor")]
    [InlineData("from=2026-12-02T00:00:00Z&to=2026-12-01T00:00:00Z", "to")]
    public async Task ListEvaluations_WithBadQuery_Answers400NamingTheParameter(string query, string field)
    {
        var (response, problem) = await factory.GetJsonAsync($"/v1/evaluations?{query}");
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.True(problem.At("errors").TryGetProperty(field, out _), problem.ToString());
    }

    [Fact]
    public async Task VerifyEvaluation_WhenIdIsUnknown_Answers404Problem()
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri($"/v1/evaluations/{Guid.CreateVersion7()}/verify", UriKind.Relative));
        await AssertEx.ProblemAsync(response, HttpStatusCode.NotFound, "not-found");
    }

    [Fact]
    public async Task GetEvaluation_WhenIdIsUnknown_Answers404Problem()
    {
        var unknown = Guid.CreateVersion7();
        using var client = factory.CreateClient();

        using var response = await client.GetAsync(new Uri($"/v1/evaluations/{unknown}", UriKind.Relative));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.NotFound, "not-found");
        Assert.Contains(unknown.ToString(), problem.At("detail").GetString(), StringComparison.Ordinal);
    }
}
