using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Thermo;
using UnitsNet;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>Units in and out: gauge to absolute, and the metric and imperial answers of the same physics.</summary>
public sealed class EvaluationPipelineUnitsTests
{
    // 1 bar = 100 kPa exactly (NIST SP 811, Table 8).
    private const double KilopascalsPerBar = 100.0;

    // 1 psi = 6.894757293168361 kPa exactly (NIST SP 811, B.8: 1 lbf/in² = 6.894 757 293 168 361 kPa, from the exact pound and inch).
    private const double KilopascalsPerPsi = 6.894757293168361;

    // 1 Btu_IT/lb = 2.326 kJ/kg exactly (NIST SP 811, B.8; the IT Btu is defined through this value).
    private const double KilojoulesPerKilogramPerBtuPerPound = 2.326;

    // 1 hp (mechanical) = 550 ft·lbf/s = 745.69987158227022 W (NIST SP 811, B.8).
    private const double WattsPerHorsepower = 745.69987158227022;

    // Outputs are rounded to 0.001 of their unit (OutputUnitSystem), so comparisons allow half of that plus float noise.
    private const double Rounding = 0.0005 + 1e-9;

    private static readonly GasMixture DryAir = GasCatalog.Default.Preset("dry-air");

    private static StageResult Direct(double p1Kilopascals, double t1Celsius, double p2Kilopascals, double efficiency = 0.80, double? massFlow = null) =>
        StageSolver.Solve(DryAir, new StageConditions(
            Pressure.FromKilopascals(p1Kilopascals),
            Temperature.FromDegreesCelsius(t1Celsius),
            Pressure.FromKilopascals(p2Kilopascals),
            StageEfficiency.Isentropic(efficiency),
            massFlow is { } m ? MassFlow.FromKilogramsPerSecond(m) : null));

    [Fact]
    public void Evaluate_WhenGaugeWithBarometricPressure_AddsTheBarometerExactly()
    {
        var response = Evaluate(AirRequest(AirStage(suction: "0.5 barg", discharge: "3.2 barg")));
        var stage = response.Stages[0];

        // 0.5 bar = 50 kPa; + 98.6 kPa barometer.
        AssertEx.Within((0.5 * KilopascalsPerBar) + 98.6, stage.Suction.PressureAbsolute.Value, Rounding);
        AssertEx.Within((3.2 * KilopascalsPerBar) + 98.6, stage.Discharge.PressureAbsolute.Value, Rounding);
        Assert.Equal("kPa", stage.Suction.PressureAbsolute.Unit);
        AssertEx.Within(418.6 / 148.6, stage.PressureRatio, 1e-6);
    }

    [Theory]
    [InlineData("350 m", 350.0)]
    [InlineData("1000 ft", 304.8)] // international foot, 0.3048 m exactly (NIST SP 811, B.8)
    [InlineData("0 m", 0.0)]
    public void Evaluate_WhenGaugeWithElevation_UsesTheIsoStandardAtmosphere(string elevation, double meters)
    {
        var request = AirRequest(AirStage(suction: "5 kPa(g)", discharge: "200 kPa(g)")) with
        {
            Site = new SiteInput { Id = Site, Elevation = Q(elevation) },
        };
        var stage = Evaluate(request).Stages[0];

        // ISO 2533 standard atmosphere, troposphere: p = 101.325 kPa · (1 − 2.25577e-5 · h/m)^5.25588.
        var barometer = 101.325 * Math.Pow(1 - (2.25577e-5 * meters), 5.25588);
        AssertEx.Within(5 + barometer, stage.Suction.PressureAbsolute.Value, Rounding);
        AssertEx.Within(200 + barometer, stage.Discharge.PressureAbsolute.Value, Rounding);
    }

    [Fact]
    public void Evaluate_WhenElevationGiven_BarometerMatchesTheAtmosphereFromItsPrimaryConstants()
    {
        var request = AirRequest(AirStage(suction: "0 kPa(g)", discharge: "200 kPa(a)")) with { Site = new SiteInput { Id = Site, Elevation = Q("350 m") } };

        // ISO 2533 troposphere from its defining constants: p = p0·(1 − L·h/T0)^(g0·M/(R*·L)), p0 = 101 325 Pa,
        // T0 = 288.15 K, L = 0.0065 K/m, g0 = 9.80665 m/s², M = 0.0289644 kg/mol, R* = 8.31432 J/(mol·K).
        const double lapse = 0.0065;
        var exponent = 9.80665 * 0.0289644 / (8.31432 * lapse);
        var expected = 101.325 * Math.Pow(1 - (lapse * 350 / 288.15), exponent);
        AssertEx.Within(expected, Evaluate(request).Stages[0].Suction.PressureAbsolute.Value, 0.001);
    }

