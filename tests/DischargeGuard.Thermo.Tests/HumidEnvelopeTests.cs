using UnitsNet;

namespace DischargeGuard.Thermo.Tests;

/// <summary>The suction-temperature envelope of a humid stage holds the relative humidity, not the water fraction.</summary>
public sealed class HumidEnvelopeTests
{
    private static readonly GasMixture DryAir = GasCatalog.Default.Preset("dry-air");

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void MaxSuctionTemperature_AtTheAnswer_TheStageWithThatHumidityReachesTheLimit(bool realGas)
    {
        // Air at RH 0.8 and 30 °C, 1 to 6 bar(a), ηs 0.80, limit 177 °C (350 °F, Bloch & Hoefner p.382).
        var conditions = new StageConditions(Pressure.FromBars(1), Temperature.FromDegreesCelsius(30), Pressure.FromBars(6), StageEfficiency.Isentropic(0.80));
        var humid = HumidGas.FromRelativeHumidity(DryAir, 0.8, conditions.SuctionTemperature, conditions.SuctionPressure);
        var limit = Temperature.FromDegreesCelsius(177);

        var result = HumidEnvelopeSolver.MaxSuctionTemperature(humid, conditions, TemperatureQuantity.Estimated, limit, realGas);

        Assert.Equal(EnvelopeStatus.Found, result.Status);
        var t1 = result.Value!.Value;
        var atAnswer = HumidGas.FromRelativeHumidity(DryAir, 0.8, t1, conditions.SuctionPressure);
        var c = conditions with { SuctionTemperature = t1 };
        var t2 = realGas ? RealGasStageSolver.Solve(RealGasMixture.Create(atAnswer), c).EstimatedDischargeTemperature : StageSolver.Solve(atAnswer, c).EstimatedDischargeTemperature;
        AssertEx.Within(limit.Kelvins, t2.Kelvins, 1e-4, "discharge temperature at the envelope");
        // The humid gas at that suction temperature keeps RH 0.8 (a warmer suction holds more water).
        AssertEx.Within(0.8, HumidGas.RelativeHumidity(atAnswer, t1, conditions.SuctionPressure), 1e-9, "relative humidity held");
    }

    [Fact]
    public void MaxSuctionTemperature_HumidAndDry_AgreeWithinAFewKelvin()
    {
        // Water vapour's cp/R is higher than air's, so a humid gas heats slightly less per ratio: the humid envelope lies
        // at or above the dry one, by a few kelvin at most at RH 0.8 (mixed ideal-gas cp, NASA-7 data; common practice, no single source).
        var conditions = new StageConditions(Pressure.FromBars(1), Temperature.FromDegreesCelsius(35), Pressure.FromBars(6), StageEfficiency.Isentropic(0.80));
        var limit = Temperature.FromDegreesCelsius(177);
        var dry = EnvelopeSolver.MaxSuctionTemperature(DryAir, conditions, TemperatureQuantity.Estimated, limit).Value!.Value;
        var humidGas = HumidGas.FromRelativeHumidity(DryAir, 0.8, conditions.SuctionTemperature, conditions.SuctionPressure);
        var humid = HumidEnvelopeSolver.MaxSuctionTemperature(humidGas, conditions, TemperatureQuantity.Estimated, limit, realGas: false).Value!.Value;

        Assert.InRange(humid.Kelvins - dry.Kelvins, -1.0, 5.0);
    }
}
