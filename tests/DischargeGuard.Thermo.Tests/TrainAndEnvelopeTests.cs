using UnitsNet;
using static DischargeGuard.Thermo.Tests.CompressionTests;

namespace DischargeGuard.Thermo.Tests;

public sealed class TrainAndEnvelopeTests
{
    private static readonly GasMixture Air = GasCatalog.Default.Preset("dry-air");

    private static readonly GasMixture NaturalGas = GasCatalog.Default.CreateMixture(
        [new("CH4", 0.90), new("C2H6", 0.05), new("C3H8", 0.02), new("N2", 0.015), new("CO2", 0.015)], CompositionBasis.Mole);

    [Fact]
    public void Train_WithIntercoolerAndDrop_FeedsNextStageFromCoolerOutlet()
    {
        TrainStage[] stages =
        [
            new(Pressure.FromKilopascals(400), StageEfficiency.Isentropic(0.8), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(25)),
            new(Pressure.FromKilopascals(1500), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.ToOutlet(Temperature.FromDegreesCelsius(40), PressureDrop.OfUpstream(0.02))),
        ];
        var r = TrainSolver.Solve(Air, stages);
        AssertEx.Within(392, r[1].Stage.SuctionPressure.Kilopascals, 1e-9);
        AssertEx.Within(313.15, r[1].Stage.SuctionTemperature.Kelvins, 1e-9);
        AssertEx.WithinRelative(1500.0 / 392, r[1].Stage.PressureRatio, 1e-12);
        Assert.Null(r[1].Condensate);
    }

    [Fact]
    public void Train_WithApproachAndAbsoluteDrop_UsesCoolantPlusApproach()
    {
        TrainStage[] stages =
        [
            new(Pressure.FromKilopascals(350), StageEfficiency.Isentropic(0.8), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(25)),
            new(Pressure.FromKilopascals(1000), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.WithApproach(TemperatureDelta.FromKelvins(10), Temperature.FromDegreesCelsius(30), PressureDrop.Absolute(Pressure.FromKilopascals(20)))),
        ];
        var r = TrainSolver.Solve(Air, stages);
        AssertEx.Within(330, r[1].Stage.SuctionPressure.Kilopascals, 1e-9);
        AssertEx.Within(40, r[1].Stage.SuctionTemperature.DegreesCelsius, 1e-9);
    }

    [Fact]
    public void Train_HumidAirThroughCooler_DropsCondensateAndNextStageIsSaturated()
    {
        var wet = HumidGas.FromRelativeHumidity(Air, 0.8, Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(100));
        TrainStage[] stages =
        [
            new(Pressure.FromKilopascals(350), StageEfficiency.Isentropic(0.8), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(30)),
            new(Pressure.FromKilopascals(1000), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.ToOutlet(Temperature.FromDegreesCelsius(35), PressureDrop.None)),
        ];
        var r = TrainSolver.Solve(wet, stages, MassFlow.FromKilogramsPerSecond(1));
        Assert.Null(r[0].Condensate);
        var c = r[1].Condensate!.Value;
        var ySat = WaterSaturation.SaturationPressurePascals(308.15) / 350_000;
        AssertEx.WithinRelative(ySat, c.WaterMoleFractionAfter, 1e-9, "saturated water fraction after the cooler");
        AssertEx.WithinRelative(ySat, r[1].Gas.MoleFractionOf("H2O"), 1e-9);
        // Mass balance: water in = water out + condensate, per kg of wet gas entering.
        var yIn = wet.MoleFractionOf("H2O");
        var mw = 0.018015;
        var waterInPerKg = yIn * mw / wet.MolarMassKilogramsPerMole;
        var dryKgPerKg = 1 - waterInPerKg;
        var dryM = (wet.MolarMassKilogramsPerMole - (yIn * mw)) / (1 - yIn);
        var waterOutPerKg = dryKgPerKg / dryM * ySat / (1 - ySat) * mw;
        AssertEx.WithinRelative(waterInPerKg - waterOutPerKg, c.MassFractionOfInlet, 1e-9, "condensate mass fraction");
        AssertEx.WithinRelative(c.MassFractionOfInlet, c.MassFlow!.Value.KilogramsPerSecond, 1e-12);
        AssertEx.WithinRelative(1 - c.MassFractionOfInlet, r[1].MassFlow!.Value.KilogramsPerSecond, 1e-12);
    }

