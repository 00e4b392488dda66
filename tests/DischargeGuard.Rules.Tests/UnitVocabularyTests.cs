using DischargeGuard.Rules.Units;
using UnitsNet;

namespace DischargeGuard.Rules.Tests;

public class UnitVocabularyTests
{
    private static readonly UnitVocabulary Units = UnitVocabulary.Default;

    [Theory]
    // Celsius/Fahrenheit/Rankine to kelvin: exact definitions (BIPM SI Brochure, 9th ed., K = °C + 273.15; °F = 1.8·°C + 32; °R = 1.8·K).
    [InlineData("150 °C", 423.15)]
    [InlineData("300 °F", 422.0388888888889)]
    [InlineData("420 K", 420.0)]
    [InlineData("671.67 °R", 373.15)]
    [InlineData("150 degC", 423.15)]
    [InlineData("150°C", 423.15)]
    [InlineData("1.5e2 °C", 423.15)]
    public void TryParseTemperature_WhenAcceptedToken_ReturnsKelvin(string text, double kelvin)
    {
        Assert.True(Units.TryParseTemperature(text, out var t, out var error), error?.ToString());
        AssertEx.Close(kelvin, t.Kelvins, 1e-9, text);
    }

    [Theory]
    // 1 Δ°F = 5/9 K (exact, by definition of the Fahrenheit degree).
    [InlineData("50 K", 50.0)]
    [InlineData("90 Δ°F", 50.0)]
    [InlineData("12 Δ°C", 12.0)]
    [InlineData("9 delta-degF", 5.0)]
    public void TryParseTemperatureDifference_WhenAcceptedToken_ReturnsKelvin(string text, double kelvin)
    {
        Assert.True(Units.TryParseTemperatureDifference(text, out var d, out var error), error?.ToString());
        AssertEx.Close(kelvin, d.Kelvins, 1e-9, text);
    }

    [Theory]
    [InlineData("10 °C")]
    [InlineData("18 °F")]
    public void TryParseTemperatureDifference_WhenPointScaleUnit_ExplainsWhy(string text)
    {
        Assert.False(Units.TryParseTemperatureDifference(text, out _, out var error));
        Assert.Contains("different things", error!.Problem, StringComparison.Ordinal);
        Assert.Contains("K", error.AcceptedTokens);
    }

