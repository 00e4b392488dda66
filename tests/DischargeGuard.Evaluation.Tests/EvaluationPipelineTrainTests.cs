using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Thermo;
using UnitsNet;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>Trains, intercoolers, humidity and condensate: the pipeline must add no physics to the Thermo core.</summary>
public sealed class EvaluationPipelineTrainTests
{
    private const double Rounding = 0.0005 + 1e-9;

    private static readonly GasMixture DryAir = GasCatalog.Default.Preset("dry-air");

    private static StageInput Cooled(IntercoolerInput cooler, string discharge) => new()
    {
        Intercooler = cooler,
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        Efficiency = new EfficiencyInput { Polytropic = 0.82 },
        Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl" },
    };

    private static void AssertStagesEqual(TrainStageResult[] direct, EvaluationResponse response)
    {
        Assert.Equal(direct.Length, response.Stages.Count);
        for (var i = 0; i < direct.Length; i++)
        {
            var d = direct[i].Stage;
            var s = response.Stages[i];
            AssertEx.Within(d.SuctionPressure.Kilopascals, s.Suction.PressureAbsolute.Value, Rounding, $"stage {i} suction pressure");
            AssertEx.Within(d.SuctionTemperature.DegreesCelsius, s.Suction.Temperature.Value, Rounding, $"stage {i} suction temperature");
            AssertEx.Within(d.IsentropicDischargeTemperature.DegreesCelsius, s.DischargeTemperature!.Isentropic.Value, Rounding, $"stage {i} isentropic");
            AssertEx.Within(d.EstimatedDischargeTemperature.DegreesCelsius, s.DischargeTemperature!.Estimated.Value, Rounding, $"stage {i} estimated");
        }
    }

    [Fact]
    public void Evaluate_WhenIntercoolerOutletAndKilopascalDrop_EqualsTrainSolver()
    {
        var stage2 = Cooled(new IntercoolerInput { OutletTemperature = Q("40 °C"), PressureDrop = Q("20 kPa") }, "900 kPa(a)");
        var response = Evaluate(AirRequest(AirStage(), stage2) with { Method = "ideal-gas" }); // the oracle is the ideal-gas train solver
        var direct = TrainSolver.Solve(DryAir,
        [
            new TrainStage(Pressure.FromKilopascals(300), StageEfficiency.Isentropic(0.80), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(35)),
            new TrainStage(Pressure.FromKilopascals(900), StageEfficiency.Polytropic(0.82), Intercooler.ToOutlet(Temperature.FromDegreesCelsius(40), PressureDrop.Absolute(Pressure.FromKilopascals(20)))),
        ]);

        AssertStagesEqual(direct, response);

        // The second stage takes 300 − 20 kPa at the cooler outlet.
        AssertEx.Within(280.0, response.Stages[1].Suction.PressureAbsolute.Value, Rounding);
        AssertEx.Within(40.0, response.Stages[1].Suction.Temperature.Value, Rounding);
        Assert.Equal("polytropic", response.Stages[1].Efficiency.Given);
        Assert.Null(response.Stages[1].Condensate);
    }

    [Fact]
    public void Evaluate_WhenIntercoolerApproachAndPercentDrop_EqualsTrainSolver()
    {
        var stage2 = Cooled(new IntercoolerInput { Approach = Q("10 K"), CoolantTemperature = Q("30 °C"), PressureDrop = Q("2 %") }, "900 kPa(a)");
        var response = Evaluate(AirRequest(AirStage(), stage2) with { Method = "ideal-gas" }); // the oracle is the ideal-gas train solver
        var direct = TrainSolver.Solve(DryAir,
        [
            new TrainStage(Pressure.FromKilopascals(300), StageEfficiency.Isentropic(0.80), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(35)),
            new TrainStage(Pressure.FromKilopascals(900), StageEfficiency.Polytropic(0.82), Intercooler.WithApproach(TemperatureDelta.FromKelvins(10), Temperature.FromDegreesCelsius(30), PressureDrop.OfUpstream(0.02))),
        ]);

        AssertStagesEqual(direct, response);

        // 300 kPa less 2 % = 294 kPa; 30 °C coolant + 10 K approach = 40 °C gas outlet.
        AssertEx.Within(294.0, response.Stages[1].Suction.PressureAbsolute.Value, Rounding);
        AssertEx.Within(40.0, response.Stages[1].Suction.Temperature.Value, Rounding);
    }

