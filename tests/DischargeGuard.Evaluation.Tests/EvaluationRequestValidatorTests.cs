using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Validation;
using FluentValidation.Results;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

public sealed class EvaluationRequestValidatorTests
{
    private static readonly EvaluationRequestValidator Validator = new();

    private static StageInput First => AirStage();

    private static StageInput CooledStage(string discharge = "900 kPa(a)") => new()
    {
        Intercooler = new IntercoolerInput { OutletTemperature = Q("40 °C"), PressureDrop = Q("20 kPa") },
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        Efficiency = new EfficiencyInput { Isentropic = 0.80 },
    };

    private static EvaluationRequest WithStage(Func<StageInput, StageInput> change) => AirRequest(change(First));

    private static EvaluationRequest WithGas(GasInput gas) => AirRequest() with { Gas = gas };

    private static List<ValidationFailure> Failures(EvaluationRequest request) => Validator.Validate(request).Errors;

    /// <summary>
    /// Asserts one failure at <paramref name="path"/> whose message contains every fragment. Paths compare without case:
    /// FluentValidation names properties as declared (Stages[0].Suction) and the host writes them camelCase.
    /// </summary>
    private static ValidationFailure AssertRefused(EvaluationRequest request, string path, params string[] fragments)
    {
        var failures = Failures(request);
        var listing = string.Join(Environment.NewLine, failures.Select(f => $"  {f.PropertyName}: {f.ErrorMessage}"));
        var atPath = failures.Where(f => string.Equals(f.PropertyName, path, StringComparison.OrdinalIgnoreCase)).ToList();
        Assert.True(atPath.Count > 0, $"No failure at '{path}'. Failures:{Environment.NewLine}{listing}");
        var match = atPath.FirstOrDefault(f => fragments.All(x => f.ErrorMessage.Contains(x, StringComparison.Ordinal)));
        Assert.True(match is not null, $"No failure at '{path}' containing [{string.Join("], [", fragments)}]. Failures:{Environment.NewLine}{listing}");
        return match!;
    }

    [Fact]
    public void Validate_WhenRequestIsComplete_Passes()
    {
        var request = AirRequest(First, CooledStage()) with
        {
            Service = "general",
            Method = "auto",
            OutputUnits = "metric",
            Flow = new FlowInput { Mass = Q("2.5 kg/s") },
            Gas = new GasInput { Composition = new Dictionary<string, double> { ["N2"] = 0.79, ["oxygen"] = 0.21 }, RelativeHumidity = 0.6 },
        };
        var failures = Failures(request);
        Assert.True(failures.Count == 0, string.Join("; ", failures.Select(f => f.PropertyName + ": " + f.ErrorMessage)));
    }

    [Fact]
    public void Validate_WhenAssetMissing_RefusesAsset()
    {
        AssertRefused(AirRequest() with { Asset = null }, "asset", "asset tag", "K-101A");
    }

    [Theory]
    [InlineData("K-101A;DROP")]
    [InlineData("-K101")]
    [InlineData("K<101>")]
    public void Validate_WhenAssetHasForbiddenCharacters_RefusesAsset(string asset)
    {
        AssertRefused(AirRequest() with { Asset = asset }, "asset", "letters, digits");
    }

    [Fact]
    public void Validate_WhenSiteHasElevationAndBarometricPressure_RefusesBoth()
    {
        var request = AirRequest() with { Site = new SiteInput { Id = Site, Elevation = Q("350 m"), BarometricPressure = Q("98.6 kPa") } };
        AssertRefused(request, "site.barometricPressure", "not both");
    }

    [Fact]
    public void Validate_WhenBarometricPressureIsGauge_RefusesIt()
    {
        var request = AirRequest() with { Site = new SiteInput { Id = Site, BarometricPressure = Q("98.6 kPa(g)") } };
        AssertRefused(request, "site.barometricPressure", "'98.6 kPa(g)'", "absolute by nature");
    }

    [Fact]
    public void Validate_WhenGaugeStatePressureWithoutSite_NamesTheSuctionPressure()
    {
        var request = AirRequest(AirStage(suction: "0.5 barg")) with { Site = null };
        AssertRefused(request, "stages[0].suction.pressure", "'0.5 barg' is a gauge pressure", "site.barometricPressure", "site.elevation");
        Assert.DoesNotContain(Failures(request), f => f.PropertyName.Contains("discharge", StringComparison.OrdinalIgnoreCase));
    }

    [Fact]
    public void Validate_WhenGaugeDischargeWithSiteWithoutBarometer_NamesTheDischargePressure()
    {
        var request = AirRequest(AirStage(discharge: "3 barg")) with { Site = new SiteInput { Id = Site } };
        AssertRefused(request, "stages[0].discharge.pressure", "'3 barg' is a gauge pressure");
    }

