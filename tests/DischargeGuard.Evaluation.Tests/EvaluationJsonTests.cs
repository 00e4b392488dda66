using System.Text.Json;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Evaluation.Tests;

public sealed class EvaluationJsonTests
{
    private const string FullRequest = """
        {
          "asset": "K-101A",
          "site": { "id": "kestrel-ridge", "barometricPressure": "98.6 kPa" },
          "service": "general",
          "gas": { "composition": { "N2": 0.79, "O2": 0.21 }, "basis": "mole", "relativeHumidity": 0.6 },
          "method": "ideal-gas",
          "outputUnits": "imperial",
          "flow": { "standardVolume": "1200 m³/h", "reference": "normal" },
          "stages": [
            {
              "suction": { "pressure": "0.5 barg", "temperature": { "value": 35, "unit": "°C" } },
              "discharge": { "pressure": "3.2 barg" },
              "efficiency": { "isentropic": 0.8, "uncertainty": 0.03 },
              "equipment": { "compressorType": "recip-lubricated", "lubricant": "mineral-vdl", "valveMaterial": "peek", "sealMaterial": "fkm" },
              "operation": { "normalDischargeTemperature": "150 °C", "coolantInletTemperature": "40 °C", "unloadedRunning": false },
              "measured": { "dischargeTemperature": "155 °C" }
            },
            {
              "intercooler": { "approach": "10 K", "coolantTemperature": "30 °C", "pressureDrop": "2 %" },
              "discharge": { "pressure": "12 barg" },
              "efficiency": { "polytropic": 0.82 }
            }
          ]
        }
        """;

    private static EvaluationRequest? Read(string json) => JsonSerializer.Deserialize<EvaluationRequest>(json, EvaluationJson.Options);

    [Fact]
    public void Deserialize_WhenUnknownProperty_ThrowsJsonException()
    {
        Assert.Throws<JsonException>(() => Read("{\"asset\": \"K-101A\", \"assetTag\": \"K-101A\"}"));
    }

    [Fact]
    public void Deserialize_WhenUnknownNestedProperty_ThrowsJsonException()
    {
        Assert.Throws<JsonException>(() => Read("{\"stages\": [{\"discharge\": {\"pressure\": \"3 bara\", \"temperature\": \"90 °C\"}}]}"));
    }

    [Theory]
    [InlineData("{\"gas\": {\"relativeHumidity\": NaN}}")]
    [InlineData("{\"gas\": {\"relativeHumidity\": \"NaN\"}}")]
    [InlineData("{\"gas\": {\"relativeHumidity\": Infinity}}")]
    [InlineData("{\"gas\": {\"relativeHumidity\": \"-Infinity\"}}")]
    [InlineData("{\"stages\": [{\"efficiency\": {\"isentropic\": \"0.8\"}}]}")]
    public void Deserialize_WhenNonFiniteOrQuotedNumber_ThrowsJsonException(string json)
    {
        Assert.Throws<JsonException>(() => Read(json));
    }

    [Fact]
    public void Deserialize_WhenComment_ThrowsJsonException()
    {
        Assert.Throws<JsonException>(() => Read("{\"asset\": \"K-101A\" /* tag */}"));
    }

    [Fact]
    public void Deserialize_WhenTrailingComma_ThrowsJsonException()
    {
        Assert.Throws<JsonException>(() => Read("{\"asset\": \"K-101A\",}"));
    }

    [Fact]
    public void Deserialize_WhenFullRequest_ReadsEveryPart()
    {
        var r = Read(FullRequest)!;
        Assert.Equal("K-101A", r.Asset);
        Assert.Equal("98.6 kPa", r.Site!.BarometricPressure!.Text);
        Assert.Equal(0.6, r.Gas!.RelativeHumidity);
        Assert.Equal("35 °C", r.Stages![0].Suction!.Temperature!.Text);
        Assert.Equal("2 %", r.Stages[1].Intercooler!.PressureDrop!.Text);
        Assert.Equal(0.82, r.Stages[1].Efficiency!.Polytropic);
        Assert.False(r.Stages[0].Operation!.UnloadedRunning);
    }

    [Fact]
    public void RoundTrip_WhenFullRequest_DeserializesToEqualContent()
    {
        var first = Read(FullRequest)!;
        var json = JsonSerializer.Serialize(first, EvaluationJson.Options);
        var second = Read(json)!;

        // Records compare lists and dictionaries by reference, so compare the canonical serialised forms and a few
        // values; a second serialisation must be byte-identical to the first.
        Assert.Equal(json, JsonSerializer.Serialize(second, EvaluationJson.Options));
        Assert.Equal(first.Site, second.Site);
        Assert.Equal(first.Flow, second.Flow);
        Assert.Equal(first.Stages![0].Suction, second.Stages![0].Suction);
        Assert.Equal(first.Stages[1].Intercooler, second.Stages[1].Intercooler);
        Assert.Equal(first.Gas!.Composition, second.Gas!.Composition);
        Assert.Contains("\"temperature\":\"35 °C\"", json, StringComparison.Ordinal);
    }

    [Fact]
    public void Serialize_WhenResponseHasUnitSymbols_WritesThemUnescaped()
    {
        var request = Scenario.AirRequest() with { OutputUnits = "imperial" };
        var json = JsonSerializer.Serialize(Scenario.Evaluate(request), EvaluationJson.Options);
        Assert.Contains("°F", json, StringComparison.Ordinal);
        Assert.Contains("Δ°F", json, StringComparison.Ordinal);
        Assert.DoesNotContain("\\u00B0", json, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("\\u0394", json, StringComparison.OrdinalIgnoreCase);

        var metric = JsonSerializer.Serialize(Scenario.Evaluate(Scenario.AirRequest()), EvaluationJson.Options);
        Assert.Contains("\"unit\":\"°C\"", metric, StringComparison.Ordinal);
    }

    [Fact]
    public void Serialize_WhenResponseHasNoFlow_OmitsNullPower()
    {
        var json = JsonSerializer.Serialize(Scenario.Evaluate(Scenario.AirRequest()), EvaluationJson.Options);
        Assert.DoesNotContain("\"power\"", json, StringComparison.Ordinal);
    }
}
