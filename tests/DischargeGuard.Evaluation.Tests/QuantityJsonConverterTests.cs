using System.Text.Json;
using DischargeGuard.Evaluation.Contract;
using UnitsNet;

namespace DischargeGuard.Evaluation.Tests;

public sealed class QuantityJsonConverterTests
{
    private static readonly JsonSerializerOptions Options = Create();

    private sealed record Holder(Temperature T, TemperatureDelta D, Pressure P, MassFlow M, Length L);

    [Fact]
    public void UnitsNetQuantities_RoundTripThroughJson_InBothForms()
    {
        var original = new Holder(
            Temperature.FromDegreesFahrenheit(300),
            TemperatureDelta.FromDegreesFahrenheit(18),
            Pressure.FromPoundsForcePerSquareInch(14.696),
            MassFlow.FromKilogramsPerHour(9000),
            Length.FromFeet(1000));
        var json = JsonSerializer.Serialize(original, Options);
        var back = JsonSerializer.Deserialize<Holder>(json, Options)!;

        // 300 °F = 148.888… °C; 18 Δ°F = 10 K; 14.696 psi = 101.325… kPa (1 psi = 6.894757293168361 kPa, NIST SP 811);
        // 9000 kg/h = 2.5 kg/s; 1000 ft = 304.8 m exactly (international foot).
        Assert.Equal(original.T.Kelvins, back.T.Kelvins, 9);
        Assert.Equal(10.0, back.D.Kelvins, 9);
        Assert.Equal(14.696 * 6.894757293168361, back.P.Kilopascals, 9);
        Assert.Equal(2.5, back.M.KilogramsPerSecond, 12);
        Assert.Equal(304.8, back.L.Meters, 9);
        Assert.Contains("\"T\":{\"value\":148.88", json, StringComparison.Ordinal);
        Assert.Contains("\"unit\":\"°C\"", json, StringComparison.Ordinal);

        var fromStrings = JsonSerializer.Deserialize<Holder>("""{"T":"300 °F","D":"18 Δ°F","P":"14.696 psia","M":"9000 kg/h","L":"1000 ft"}""", Options)!;
        Assert.Equal(original.T.Kelvins, fromStrings.T.Kelvins, 9);
        Assert.Equal(back.P.Pascals, fromStrings.P.Pascals, 6);
    }

    [Theory]
    [InlineData("""{"T":"300 °F","D":"18 °F","P":"1 bara","M":"1 kg/s","L":"1 m"}""", "difference")] // °F is a point, not a difference
    [InlineData("""{"T":"300 °F","D":"18 K","P":"1 barg","M":"1 kg/s","L":"1 m"}""", "absolute")]   // gauge refused without a barometer
    [InlineData("""{"T":"300 °F","D":"18 K","P":"1 bar","M":"1 kg/s","L":"1 m"}""", "absolute")]    // basis not stated
    [InlineData("""{"T":"14,7 °C","D":"18 K","P":"1 bara","M":"1 kg/s","L":"1 m"}""", "comma")]     // no decimal comma
    [InlineData("""{"T":12,"D":"18 K","P":"1 bara","M":"1 kg/s","L":"1 m"}""", "quantity")]         // a bare number has no unit
    public void UnitsNetQuantities_WhenTextIsAmbiguous_AreRefused(string json, string expectedWord)
    {
        var ex = Assert.Throws<JsonException>(() => JsonSerializer.Deserialize<Holder>(json, Options));
        Assert.Contains(expectedWord, ex.Message, StringComparison.OrdinalIgnoreCase);
    }

    private static JsonSerializerOptions Create()
    {
        var o = new JsonSerializerOptions { Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping };
        foreach (var c in QuantityJsonConverters.All())
        {
            o.Converters.Add(c);
        }

        return o;
    }
}