    [Fact]
    public void Train_LaterStageWithCoolerAndSuction_IsRejectedNamingTheStage()
    {
        TrainStage[] stages =
        [
            new(Pressure.FromKilopascals(400), StageEfficiency.Isentropic(0.8), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(25)),
            new(Pressure.FromKilopascals(1500), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.ToOutlet(Temperature.FromDegreesCelsius(40), PressureDrop.None), SuctionPressure: Pressure.FromKilopascals(390), SuctionTemperature: Temperature.FromDegreesCelsius(40)),
        ];
        var ex = Assert.Throws<ThermoInputException>(() => TrainSolver.Solve(Air, stages));
        Assert.Equal("stages[1].Intercooler", ex.ParamName);
        Assert.Equal(1, ex.StageIndex);
        Assert.Equal("Intercooler", ex.Member);
    }

    [Fact]
    public void Train_StageBelowItsSuction_IsRejectedWithIndexedMember()
    {
        TrainStage[] stages =
        [
            new(Pressure.FromKilopascals(400), StageEfficiency.Isentropic(0.8), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(25)),
            new(Pressure.FromKilopascals(300), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.ToOutlet(Temperature.FromDegreesCelsius(40), PressureDrop.None)),
        ];
        var ex = Assert.Throws<ThermoInputException>(() => TrainSolver.Solve(Air, stages));
        Assert.Equal("stages[1].DischargePressure", ex.ParamName);
        Assert.Equal(1, ex.StageIndex);
        Assert.Equal(nameof(StageConditions.DischargePressure), ex.Member);

        // The offending value travels with the error (SI: the stage's 300 kPa discharge, in pascals).
        Assert.Equal(300_000d, Assert.IsType<double>(ex.ActualValue));
    }

    [Fact]
    public void EqualStageRatio_SplitsOverallRatio()
    {
        AssertEx.WithinRelative(3, TrainSolver.EqualStageRatio(27, 3), 1e-14);
        Assert.Throws<ThermoInputException>(() => TrainSolver.EqualStageRatio(0.5, 2));
        Assert.Throws<ThermoInputException>(() => TrainSolver.EqualStageRatio(4, 0));
    }

    [Theory]
    [InlineData(TemperatureQuantity.Isentropic, EfficiencyKind.Isentropic)]
    [InlineData(TemperatureQuantity.Estimated, EfficiencyKind.Isentropic)]
    [InlineData(TemperatureQuantity.EstimatedUpperBound, EfficiencyKind.Isentropic)]
    [InlineData(TemperatureQuantity.Estimated, EfficiencyKind.Polytropic)]
    [InlineData(TemperatureQuantity.EstimatedUpperBound, EfficiencyKind.Polytropic)]
    public void Envelope_MaxDischargePressure_RoundTripsToTheLimit(TemperatureQuantity quantity, EfficiencyKind kind)
    {
        var eta = kind == EfficiencyKind.Isentropic ? StageEfficiency.Isentropic(0.8, 0.03) : StageEfficiency.Polytropic(0.82, 0.03);
        var c = Stage(2e6, 300, 5e6, eta);
        var limit = Temperature.FromDegreesCelsius(150);
        var e = EnvelopeSolver.MaxDischargePressure(NaturalGas, c, quantity, limit);
        Assert.Equal(EnvelopeStatus.Found, e.Status);
        var at = StageSolver.Solve(NaturalGas, c with { DischargePressure = e.Value!.Value });
        AssertEx.WithinRelative(limit.Kelvins, at.TemperatureOf(quantity).Kelvins, 1e-6);
    }