    [Theory]
    [InlineData("3 bar")]
    [InlineData("300 kPa")]
    [InlineData("45 psi")]
    public void Validate_WhenStatePressureHasNoBasis_RefusesAndListsTheBases(string pressure)
    {
        AssertRefused(AirRequest(AirStage(discharge: pressure)), "stages[0].discharge.pressure", $"'{pressure}'", "bara", "barg", "ambiguous");
    }

    [Fact]
    public void Validate_WhenPressureUsesDecimalComma_Refuses()
    {
        AssertRefused(AirRequest(AirStage(suction: "14,7 psia")), "stages[0].suction.pressure", "'14,7 psia'", "Accepted units:", "psia");
    }

    [Fact]
    public void Validate_WhenUnitUnknown_RefusesAndListsAcceptedUnits()
    {
        AssertRefused(AirRequest(AirStage(temperature: "35 degrees")), "stages[0].suction.temperature", "'35 degrees'", "Accepted units:", "°C", "K", "°F");
    }

    [Fact]
    public void Validate_WhenApproachWrittenAsTemperaturePoint_RefusesAsNotADifference()
    {
        var cooled = CooledStage() with { Intercooler = new IntercoolerInput { Approach = Q("10 °C"), CoolantTemperature = Q("30 °C") } };
        AssertRefused(AirRequest(First, cooled), "stages[1].intercooler.approach", "'10 °C'", "Accepted units:", "Δ°C");
    }

    [Fact]
    public void Validate_WhenFirstStageHasNoSuction_Refuses()
    {
        AssertRefused(WithStage(s => s with { Suction = null }), "stages[0].suction", "first stage needs its suction");
    }

    [Fact]
    public void Validate_WhenFirstStageHasIntercooler_Refuses()
    {
        var request = WithStage(s => s with { Intercooler = new IntercoolerInput { OutletTemperature = Q("40 °C") } });
        AssertRefused(request, "stages[0].intercooler", "later stage");
    }

    [Fact]
    public void Validate_WhenLaterStageHasIntercoolerAndSuction_Refuses()
    {
        var both = CooledStage() with { Suction = new SuctionInput { Pressure = Q("280 kPa(a)"), Temperature = Q("40 °C") } };
        AssertRefused(AirRequest(First, both), "stages[1].intercooler", "never both");
    }

    [Fact]
    public void Validate_WhenLaterStageHasNeitherIntercoolerNorSuction_Refuses()
    {
        AssertRefused(AirRequest(First, CooledStage() with { Intercooler = null }), "stages[1]", "either an intercooler", "its own suction", "fedDirectly");
    }

    [Fact]
    public void Validate_WhenEfficiencyGivesBothKinds_Refuses()
    {
        var request = WithStage(s => s with { Efficiency = new EfficiencyInput { Isentropic = 0.8, Polytropic = 0.82 } });
        AssertRefused(request, "stages[0].efficiency.isentropic", "either an isentropic or a polytropic");
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(1.2)]
    [InlineData(-0.1)]
    public void Validate_WhenIsentropicEfficiencyOutsideZeroToOne_Refuses(double value)
    {
        AssertRefused(WithStage(s => s with { Efficiency = new EfficiencyInput { Isentropic = value } }), "stages[0].efficiency.isentropic", "(0, 1]");
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(1.2)]
    public void Validate_WhenPolytropicEfficiencyOutsideZeroToOne_Refuses(double value)
    {
        AssertRefused(WithStage(s => s with { Efficiency = new EfficiencyInput { Polytropic = value } }), "stages[0].efficiency.polytropic", "(0, 1]");
    }

    [Fact]
    public void Validate_WhenUncertaintyAtLeastHalf_Refuses()
    {
        AssertRefused(WithStage(s => s with { Efficiency = new EfficiencyInput { Isentropic = 0.8, Uncertainty = 0.5 } }), "stages[0].efficiency.uncertainty", "0.5");
    }

    [Fact]
    public void Validate_WhenUncertaintyNegative_Refuses()
    {
        AssertRefused(WithStage(s => s with { Efficiency = new EfficiencyInput { Isentropic = 0.8, Uncertainty = -0.02 } }), "stages[0].efficiency.uncertainty", "absolute points");
    }

    [Fact]
    public void Validate_WhenUncertaintyLeavesNoPositiveEfficiency_Refuses()
    {
        AssertRefused(WithStage(s => s with { Efficiency = new EfficiencyInput { Isentropic = 0.3, Uncertainty = 0.35 } }), "stages[0].efficiency.uncertainty", "positive lower efficiency");
    }

    [Fact]
    public void Validate_WhenPresetUnknown_RefusesAndListsPresets()
    {
        AssertRefused(WithGas(new GasInput { Preset = "town-gas" }), "gas.preset", "Unknown preset", "'dry-air'", "'methane'");
    }

    [Fact]
    public void Validate_WhenPresetAndComposition_Refuses()
    {
        var gas = new GasInput { Preset = "dry-air", Composition = new Dictionary<string, double> { ["N2"] = 1.0 } };
        AssertRefused(WithGas(gas), "gas.preset", "one of the two");
    }