    [Fact]
    public void Evaluate_WhenApproachInFahrenheitDegrees_ConvertsTheDifferenceNotThePoint()
    {
        var stage2 = Cooled(new IntercoolerInput { Approach = Q("18 Δ°F"), CoolantTemperature = Q("30 °C") }, "900 kPa(a)");

        // 18 Δ°F = 10 K (a Fahrenheit degree of difference is 5/9 K, NIST SP 811, B.8).
        AssertEx.Within(40.0, Evaluate(AirRequest(AirStage(), stage2)).Stages[1].Suction.Temperature.Value, Rounding);
    }

    [Fact]
    public void Evaluate_WhenHumidAirThroughCooler_ReportsCondensateAsTrainSolver()
    {
        var stage2 = Cooled(new IntercoolerInput { OutletTemperature = Q("40 °C"), PressureDrop = Q("20 kPa") }, "900 kPa(a)");
        var request = AirRequest(AirStage(), stage2) with
        {
            Gas = new GasInput { Preset = "dry-air", RelativeHumidity = 0.9 },
            Flow = new FlowInput { Mass = Q("2 kg/s") },

            // Compared with the ideal-gas train solver; "auto" would pick the real gas here (suction within 20 K of the water dew point).
            Method = "ideal-gas",
        };
        var response = Evaluate(request);
        var feed = HumidGas.FromRelativeHumidity(DryAir, 0.9, Temperature.FromDegreesCelsius(35), Pressure.FromKilopascals(100));
        var direct = TrainSolver.Solve(feed,
        [
            new TrainStage(Pressure.FromKilopascals(300), StageEfficiency.Isentropic(0.80), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(35)),
            new TrainStage(Pressure.FromKilopascals(900), StageEfficiency.Polytropic(0.82), Intercooler.ToOutlet(Temperature.FromDegreesCelsius(40), PressureDrop.Absolute(Pressure.FromKilopascals(20)))),
        ], MassFlow.FromKilogramsPerSecond(2));

        AssertStagesEqual(direct, response);
        Assert.Null(response.Stages[0].Condensate);
        var condensate = response.Stages[1].Condensate;
        Assert.NotNull(condensate);
        var expected = direct[1].Condensate!.Value;
        AssertEx.Within(expected.MassFractionOfInlet, condensate.MassFractionOfInlet, 1e-8);
        AssertEx.Within(expected.WaterMoleFractionAfter, condensate.WaterMoleFractionAfter, 1e-8);
        AssertEx.Within(expected.MassFlow!.Value.KilogramsPerSecond * 3600, condensate.Rate!.Value, Rounding);
        Assert.Equal("kg/h", condensate.Rate.Unit);

        // Saturated after the cooler: y = p_sat(40 °C)/p = 7.3851 kPa / 280 kPa (IAPWS-IF97 saturation pressure of water at 40 °C).
        AssertEx.WithinRelative(7.3851 / 280, condensate.WaterMoleFractionAfter, 0.005);
    }

    [Fact]
    public void Evaluate_WhenRelativeHumidityGiven_WaterFractionEqualsHumidGas()
    {
        var request = AirRequest() with { Gas = new GasInput { Preset = "dry-air", RelativeHumidity = 0.6 } };
        var response = Evaluate(request);
        var humid = HumidGas.FromRelativeHumidity(DryAir, 0.6, Temperature.FromDegreesCelsius(35), Pressure.FromKilopascals(100));

        AssertEx.Within(humid.MoleFractionOf("H2O"), response.Gas.Composition["H2O"], 1e-8);

        // y = RH·p_sat(35 °C)/p = 0.6 × 5.6291 kPa / 100 kPa (IAPWS-IF97 saturation pressure of water at 35 °C).
        AssertEx.WithinRelative(0.6 * 5.6291 / 100, response.Gas.Composition["H2O"], 0.005);
    }