    [Theory]
    [InlineData(TemperatureQuantity.Isentropic)]
    [InlineData(TemperatureQuantity.Estimated)]
    [InlineData(TemperatureQuantity.EstimatedUpperBound)]
    public void Envelope_MaxSuctionTemperature_RoundTripsToTheLimit(TemperatureQuantity quantity)
    {
        var c = Stage(1e5, 300, 3.5e5, StageEfficiency.Isentropic(0.78, 0.04));
        var limit = Temperature.FromDegreesCelsius(177);
        var e = EnvelopeSolver.MaxSuctionTemperature(Air, c, quantity, limit);
        Assert.Equal(EnvelopeStatus.Found, e.Status);
        var at = StageSolver.Solve(Air, c with { SuctionTemperature = e.Value!.Value });
        AssertEx.WithinRelative(limit.Kelvins, at.TemperatureOf(quantity).Kelvins, 1e-6);
    }

    [Theory]
    [InlineData(TemperatureQuantity.Estimated)]
    [InlineData(TemperatureQuantity.EstimatedUpperBound)]
    public void Envelope_MinimumEfficiency_RoundTripsToTheLimit(TemperatureQuantity quantity)
    {
        var c = Stage(1e5, 300, 4e5, StageEfficiency.Isentropic(0.8, 0.03));
        var limit = Temperature.FromDegreesCelsius(200);
        var e = EnvelopeSolver.MinimumEfficiency(Air, c, quantity, limit);
        Assert.Equal(EnvelopeStatus.Found, e.Status);
        var at = StageSolver.Solve(Air, c with { Efficiency = StageEfficiency.Isentropic(e.Value!.Value, 0.03) });
        AssertEx.WithinRelative(limit.Kelvins, at.TemperatureOf(quantity).Kelvins, 1e-6);
    }

    [Fact]
    public void Envelope_SuctionAboveLimit_IsAlreadyExceeded()
    {
        var c = Stage(1e5, 430, 3e5, StageEfficiency.Isentropic(0.8));
        Assert.Equal(EnvelopeStatus.AlreadyExceeded, EnvelopeSolver.MaxDischargePressure(Air, c, TemperatureQuantity.Estimated, Temperature.FromKelvins(420)).Status);
    }

    [Fact]
    public void Envelope_ColdestSuctionStillTooHot_IsAlreadyExceeded()
    {
        var c = Stage(1e5, 300, 100e5, StageEfficiency.Isentropic(0.8));
        Assert.Equal(EnvelopeStatus.AlreadyExceeded, EnvelopeSolver.MaxSuctionTemperature(Air, c, TemperatureQuantity.Estimated, Temperature.FromDegreesCelsius(150)).Status);
        Assert.Equal(EnvelopeStatus.AlreadyExceeded, EnvelopeSolver.MaxSuctionTemperature(Air, c, TemperatureQuantity.Isentropic, Temperature.FromDegreesCelsius(150)).Status);
    }

    [Fact]
    public void Envelope_LimitAboveData_IsNotReachableInRange()
    {
        var c = Stage(1e5, 300, 3e5, StageEfficiency.Isentropic(0.8));
        Assert.Equal(EnvelopeStatus.NotReachableInRange, EnvelopeSolver.MaxDischargePressure(Air, c, TemperatureQuantity.Estimated, Temperature.FromKelvins(7000)).Status);
    }

    [Fact]
    public void Envelope_IdealStageAlreadyTooHot_MinimumEfficiencyIsAlreadyExceeded()
    {
        var c = Stage(1e5, 300, 20e5, StageEfficiency.Isentropic(0.8));
        Assert.Equal(EnvelopeStatus.AlreadyExceeded, EnvelopeSolver.MinimumEfficiency(Air, c, TemperatureQuantity.Estimated, Temperature.FromDegreesCelsius(150)).Status);
        Assert.Equal(EnvelopeStatus.NotApplicable, EnvelopeSolver.MinimumEfficiency(Air, c, TemperatureQuantity.Isentropic, Temperature.FromDegreesCelsius(150)).Status);
    }
}