    [Fact]
    public void Validate_WhenNeitherPresetNorComposition_Refuses()
    {
        AssertRefused(WithGas(new GasInput()), "gas.preset", "one of the two");
    }

    [Fact]
    public void Validate_WhenGasMissing_Refuses()
    {
        AssertRefused(AirRequest() with { Gas = null }, "gas", "dry-air");
    }

    [Fact]
    public void Validate_WhenCompositionHasUnknownSpecies_NamesTheSpecies()
    {
        var gas = new GasInput { Composition = new Dictionary<string, double> { ["N2"] = 0.9, ["Xe"] = 0.1 } };
        AssertRefused(WithGas(gas), "gas.composition.Xe", "Unknown species 'Xe'", "CH4");
    }

    [Fact]
    public void Validate_WhenFractionsDoNotSumToOne_StatesTheSum()
    {
        var gas = new GasInput { Composition = new Dictionary<string, double> { ["CH4"] = 0.85, ["C2H6"] = 0.10 } };
        var failure = AssertRefused(WithGas(gas), "gas.composition", "sum to 0.95", "within 0.0001");
        Assert.DoesNotContain("(Parameter", failure.ErrorMessage, StringComparison.Ordinal);
    }

    [Fact]
    public void Validate_WhenFractionAboveOne_NamesTheSpecies()
    {
        var gas = new GasInput { Composition = new Dictionary<string, double> { ["CH4"] = 1.5 } };
        AssertRefused(WithGas(gas), "gas.composition.CH4", "[0, 1]");
    }

    [Fact]
    public void Validate_WhenRelativeHumidityWrittenAsPercent_Refuses()
    {
        AssertRefused(WithGas(new GasInput { Preset = "dry-air", RelativeHumidity = 60 }), "gas.relativeHumidity", "fraction", "0.6 for 60 %");
    }

    [Fact]
    public void Validate_WhenRelativeHumidityAndDewPoint_Refuses()
    {
        AssertRefused(WithGas(new GasInput { Preset = "dry-air", RelativeHumidity = 0.6, DewPoint = Q("20 °C") }), "gas.dewPoint", "not both");
    }

    [Fact]
    public void Validate_WhenFlowGivesMassAndStandardVolume_Refuses()
    {
        var request = AirRequest() with { Flow = new FlowInput { Mass = Q("2 kg/s"), StandardVolume = Q("1200 m³/h"), Reference = "normal" } };
        AssertRefused(request, "flow.mass", "one of the two");
    }

    [Fact]
    public void Validate_WhenStandardVolumeWithoutReference_RefusesAndListsReferences()
    {
        var request = AirRequest() with { Flow = new FlowInput { StandardVolume = Q("1200 m³/h") } };
        AssertRefused(request, "flow.reference", "'normal'", "'iso-13443'", "'us-60f'");
    }

    [Fact]
    public void Validate_WhenStandardVolumeReferenceUnknown_Refuses()
    {
        var request = AirRequest() with { Flow = new FlowInput { StandardVolume = Q("1200 m³/h"), Reference = "ntp" } };
        AssertRefused(request, "flow.reference", "Accepted values", "'normal'");
    }

    [Fact]
    public void Validate_WhenServiceUnknown_RefusesAndListsServices()
    {
        AssertRefused(AirRequest() with { Service = "hydrogen-rich" }, "service", "'general'", "'oxygen'", "detected");
    }

    [Fact]
    public void Validate_WhenMethodUnknown_Refuses()
    {
        AssertRefused(AirRequest() with { Method = "redlich-kwong" }, "method", "'auto'", "'ideal-gas'", "'peng-robinson'", "'gerg-2008'");
    }

    [Fact]
    public void Validate_WhenOutputUnitsUnknown_Refuses()
    {
        AssertRefused(AirRequest() with { OutputUnits = "SI" }, "outputUnits", "'metric'", "'imperial'");
    }

    [Fact]
    public void Validate_WhenMoreThanTwelveStages_Refuses()
    {
        var stages = new[] { First }.Concat(Enumerable.Range(0, 12).Select(_ => CooledStage())).ToArray();
        AssertRefused(AirRequest(stages), "stages", "At most 12 stages");
    }

    [Fact]
    public void Validate_WhenTwelveStages_AcceptsTheCount()
    {
        var stages = new[] { First }.Concat(Enumerable.Range(0, 11).Select(_ => CooledStage())).ToArray();
        Assert.DoesNotContain(Failures(AirRequest(stages)), f => f.PropertyName.Equals("stages", StringComparison.OrdinalIgnoreCase));
    }

    [Fact]
    public void Validate_WhenNoStages_Refuses()
    {
        AssertRefused(AirRequest() with { Stages = [] }, "stages", "at least one stage");
    }
}