    [Fact]
    public void Evaluate_WhenStageGiven_TemperaturesEqualDirectStageSolver()
    {
        var request = AirRequest(AirStage(suction: "0.5 barg", discharge: "3.2 barg") with
        {
            Efficiency = new EfficiencyInput { Isentropic = 0.80, Uncertainty = 0.03 },
        });
        var stage = Evaluate(request with { Method = "ideal-gas" }).Stages[0]; // the oracle is the ideal-gas stage solver
        var direct = StageSolver.Solve(DryAir, new StageConditions(
            Pressure.FromKilopascals(148.6), Temperature.FromDegreesCelsius(35), Pressure.FromKilopascals(418.6), StageEfficiency.Isentropic(0.80, 0.03)));

        AssertEx.Within(direct.IsentropicDischargeTemperature.DegreesCelsius, stage.DischargeTemperature!.Isentropic.Value, Rounding);
        AssertEx.Within(direct.EstimatedDischargeTemperature.DegreesCelsius, stage.DischargeTemperature!.Estimated.Value, Rounding);
        AssertEx.Within(direct.EstimatedUpperBound.DegreesCelsius, stage.DischargeTemperature!.EstimatedUpperBound.Value, Rounding);
        AssertEx.Within(direct.EstimatedLowerBound.DegreesCelsius, stage.DischargeTemperature!.EstimatedLowerBound.Value, Rounding);
        AssertEx.Within(direct.ConstantK!.Estimated.DegreesCelsius, stage.DischargeTemperature!.ConstantK!.Estimated.Value, Rounding);
        AssertEx.Within(direct.TemperatureRise!.Kelvins, stage.TemperatureRise!.Value, Rounding);
        AssertEx.Within(direct.PolytropicEfficiency, stage.Efficiency.Polytropic, 1e-6);
        AssertEx.Within(direct.KSuction, stage.Properties!.KSuction, 1e-6);
        Assert.True(stage.DischargeTemperature!.EstimatedUpperBound.Value > stage.DischargeTemperature!.Estimated.Value, "the lower efficiency bound gives the higher temperature");
        Assert.Equal("request", stage.Efficiency.Source);
    }

    [Fact]
    public void Evaluate_WhenImperialOutput_ReportsSamePhysicsInUsCustomaryUnits()
    {
        var baseRequest = AirRequest(AirStage(suction: "0.5 barg", discharge: "3.2 barg")) with { Flow = new FlowInput { Mass = Q("2.5 kg/s") }, Method = "ideal-gas" };
        var metric = Evaluate(baseRequest).Stages[0];
        var imperial = Evaluate(baseRequest with { OutputUnits = "imperial" }).Stages[0];
        var direct = Direct(148.6, 35, 418.6, massFlow: 2.5);

        Assert.Equal("°C", metric.DischargeTemperature!.Estimated.Unit);
        Assert.Equal("°F", imperial.DischargeTemperature!.Estimated.Unit);
        Assert.Equal("kPa", metric.Discharge.PressureAbsolute.Unit);
        Assert.Equal("psia", imperial.Discharge.PressureAbsolute.Unit);
        Assert.Equal("K", metric.TemperatureRise!.Unit);
        Assert.Equal("Δ°F", imperial.TemperatureRise!.Unit);
        Assert.Equal("kJ/kg", metric.SpecificWork!.Actual.Unit);
        Assert.Equal("Btu/lb", imperial.SpecificWork!.Actual.Unit);
        Assert.Equal("kW", metric.Power!.Unit);
        Assert.Equal("hp", imperial.Power!.Unit);

        // °F = K × 9/5 − 459.67 and a kelvin of difference is 9/5 Δ°F (NIST SP 811, 4.2.1.1 and B.8).
        AssertEx.Within((direct.EstimatedDischargeTemperature.Kelvins * 1.8) - 459.67, imperial.DischargeTemperature!.Estimated.Value, Rounding);
        AssertEx.Within((direct.IsentropicDischargeTemperature.Kelvins * 1.8) - 459.67, imperial.DischargeTemperature!.Isentropic.Value, Rounding);
        AssertEx.Within(direct.TemperatureRise!.Kelvins * 1.8, imperial.TemperatureRise!.Value, Rounding);
        AssertEx.Within(418.6 / KilopascalsPerPsi, imperial.Discharge.PressureAbsolute.Value, Rounding);
        AssertEx.Within(148.6 / KilopascalsPerPsi, imperial.Suction.PressureAbsolute.Value, Rounding);
        AssertEx.Within(direct.SpecificActualWork.JoulesPerKilogram / 1000 / KilojoulesPerKilogramPerBtuPerPound, imperial.SpecificWork!.Actual.Value, Rounding);
        AssertEx.Within((double)direct.Power!.Value.Watts / WattsPerHorsepower, imperial.Power.Value, Rounding);
        AssertEx.Within((double)direct.Power!.Value.Watts / 1000, metric.Power.Value, Rounding);

        // The pressure ratio and efficiencies have no unit and must not change with the output system.
        Assert.Equal(metric.PressureRatio, imperial.PressureRatio);
        Assert.Equal(metric.Efficiency, imperial.Efficiency);
        Assert.Equal("lb/lbmol", Evaluate(baseRequest with { OutputUnits = "imperial" }).Gas.MolarMass.Unit);
    }