    [Fact]
    public void Evaluate_WhenDewPointGiven_WaterFractionEqualsHumidGasAndTheMatchingRelativeHumidity()
    {
        var t1 = Temperature.FromDegreesCelsius(35);
        var p1 = Pressure.FromKilopascals(100);
        var fromRh = HumidGas.FromRelativeHumidity(DryAir, 0.6, t1, p1);
        var dewPoint = HumidGas.DewPoint(fromRh, p1)!.Value;

        var request = AirRequest() with { Gas = new GasInput { Preset = "dry-air", DewPoint = QuantityInput.Of(dewPoint.DegreesCelsius, "°C") } };
        var response = Evaluate(request);

        AssertEx.Within(HumidGas.FromDewPoint(DryAir, dewPoint, t1, p1).MoleFractionOf("H2O"), response.Gas.Composition["H2O"], 1e-8);
        AssertEx.Within(fromRh.MoleFractionOf("H2O"), response.Gas.Composition["H2O"], 1e-7);
    }

    [Fact]
    public void Evaluate_WhenDewPointAboveSuctionTemperature_IsUnprocessableAtDewPoint()
    {
        var request = AirRequest() with { Gas = new GasInput { Preset = "dry-air", DewPoint = Q("40 °C") } };
        var problem = Refuse(request);
        Assert.Equal(ProblemKind.Unprocessable, problem.Kind);
        Assert.Contains("gas.dewPoint", problem.Errors.Keys);
    }

    [Fact]
    public void Evaluate_WhenAnyGas_CompositionSumsToOne()
    {
        var request = AirRequest() with { Gas = new GasInput { Composition = new Dictionary<string, double> { ["methane"] = 0.9, ["C2H6"] = 0.07, ["CO2"] = 0.03 }, RelativeHumidity = 0.5 } };
        var gas = Evaluate(request).Gas;
        AssertEx.Within(1.0, gas.Composition.Values.Sum(), 1e-6, "sum of mole fractions");
        Assert.Contains("CH4", gas.Composition.Keys);
        Assert.Contains("H2O", gas.Composition.Keys);
    }

    [Fact]
    public void Evaluate_WhenMassBasisComposition_ConvertsToMoleFractions()
    {
        // 50/50 by mass of CH4 (16.043 g/mol) and CO2 (44.009 g/mol), IUPAC standard atomic weights:
        // y_CH4 = (0.5/16.043) / (0.5/16.043 + 0.5/44.009).
        var request = AirRequest() with { Gas = new GasInput { Composition = new Dictionary<string, double> { ["CH4"] = 0.5, ["CO2"] = 0.5 }, Basis = "mass" } };
        var expected = (1 / 16.043) / ((1 / 16.043) + (1 / 44.009));
        AssertEx.Within(expected, Evaluate(request).Gas.Composition["CH4"], 1e-6);
    }

    [Fact]
    public void Evaluate_WhenGasMolarMassAtMostTwelve_DetectsHydrogenRichService()
    {
        // 0.7 H2 + 0.3 CH4: M = 0.7 × 2.016 + 0.3 × 16.043 = 6.224 g/mol (IUPAC standard atomic weights).
        // Domain limit: API 618 hydrogen-rich service is MW ≤ 12 (from memory, high confidence).
        var request = AirRequest() with { Asset = "K-102B", Gas = new GasInput { Composition = new Dictionary<string, double> { ["H2"] = 0.7, ["CH4"] = 0.3 } } };
        var response = Evaluate(request);
        AssertEx.Within(6.224, response.Gas.MolarMass.Value, 0.001);
        Assert.Contains("hydrogen-rich", response.Gas.ServiceClasses);
        Assert.Contains(response.Stages[0].Findings, f => f.RuleId == "R-API618-H2");
    }

    [Fact]
    public void Evaluate_WhenGasMolarMassAboveTwelve_IsNotHydrogenRich()
    {
        // Methane, 16.043 g/mol (IUPAC), is above the 12 g/mol threshold.
        var request = AirRequest() with { Asset = "K-102B", Gas = new GasInput { Preset = "methane" } };
        var response = Evaluate(request);
        Assert.DoesNotContain("hydrogen-rich", response.Gas.ServiceClasses);
        Assert.DoesNotContain(response.Stages[0].Findings, f => f.RuleId == "R-API618-H2");
        Assert.Equal("methane", response.Gas.Preset);
        Assert.Equal(16.043.ToString(CultureInfo.InvariantCulture), response.Gas.MolarMass.Value.ToString(CultureInfo.InvariantCulture));
    }
}
