using System.Globalization;
using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace DischargeGuard.Api.Tests;

/// <summary>Reading JSON answers.</summary>
internal static class Json
{
    public static async Task<JsonElement> ReadAsync(HttpResponseMessage response)
    {
        ArgumentNullException.ThrowIfNull(response);
        var bytes = await response.Content.ReadAsByteArrayAsync();
        if (bytes.Length == 0)
        {
            return default;
        }

        using var doc = JsonDocument.Parse(bytes);
        return doc.RootElement.Clone();
    }

    /// <summary>The element at a dotted path; fails naming the path when a member is missing.</summary>
    public static JsonElement At(this JsonElement element, string path)
    {
        var current = element;
        foreach (var part in path.Split('.'))
        {
            var name = part;
            int? index = null;
            var bracket = part.IndexOf('[', StringComparison.Ordinal);
            if (bracket >= 0)
            {
                name = part[..bracket];
                index = int.Parse(part[(bracket + 1)..^1], CultureInfo.InvariantCulture);
            }

            if (name.Length > 0)
            {
                Assert.True(current.ValueKind == JsonValueKind.Object && current.TryGetProperty(name, out current), $"missing '{path}' (at '{name}') in {element}");
            }

            if (index is { } i)
            {
                Assert.True(current.ValueKind == JsonValueKind.Array && current.GetArrayLength() > i, $"missing '{path}' (index {i})");
                current = current[i];
            }
        }

        return current;
    }

    public static bool Has(this JsonElement element, string name) => element.ValueKind == JsonValueKind.Object && element.TryGetProperty(name, out _);
}

/// <summary>Requests a service without keys takes only with the intent header (AnonymousBrowserGuard).</summary>
internal static class Intent
{
    public const string Header = "X-DischargeGuard-Intent";

    /// <summary>POSTs no body to <paramref name="path"/>, saying it is meant (a reload, a replay).</summary>
    public static async Task<HttpResponseMessage> PostWithoutBodyAsync(this HttpClient client, string path)
    {
        ArgumentNullException.ThrowIfNull(client);
        using var request = new HttpRequestMessage(HttpMethod.Post, new Uri(path, UriKind.RelativeOrAbsolute));
        request.Headers.Add(Header, "1");
        return await client.SendAsync(request);
    }
}

/// <summary>Assertions that say what was expected, what came and by how much they differ.</summary>
internal static class AssertEx
{
    public static void Near(double expected, double actual, double tolerance, string what = "")
    {
        var difference = actual - expected;
        Assert.True(
            Math.Abs(difference) <= tolerance,
            string.Create(CultureInfo.InvariantCulture, $"{what}: expected {expected:R} ± {tolerance:R}, actual {actual:R}, difference {difference:R}"));
    }

    /// <summary>A quantity object {"value": number, "unit": unit}; returns the value.</summary>
    public static double Quantity(JsonElement q, string unit, string what = "")
    {
        Assert.True(q.ValueKind == JsonValueKind.Object, $"{what}: not a quantity object: {q}");
        Assert.Equal(JsonValueKind.Number, q.GetProperty("value").ValueKind);
        Assert.Equal(unit, q.GetProperty("unit").GetString());
        return q.GetProperty("value").GetDouble();
    }

    /// <summary>A problem-details body with this status and stable type; returns the body.</summary>
    public static async Task<JsonElement> ProblemAsync(HttpResponseMessage response, HttpStatusCode status, string code)
    {
        ArgumentNullException.ThrowIfNull(response);
        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == status, $"expected {(int)status}, got {(int)response.StatusCode}: {text}");
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        var body = JsonDocument.Parse(text).RootElement.Clone();
        Assert.Equal("urn:dischargeguard:problem:" + code, body.GetProperty("type").GetString());
        Assert.Equal((int)status, body.GetProperty("status").GetInt32());
        Assert.Equal(code, body.GetProperty("code").GetString());
        Assert.False(string.IsNullOrWhiteSpace(body.GetProperty("title").GetString()));
        return body;
    }

    /// <summary>The problem's <c>errors</c> has exactly these keys; returns the first message of <paramref name="key"/>.</summary>
    public static string Error(JsonElement problem, string key)
    {
        var errors = problem.GetProperty("errors");
        var keys = errors.EnumerateObject().Select(p => p.Name).ToArray();
        Assert.True(errors.TryGetProperty(key, out var messages), $"errors has no '{key}'; it has: {string.Join(", ", keys)}");
        Assert.Single(keys);
        return messages[0].GetString()!;
    }
}

/// <summary>Invented requests: Harrow Basin Gas Co., site kestrel-ridge, air booster K-101A.</summary>
internal static class Requests
{
    /// <summary>
    /// One air stage that passes every rule with inputs for all of them: 100 kPa(a), 35 °C to 230 kPa(a), ηs 0.80 ± 0.03,
    /// lubricated recip, mineral VDL oil, PEEK valves, FKM seals, jacket water 45 °C, a measured discharge temperature.
    /// </summary>
    public static JsonObject PassingStage() => JsonNode.Parse("""
    {
      "asset": "K-101A",
      "site": {"id": "kestrel-ridge", "barometricPressure": "100 kPa"},
      "service": "general",
      "gas": {"preset": "dry-air"},
      "method": "ideal-gas",
      "outputUnits": "metric",
      "flow": {"mass": "2.5 kg/s"},
      "stages": [
        {
          "suction": {"pressure": "100 kPa(a)", "temperature": "35 °C"},
          "discharge": {"pressure": "230 kPa(a)"},
          "efficiency": {"isentropic": 0.80, "uncertainty": 0.01},
          "equipment": {"compressorType": "recip-lubricated", "lubricant": "mineral-vdl", "valveMaterial": "peek", "sealMaterial": "fkm"},
          "operation": {"normalDischargeTemperature": "128 °C", "coolantInletTemperature": "45 °C", "unloadedRunning": false},
          "measured": {"dischargeTemperature": "132 °C"}
        }
      ]
    }
    """)!.AsObject();

    /// <summary>The smallest valid request: dry air, absolute pressures, an efficiency.</summary>
    public static JsonObject Minimal(string suctionPressure = "1 bara", string suctionTemperature = "35 °C", string dischargePressure = "3 bara") => new()
    {
        ["asset"] = "K-101A",
        ["gas"] = new JsonObject { ["preset"] = "dry-air" },
        ["stages"] = new JsonArray(new JsonObject
        {
            ["suction"] = new JsonObject { ["pressure"] = suctionPressure, ["temperature"] = suctionTemperature },
            ["discharge"] = new JsonObject { ["pressure"] = dischargePressure },
            ["efficiency"] = new JsonObject { ["isentropic"] = 0.8 },
        }),
    };

    public static JsonObject Stage(this JsonObject request, int index) => request["stages"]![index]!.AsObject();
}