    [Fact]
    public void Evaluate_WhenImperialOutput_FindingsUseFahrenheitAndFahrenheitDifferences()
    {
        var response = Evaluate(AirRequest(AirStage(discharge: "600 kPa(a)")) with { OutputUnits = "imperial" });
        var api = response.Stages[0].Findings.Single(f => f.RuleId == "R-API618-GEN");

        // The limit as API 618 states it in imperial units, 300 °F (the rule file: "150 °C (300 °F)"), not 150 °C converted.
        AssertEx.Within(300.0, api.Limit!.Value, Rounding);
        Assert.Equal("°F", api.Limit.Unit);
        Assert.Equal("Δ°F", api.Margin!.Unit);
        // The margin is computed from the value checked, 150 °C = 302 °F (°F = °C × 9/5 + 32, NIST SP 811, 4.2.1.1).
        AssertEx.Within(302.0 - api.Value!.Value, api.Margin.Value, 2 * Rounding + 1e-6);
    }

    [Fact]
    public void Evaluate_WhenMassFlowGiven_PowerIsFlowTimesActualWork()
    {
        var stage = Evaluate(AirRequest() with { Flow = new FlowInput { Mass = Q("9000 kg/h") }, Method = "ideal-gas" }).Stages[0];
        var direct = Direct(100, 35, 300);

        // 9000 kg/h = 2.5 kg/s; P = ṁ·(h2 − h1).
        AssertEx.Within(2.5 * direct.SpecificActualWork.JoulesPerKilogram / 1000, stage.Power!.Value, Rounding);
        AssertEx.Within(stage.Power.Value / stage.SpecificWork!.Actual.Value, 2.5, 1e-5, "power / actual work (kg/s)");
    }

    [Fact]
    public void Evaluate_WhenStandardVolumeAtNormalConditions_ConvertsWithIdealGasLaw()
    {
        var request = AirRequest() with { Flow = new FlowInput { StandardVolume = Q("1200 m³/h"), Reference = "normal" }, Method = "ideal-gas" };
        var response = Evaluate(request);
        var stage = response.Stages[0];

        // ṁ = Q·p·M/(R·T) at 0 °C and 101.325 kPa (DIN 1343 normal conditions); R = 8.314462618 J/(mol·K) (CODATA 2018, exact).
        // M of dry air from the preset's mole fractions and IUPAC standard atomic weights.
        var molarMass = (0.78084 * 28.014) + (0.209476 * 31.998) + (0.009365 * 39.95) + (0.000319 * 44.009);
        var massFlow = (1200.0 / 3600.0) * 101_325.0 * (molarMass / 1000.0) / (8.314462618 * 273.15);
        AssertEx.WithinRelative(molarMass, response.Gas.MolarMass.Value, 1e-5);
        AssertEx.WithinRelative(massFlow * Direct(100, 35, 300).SpecificActualWork.JoulesPerKilogram / 1000, stage.Power!.Value, 1e-5);

        // About 1.293 kg/m³ for air at normal conditions (common handbook value, from memory — verify).
        AssertEx.Within(1.293, massFlow * 3600 / 1200, 0.001, "normal density of air");
    }
}
