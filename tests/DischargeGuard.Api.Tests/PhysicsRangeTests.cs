using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using CsCheck;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Requests of the right shape whose numbers take the physics outside its data: each is its own field's 422, alone and
/// as a batch item, and never costs another item of the batch its answer.
/// </summary>
public sealed class PhysicsRangeTests(FloodServiceFactory factory) : IClassFixture<FloodServiceFactory>
{
    // Humid air (50 % RH) drawn in at 0.2 barg and −73 °C, compressed to 0.25 barg. Its water partial pressure at the
    // discharge, 0.5 × 0.165 Pa × 1.263/1.213 ≈ 0.086 Pa, lies below the ice sublimation pressure at 200 K (0.162 Pa,
    // IAPWS 2011 sublimation equation as in WaterSaturation), so its discharge dew point is below the data's 200 K.
    private static JsonObject FrostyAir() => JsonNode.Parse("""
    {
      "asset": "K-101A",
      "site": {"id": "kestrel-ridge", "barometricPressure": "101.325 kPa"},
      "gas": {"preset": "dry-air", "relativeHumidity": 0.5},
      "stages": [
        {
          "suction": {"pressure": "0.2 barg", "temperature": "-73 °C"},
          "discharge": {"pressure": "0.25 barg"},
          "efficiency": {"isentropic": 0.75}
        }
      ]
    }
    """)!.AsObject();

