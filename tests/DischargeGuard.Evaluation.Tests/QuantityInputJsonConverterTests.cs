using System.Text.Json;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Evaluation.Tests;

public sealed class QuantityInputJsonConverterTests
{
    private static QuantityInput Read(string json) => JsonSerializer.Deserialize<QuantityInput>(json, EvaluationJson.Options)!;

    [Fact]
    public void Read_WhenString_KeepsTextAsWritten()
    {
        Assert.Equal("1.5 barg", Read("\"1.5 barg\"").Text);
    }

    [Fact]
    public void Read_WhenObjectForm_BuildsInvariantText()
    {
        Assert.Equal("35 °C", Read("{\"value\": 35, \"unit\": \"°C\"}").Text);
    }

    [Fact]
    public void Read_WhenObjectFormWithFraction_UsesDecimalPointAndRoundTripDigits()
    {
        Assert.Equal("0.1 MPa(a)", Read("{\"unit\": \"MPa(a)\", \"value\": 0.1}").Text);
    }

    [Theory]
    [InlineData("35")]
    [InlineData("[35, \"°C\"]")]
    [InlineData("true")]
    [InlineData("{\"value\": 35, \"unit\": \"°C\", \"basis\": \"gauge\"}")]
    [InlineData("{\"value\": 35}")]
    [InlineData("{\"unit\": \"°C\"}")]
    [InlineData("{}")]
    [InlineData("{\"value\": \"35\", \"unit\": \"°C\"}")]
    [InlineData("{\"value\": 35, \"unit\": 7}")]
    public void Read_WhenNotStringOrValueUnitObject_ThrowsJsonException(string json)
    {
        Assert.Throws<JsonException>(() => Read(json));
    }

    [Fact]
    public void Write_WhenQuantity_WritesStringForm()
    {
        var json = JsonSerializer.Serialize(QuantityInput.Of(35, "°C"), EvaluationJson.Options);
        Assert.Equal("\"35 °C\"", json);
    }
}
