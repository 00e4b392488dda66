using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Thermo.Tests;

/// <summary>
/// The real-gas envelope: where the gas is nearly ideal it must agree with the ideal-gas envelope solver (the P → 0
/// limit of Peng-Robinson is the ideal gas), and at its answer the real-gas stage sits on the limit.
/// </summary>
public class RealGasEnvelopeTests
{
    private static readonly GasMixture Air = GasCatalog.Default.Preset("dry-air");

    [Fact]
    public void MaxDischargePressure_WhenAirNearAtmospheric_AgreesWithTheIdealGasWithinHalfAPercent()
    {
        var conditions = new StageConditions(Pressure.FromKilopascals(100), Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(250), StageEfficiency.Isentropic(0.8));
        var limit = Temperature.FromDegreesCelsius(177);

        var ideal = EnvelopeSolver.MaxDischargePressure(Air, conditions, TemperatureQuantity.Estimated, limit);
        var real = RealGasEnvelopeSolver.MaxDischargePressure(RealGasMixture.Create(Air), conditions, TemperatureQuantity.Estimated, limit);

        Assert.Equal(EnvelopeStatus.Found, real.Status);
        AssertEx.Within(ideal.Value!.Value.Pascals, real.Value!.Value.Pascals, 0.005 * ideal.Value.Value.Pascals, "max discharge pressure");
    }

    [Fact]
    public void MaxSuctionTemperature_WhenFound_PutsTheStageOnTheLimit()
    {
        var gas = RealGasMixture.Create(GasCatalog.Default.CreateMixture(new Dictionary<string, double> { ["CH4"] = 0.9, ["C2H6"] = 0.1 }, CompositionBasis.Mole));
        var conditions = new StageConditions(Pressure.FromBars(30), Temperature.FromDegreesCelsius(30), Pressure.FromBars(80), StageEfficiency.Isentropic(0.8));
        var limit = Temperature.FromDegreesCelsius(150);

        var t1 = RealGasEnvelopeSolver.MaxSuctionTemperature(gas, conditions, TemperatureQuantity.Estimated, limit);

        Assert.Equal(EnvelopeStatus.Found, t1.Status);
        var at = RealGasStageSolver.Solve(gas, conditions with { SuctionTemperature = t1.Value!.Value });
        AssertEx.Within(limit.Kelvins, at.EstimatedDischargeTemperature.Kelvins, 1e-3, "T2 at the envelope suction temperature");
    }

    [Fact]
    public void MaxDischargePressure_WhenSuctionIsAlreadyAtTheLimit_IsAlreadyExceeded()
    {
        var conditions = new StageConditions(Pressure.FromKilopascals(100), Temperature.FromDegreesCelsius(180), Pressure.FromKilopascals(250), StageEfficiency.Isentropic(0.8));

        var real = RealGasEnvelopeSolver.MaxDischargePressure(RealGasMixture.Create(Air), conditions, TemperatureQuantity.Estimated, Temperature.FromDegreesCelsius(177));

        Assert.Equal(EnvelopeStatus.AlreadyExceeded, real.Status);
    }
}