    [Fact]
    public async Task Evaluate_WhenTheDischargeDewPointFallsBelowTheWaterData_Answers422ForTheHumidity()
    {
        var before = await CountAsync();
        using var client = factory.CreateClient();
        using var content = new StringContent(FrostyAir().ToJsonString(), Encoding.UTF8, "application/json");
        using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.UnprocessableEntity, "out-of-range");
        Assert.Contains("200", AssertEx.Error(problem, "gas.relativeHumidity"), StringComparison.Ordinal);
        Assert.Equal(before, await CountAsync());
    }

    [Fact]
    public async Task Evaluate_WhenAllWaterVapourIsDrawnInBelowItsSaturation_Answers422ForTheSuctionTemperature()
    {
        // Found by the generated batches below: pure steam at 153 bar(a) and −1.5 °C (its saturation pressure there is
        // about 550 Pa, IAPWS 2011 sublimation equation) condensed to nothing and answered 500.
        var request = Requests.Minimal(suctionPressure: "153.25 bara", suctionTemperature: "-1.48 °C", dischargePressure: "766.25 bara");
        request["gas"] = new JsonObject { ["composition"] = new JsonObject { ["H2O"] = 1.0 } };
        request["method"] = "ideal-gas";

        using var client = factory.CreateClient();
        using var content = new StringContent(request.ToJsonString(), Encoding.UTF8, "application/json");
        using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.UnprocessableEntity, "out-of-range");
        Assert.Contains("condense", AssertEx.Error(problem, "stages[0].suction.temperature"), StringComparison.Ordinal);
    }

    [Fact]
    public async Task JsonBatch_WhenTheMiddleItemIsOutOfThePhysicsRange_AnswersItsNeighbours200AndRecordsOnlyThem()
    {
        var before = await CountAsync();
        var body = new JsonObject { ["evaluations"] = new JsonArray(Requests.Minimal(), FrostyAir(), Requests.Minimal()) };

        using var response = await PostAsync(body.ToJsonString(), "application/json");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var results = (await Json.ReadAsync(response)).GetProperty("results");
        Assert.Equal([200, 422, 200], results.EnumerateArray().Select(r => r.GetProperty("status").GetInt32()));
        Assert.True(results[1].GetProperty("problem").GetProperty("errors").TryGetProperty("gas.relativeHumidity", out _), results[1].ToString());
        Assert.Equal(before + 2, await CountAsync());
    }

    [Fact]
    public async Task NdjsonBatch_WhenTheFirstItemIsOutOfThePhysicsRange_AnswersAllTenItemsAfterIt()
    {
        var before = await CountAsync();
        var lines = new[] { FrostyAir() }.Concat(Enumerable.Range(0, 10).Select(_ => Requests.Minimal())).Select(r => r.ToJsonString());

        using var response = await PostAsync(string.Join('\n', lines) + "\n", "application/x-ndjson");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var answers = (await response.Content.ReadAsStringAsync()).Split('\n', StringSplitOptions.RemoveEmptyEntries)
            .Select(l => JsonDocument.Parse(l).RootElement.Clone()).ToArray();
        Assert.Equal(11, answers.Length);
        Assert.Equal([422, .. Enumerable.Repeat(200, 10)], answers.Select(a => a.GetProperty("status").GetInt32()));
        Assert.Equal(before + 10, await CountAsync());
    }

    // ---- Generated extreme items ----

    private const int BatchItems = 1_500;

    private static readonly string[] Presets = ["dry-air", "nitrogen", "hydrogen", "carbon-dioxide", "methane"];

    private static readonly string[] Species = ["N2", "O2", "Ar", "CO2", "H2O", "CO", "H2", "He", "CH4", "C2H6", "C3H8", "n-C4H10", "NH3", "H2S", "SO2", "C2H4"];

    private static readonly string[] Methods = ["auto", "ideal-gas", "real-gas", "peng-robinson", "gerg-2008"];

    private static string Num(double value) => value.ToString("0.####", CultureInfo.InvariantCulture);

    // A gas: a preset, or two to four species with random fractions normalised to 1; with no water, a relative
    // humidity (0–1) or a dew point anywhere in −150…400 °C.
    private static readonly Gen<JsonObject> Gases =
        Gen.Select(Gen.Int[0, 9], Gen.Int[0, Species.Length - 1].Array[2, 4], Gen.Double[0.01, 1].Array[4], Gen.Int[0, 2], Gen.Double[0, 1], Gen.Double[-150, 400])
            .Select((kind, picks, weights, humidity, rh, dew) =>
            {
                var gas = new JsonObject();
                if (kind < 5)
                {
                    gas["preset"] = Presets[kind];
                }
                else
                {
                    var distinct = picks.Distinct().ToArray();
                    var total = distinct.Select((_, i) => weights[i]).Sum();
                    var composition = new JsonObject();
                    for (var i = 0; i < distinct.Length; i++)
                    {
                        composition[Species[distinct[i]]] = Math.Round(weights[i] / total, 6);
                    }

                    // The rounding may leave the sum 1e-6 off; put the rest on the first species.
                    var sum = composition.Sum(c => c.Value!.GetValue<double>());
                    composition[Species[distinct[0]]] = Math.Round(composition[Species[distinct[0]]]!.GetValue<double>() + 1 - sum, 6);
                    gas["composition"] = composition;
                }

                var hasWater = gas["composition"] is JsonObject c && c.ContainsKey("H2O");
                if (!hasWater && humidity == 1)
                {
                    gas["relativeHumidity"] = Math.Round(rh, 4);
                }
                else if (!hasWater && humidity == 2)
                {
                    gas["dewPoint"] = Num(dew) + " °C";
                }

                return gas;
            });

    // One stage: suction temperature −150…400 °C, a pressure ratio 0.8…40, an efficiency 0.2…1 (isentropic or polytropic).
    private sealed record StageDraw(double SuctionCelsius, double Ratio, double Efficiency, bool Polytropic, bool Intercooled, double CoolerCelsius);

    private static readonly Gen<StageDraw> Stages =
        Gen.Select(Gen.Double[-150, 400], Gen.Double[0.8, 40], Gen.Double[0.2, 1], Gen.Bool, Gen.Bool, Gen.Double[-150, 400])
            .Select((t, r, e, poly, cooled, tc) => new StageDraw(t, r, e, poly, cooled, tc));

    private static readonly string[] PressureUnits = ["bara", "barg", "kPa(a)", "psig", "MPa(a)"];

    private static readonly Gen<string> Items =
        Gen.Select(Gases, Stages.Array[1, 4], Gen.Double[0.005, 300], Gen.Int[0, PressureUnits.Length - 1], Gen.Int[0, 2], Gen.Bool)
            .Select((gas, stages, suctionBara, unit, method, measured) =>
            {
                var list = new JsonArray();
                var p = suctionBara;
                for (var i = 0; i < stages.Length; i++)
                {
                    var s = stages[i];
                    var stage = new JsonObject();
                    if (i == 0 || !s.Intercooled)
                    {
                        stage["suction"] = new JsonObject { ["pressure"] = Pressure(p, unit), ["temperature"] = Num(s.SuctionCelsius) + " °C" };
                    }
                    else
                    {
                        stage["intercooler"] = new JsonObject { ["outletTemperature"] = Num(s.CoolerCelsius) + " °C" };
                    }

                    p *= s.Ratio;
                    stage["discharge"] = new JsonObject { ["pressure"] = Pressure(p, unit) };
                    stage["efficiency"] = new JsonObject { [s.Polytropic ? "polytropic" : "isentropic"] = Math.Round(s.Efficiency, 4) };
                    if (measured)
                    {
                        stage["measured"] = new JsonObject { ["dischargeTemperature"] = Num(s.SuctionCelsius + 50) + " °C" };
                    }

                    list.Add(stage);
                }

                return new JsonObject
                {
                    ["asset"] = "C-204B",
                    ["site"] = new JsonObject { ["id"] = "marlow-fen", ["barometricPressure"] = "101.325 kPa" },
                    ["gas"] = gas,
                    ["method"] = Methods[method],
                    ["stages"] = list,
                }.ToJsonString();
            });

    // An absolute pressure in bar written in one of the units (gauge ones from the site's 1.01325 bar barometer).
    private static string Pressure(double bara, int unit) => PressureUnits[unit] switch
    {
        "bara" => Num(bara) + " bara",
        "barg" => Num(bara - 1.01325) + " barg",
        "kPa(a)" => Num(bara * 100) + " kPa(a)",
        "psig" => Num((bara - 1.01325) * 14.503774) + " psig",
        _ => Num(bara / 10) + " MPa(a)",
    };

    [Fact]
    public async Task Batches_WhenThousandsOfValidShapedExtremeItemsArrive_AnswerEveryItem200Or400Or422AndRecordExactlyThe200s()
    {
        var before = await CountAsync();
        var statuses = new Dictionary<int, int>();
        var ok = 0;
        var batch = 0;
        foreach (var ndjson in new[] { false, true, false, true })
        {
            var items = new List<string>(BatchItems);
            Items.Sample(items.Add, iter: BatchItems, threads: 1);
            batch++;
            var body = ndjson ? string.Join('\n', items) + "\n" : "{\"evaluations\":[" + string.Join(',', items) + "]}";

            using var response = await PostAsync(body, ndjson ? "application/x-ndjson" : "application/json");

            var text = await response.Content.ReadAsStringAsync();
            Assert.True(response.StatusCode == HttpStatusCode.OK, $"batch {batch} ({(ndjson ? "NDJSON" : "JSON")}) → {(int)response.StatusCode}: {text[..Math.Min(500, text.Length)]}");
            var answers = ndjson
                ? text.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement.Clone()).ToArray()
                : JsonDocument.Parse(text).RootElement.GetProperty("results").EnumerateArray().Select(e => e.Clone()).ToArray();
            Assert.Equal(BatchItems, answers.Length);
            for (var i = 0; i < answers.Length; i++)
            {
                var status = answers[i].GetProperty("status").GetInt32();
                Assert.Equal(i, answers[i].GetProperty("index").GetInt32());
                statuses[status] = statuses.GetValueOrDefault(status) + 1;
                Assert.True(status is 200 or 400 or 422, $"item {i} of batch {batch} → {status}: {answers[i]}; sent {items[i]}");
                if (status == 200)
                {
                    ok++;
                }
                else
                {
                    // A refusal names the field it is about (the problem is keyed by the request's path).
                    Assert.True(answers[i].GetProperty("problem").GetProperty("errors").EnumerateObject().Any(), answers[i].ToString());
                }
            }
        }

        Assert.Equal(before + ok, await CountAsync());
        Assert.True(statuses.GetValueOrDefault(200) > 0 && statuses.GetValueOrDefault(422) > 0, "the generator reached too few outcomes: " + string.Join(", ", statuses));
    }

    private async Task<HttpResponseMessage> PostAsync(string body, string mediaType)
    {
        using var client = factory.CreateClient();
        using var content = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
        content.Headers.ContentType = new MediaTypeHeaderValue(mediaType);
        return await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content);
    }

    private async Task<int> CountAsync()
    {
        var store = factory.Services.GetRequiredService<IAuditStore>();
        var n = 0;
        await foreach (var _ in store.QueryAsync(new AuditQuery(), CancellationToken.None))
        {
            n++;
        }

        return n;
    }
}