    [Fact]
    public void TryParseTemperature_WhenDecimalComma_IsErrorNot147()
    {
        Assert.False(Units.TryParse("14,7 psi", QuantityKind.Pressure, out _, out var error));
        Assert.Contains("comma", error!.Problem, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("150")]
    [InlineData("150 C")]
    [InlineData("50 ΔK")]
    [InlineData("")]
    [InlineData("-300 °C")]
    public void TryParseTemperature_WhenBadInput_Fails(string text)
    {
        Assert.False(Units.TryParseTemperature(text, out _, out var error));
        Assert.NotNull(error);
    }

    [Theory]
    // 1 psi = 6894.757293168 Pa (NIST SP 811, Appendix B.8); 1 bar = 1e5 Pa; 1 atm = 101325 Pa (exact).
    [InlineData("12.5 bara", 1.25e6, PressureBasis.Absolute)]
    [InlineData("100 psig", 689475.7293168, PressureBasis.Gauge)]
    [InlineData("101.325 kPa(a)", 101325.0, PressureBasis.Absolute)]
    [InlineData("1 atm", 101325.0, PressureBasis.Absolute)]
    [InlineData("2 MPa(g)", 2e6, PressureBasis.Gauge)]
    [InlineData("5 bar", 5e5, PressureBasis.NotStated)]
    public void TryParsePressure_WhenAccepted_ReturnsPascalAndBasis(string text, double pascal, PressureBasis basis)
    {
        Assert.True(Units.TryParsePressure(text, out var p, out var b, out var error), error?.ToString());
        AssertEx.Close(pascal, p.Pascals, 1e-6, text);
        Assert.Equal(basis, b);
    }

    [Fact]
    public void TryParse_WhenWrongCase_SuggestsToken()
    {
        Assert.False(Units.TryParse("2 mpa", QuantityKind.PressureDifference, out _, out var error));
        Assert.Contains("'MPa'", error!.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_WhenStandardVolumeFlow_RefusedWithReason()
    {
        Assert.False(Units.TryParse("500 Nm³/h", QuantityKind.VolumeFlow, out _, out var error));
        Assert.Contains("reference conditions", error!.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_WhenGaugeMarkOnDifference_Refused()
    {
        Assert.False(Units.TryParse("0.5 barg", QuantityKind.PressureDifference, out _, out var error));
        Assert.Contains("no basis", error!.Problem, StringComparison.Ordinal);
    }

    [Theory]
    // 1 lb = 0.45359237 kg (exact, international pound); 1 ft = 0.3048 m (exact); 1 hp (mechanical) = 745.69987158227022 W (550 ft·lbf/s).
    [InlineData("3600 lb/h", QuantityKind.MassFlow, 0.45359237)]
    [InlineData("1000 ft", QuantityKind.Length, 304.8)]
    [InlineData("1 lb/s", QuantityKind.MassFlow, 0.45359237)]
    [InlineData("1 hp", QuantityKind.Power, 745.69987158227022)]
    [InlineData("12 g/mol", QuantityKind.MolarMass, 0.012)]
    [InlineData("23.5 %", QuantityKind.Fraction, 0.235)]
    public void TryParse_WhenOtherKinds_ConvertsToSi(string text, QuantityKind kind, double si)
    {
        Assert.True(Units.TryParse(text, kind, out var q, out var error), error?.ToString());
        var value = q!.Quantity switch
        {
            MassFlow m => (double)m.KilogramsPerSecond,
            Length l => l.Meters,
            Power p => (double)p.Watts,
            MolarMass mm => mm.KilogramsPerMole,
            Ratio r => r.DecimalFractions,
            _ => double.NaN,
        };
        AssertEx.Close(si, value, 1e-9 * Math.Max(1, Math.Abs(si)), text);
    }

    [Fact]
    public void With_WhenTokenAdded_ParsesIt()
    {
        var extended = Units.With([new UnitToken("kgf/cm²(g)", QuantityKind.Pressure, UnitsNet.Units.PressureUnit.KilogramForcePerSquareCentimeter, PressureBasis.Gauge, "kilogram-force per cm², gauge")]);
        Assert.True(extended.TryParsePressure("1 kgf/cm²(g)", out var p, out var basis, out _));
        // 1 kgf/cm² = 98066.5 Pa (exact: standard gravity 9.80665 m/s², CGPM 1901).
        AssertEx.Close(98066.5, p.Pascals, 1e-6);
        Assert.Equal(PressureBasis.Gauge, basis);
        Assert.False(Units.TryParsePressure("1 kgf/cm²(g)", out _, out _, out _));
    }

    [Theory]
    [InlineData("1e308 bara")]
    [InlineData("-1e16 kPa")]
    [InlineData("2e15 °C")]
    public void TryParse_WhenNumberIsBeyondAnyPhysicalValue_RefusesBeforeConvertingToSi(string text)
    {
        var kind = text.EndsWith("°C", StringComparison.Ordinal) ? QuantityKind.Temperature : QuantityKind.Pressure;

        Assert.False(Units.TryParse(text, kind, out _, out var error));
        Assert.Contains("beyond any physical value", error!.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_WhenNumberIsLargeButBelowTheCap_ConvertsToAFiniteSiValue()
    {
        Assert.True(Units.TryParse("1e15 bara", QuantityKind.Pressure, out var q, out _));
        Assert.True(double.IsFinite(((UnitsNet.Pressure)q!.Quantity).Pascals));
    }
}
