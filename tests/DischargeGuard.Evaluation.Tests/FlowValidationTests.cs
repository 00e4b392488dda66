using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Rules.Units;

namespace DischargeGuard.Evaluation.Tests;

public sealed class FlowValidationTests
{
    private static readonly FlowInputValidator Validator = new(UnitVocabulary.Default);

    [Theory]
    [InlineData("1200 Nm³/h")]
    [InlineData("700 scfm")]
    public void StandardVolume_WithReferenceInTheUnit_AsksForTheReferenceField(string text)
    {
        var result = Validator.Validate(new FlowInput { StandardVolume = new QuantityInput(text), Reference = "normal" });
        var error = Assert.Single(result.Errors);
        Assert.Equal("StandardVolume", error.PropertyName);
        Assert.Contains("flow.reference", error.ErrorMessage, StringComparison.Ordinal);
    }

    [Fact]
    public void StandardVolume_InCubicMetresPerHourWithReference_IsAccepted() =>
        Assert.True(Validator.Validate(new FlowInput { StandardVolume = new QuantityInput("1200 m³/h"), Reference = "iso-13443" }).IsValid);

    [Fact]
    public void StandardVolume_WithUnknownUnit_ListsAcceptedUnits()
    {
        var error = Assert.Single(Validator.Validate(new FlowInput { StandardVolume = new QuantityInput("1200 gal/min"), Reference = "normal" }).Errors);
        Assert.Contains("m³/h", error.ErrorMessage, StringComparison.Ordinal);
    }
}
