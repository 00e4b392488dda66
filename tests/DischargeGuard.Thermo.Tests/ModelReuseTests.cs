using DischargeGuard.Testing;
using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo.Tests;

/// <summary>
/// The fast paths added for speed give the answers of the slow ones. Each check compares a reused or cached model with
/// one built from scratch through the uncached path on the same input, so the reference is the project's own
/// unchanged code; the published checks of those models stay in their own tests (PhaseStabilityTests,
/// RealGasAccuracyTests, Gerg2008Tests, HumidEnvelopeTests).
/// </summary>
public sealed class ModelReuseTests
{
    private static readonly GasMixture DryAir = GasCatalog.Default.Preset("dry-air");

    // The rich gas of PhaseStabilityTests (C3+ 10.5 %): a dew point near 25 °C at 40 bara.
    private static readonly GasMixture RichGas = GasCatalog.Default.CreateMixture(
        [
            new("CH4", 0.78), new("C2H6", 0.10), new("C3H8", 0.05), new("i-C4H10", 0.015), new("n-C4H10", 0.02),
            new("n-C5H12", 0.02), new("N2", 0.01), new("CO2", 0.005),
        ],
        CompositionBasis.Mole);

    private static GasMixture HumidAir(double rh, double celsius) =>
        HumidGas.FromRelativeHumidity(DryAir, rh, Temperature.FromDegreesCelsius(celsius), Pressure.FromBars(1.2));

    [Fact]
    public void Create_WhenTheSameCompositionIsBuiltTwice_ReturnsOneModelPerKind()
    {
        // Two separately built mixtures of one composition (equal bit for bit) share their prepared models.
        var a = HumidAir(0.6, 35);
        var b = HumidAir(0.6, 35);
        Assert.NotSame(a, b);

        Assert.Same(RealGasMixture.Create(a), RealGasMixture.Create(b));
        Assert.Same(Gerg2008Mixture.Create(a), Gerg2008Mixture.Create(b));
        Assert.Same(PhaseStability.Prepare(a), PhaseStability.Prepare(b));
    }

    [Fact]
    public void Create_WhenAMoleFractionDiffersInTheTwelfthDigit_BuildsAnotherModel()
    {
        var a = HumidAir(0.6, 35);
        var b = HumidAir(0.6 + 1e-12, 35);
        Assert.NotEqual(a.WaterMoleFraction, b.WaterMoleFraction);

        Assert.NotSame(RealGasMixture.Create(a), RealGasMixture.Create(b));
        Assert.NotSame(Gerg2008Mixture.Create(a), Gerg2008Mixture.Create(b));
        Assert.NotSame(PhaseStability.Prepare(a), PhaseStability.Prepare(b));
    }

    [Theory]
    [InlineData(0.05)]
    [InlineData(0.3)]
    [InlineData(0.6)]
    [InlineData(1.0)]
    public void ForComposition_OverAHumiditySweep_IsBitForBitTheModelBuiltFromScratch(double rh)
    {
        // The humid envelope's trial models reuse the species list's constants; every property must equal the full
        // build's exactly (same arithmetic on the same constants), from 0 °C to 80 °C suction.
        for (var celsius = 0.0; celsius <= 80; celsius += 5)
        {
            var gas = HumidAir(rh, celsius);
            var fast = RealGasMixture.ForComposition(gas);
            var slow = RealGasMixture.Create(gas, PengRobinsonData.Default);
            foreach (var (t, p) in new[] { (273.15 + celsius, 1.2e5), (450.0, 6e5), (600.0, 30e5) })
            {
                var f = fast.StateAt(Temperature.FromKelvins(t), Pressure.FromPascals(p));
                var s = slow.StateAt(Temperature.FromKelvins(t), Pressure.FromPascals(p));
                Assert.Equal(s, f);
            }

            var c = new StageConditions(Pressure.FromBars(1.2), Temperature.FromDegreesCelsius(celsius), Pressure.FromBars(4), StageEfficiency.Isentropic(0.8, 0.03));
            Assert.Equal(RealGasStageSolver.Solve(slow, c).EstimatedDischargeTemperature, RealGasStageSolver.Solve(fast, c).EstimatedDischargeTemperature);
        }
    }

    [Fact]
    public void WithWaterFraction_OverASweep_OrdersLargestFirstAndKeepsTheDryRatios()
    {
        // The loop rewrite of the mixture builder: components largest first, the dry part renormalised to 1 − y_w.
        var water = GasCatalog.Default.Water;
        foreach (var y in new[] { 1e-6, 0.005, 0.0093, 0.05, 0.2, 0.5, 0.9 })
        {
            var humid = DryAir.WithWaterFraction(water, y);
            var fractions = humid.Components.Select(c => c.MoleFraction).ToArray();
            Assert.Equal(fractions.OrderByDescending(x => x), fractions);
            AssertEx.Within(1.0, fractions.Sum(), 1e-12, "fractions sum");
            AssertEx.Within(y, humid.WaterMoleFraction, 1e-15, "water fraction");
            AssertEx.WithinRelative(DryAir.MoleFractionOf("N2") / DryAir.MoleFractionOf("O2"), humid.MoleFractionOf("N2") / humid.MoleFractionOf("O2"), 1e-14, "N2/O2 ratio");
        }
    }

    [Fact]
    public void HydrocarbonDewPointAt_WhenAskedAgain_GivesTheFreshSearchOverAPressureSweep()
    {
        // The model remembers its last dew points by pressure: a repeated question (and a sweep wider than the memory,
        // asked twice) must give exactly what a model that never searched before finds.
        var shared = PhaseStability.Prepare(RichGas);
        var pressures = Enumerable.Range(1, 12).Select(k => Pressure.FromBars(5.0 * k)).ToArray();
        for (var round = 0; round < 2; round++)
        {
            foreach (var p in pressures)
            {
                var fresh = new PhaseStabilityModel(RichGas).HydrocarbonDewPointAt(p);
                var reused = shared.HydrocarbonDewPointAt(p);
                Assert.Equal(fresh.Status, reused.Status);
                Assert.Equal(fresh.TemperatureKelvin, reused.TemperatureKelvin);
                Assert.Equal(fresh, shared.Check(Temperature.FromDegreesCelsius(30), p).HydrocarbonDewPoint);
            }
        }
    }

    [Fact]
    public void Create_FromManyThreadsAtOnce_GivesOneAnswer()
    {
        // The caches are shared by concurrent requests: every thread gets a model that answers the same.
        var gases = Enumerable.Range(0, 300).Select(i => HumidAir(0.3 + (i % 150 * 0.004), 30)).ToArray();
        var expected = gases.Select(g => RealGasMixture.Create(g, PengRobinsonData.Default).StateAt(Temperature.FromKelvins(400), Pressure.FromBars(5))).ToArray();
        Parallel.For(0, 2000, i =>
        {
            var k = i % gases.Length;
            Assert.Equal(expected[k], RealGasMixture.Create(gases[k]).StateAt(Temperature.FromKelvins(400), Pressure.FromBars(5)));
        });
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void HumidMaxSuctionTemperature_FastPathOverASweep_GivesTheBracketedAnswer(bool realGas)
    {
        // Humid air 0.1–1.0 RH, suction 0–60 °C, 1.2 bar(a) to ratios 2–6, limits 120–220 °C, all three quantities: the
        // secant's answer must be the bracketed search's within its 1e-7 K bracket (plus the secant's 1e-7 K stop),
        // with the same status.
        var checkedFound = 0;
        foreach (var rh in new[] { 0.1, 0.6, 1.0 })
        {
            foreach (var celsius in new[] { 0.0, 30, 60 })
            {
                foreach (var ratio in new[] { 2.0, 4, 6 })
                {
                    var gas = HumidAir(rh, celsius);
                    var c = new StageConditions(Pressure.FromBars(1.2), Temperature.FromDegreesCelsius(celsius), Pressure.FromBars(1.2 * ratio), StageEfficiency.Isentropic(0.8, 0.03));
                    foreach (var limitC in new[] { 120.0, 170, 220 })
                    {
                        foreach (var q in new[] { TemperatureQuantity.Isentropic, TemperatureQuantity.Estimated, TemperatureQuantity.EstimatedUpperBound })
                        {
                            var limit = Temperature.FromDegreesCelsius(limitC);
                            var fast = HumidEnvelopeSolver.MaxSuctionTemperature(gas, c, q, limit, realGas, fastPath: true);
                            var slow = HumidEnvelopeSolver.MaxSuctionTemperature(gas, c, q, limit, realGas, fastPath: false);
                            Assert.Equal(slow.Status, fast.Status);
                            if (slow.Value is { } s0)
                            {
                                AssertEx.Within(s0.Kelvins, fast.Value!.Value.Kelvins, 1e-6, $"RH {rh}, {celsius} °C, ratio {ratio}, {limitC} °C, {q}");
                                checkedFound++;
                            }
                        }
                    }
                }
            }
        }

        Assert.True(checkedFound > 100, $"only {checkedFound} found answers compared");
    }

    [Fact]
    public void RealGasMaxDischargePressure_FastPathOverASweep_GivesTheBracketedAnswer()
    {
        // Peng-Robinson and GERG-2008 on humid air and a natural gas, suction 1–40 bar(a), limits 100–220 °C: the secant's
        // pressure must be the bracketed search's within its 1e-7 relative width in ln P (≈ 2e-6 relative in P).
        var naturalGas = GasCatalog.Default.CreateMixture(
            [new("CH4", 0.89), new("C2H6", 0.05), new("C3H8", 0.02), new("n-C4H10", 0.01), new("N2", 0.02), new("CO2", 0.01)],
            CompositionBasis.Mole);
        var checkedFound = 0;
        foreach (var gas in new[] { HumidAir(0.6, 35), naturalGas })
        {
            IRealGasModel[] models = [RealGasMixture.Create(gas), Gerg2008Mixture.Create(gas)];
            foreach (var model in models)
            {
                foreach (var bar in new[] { 1.0, 10, 40 })
                {
                    var c = new StageConditions(Pressure.FromBars(bar), Temperature.FromDegreesCelsius(35), Pressure.FromBars(bar * 2), StageEfficiency.Isentropic(0.8, 0.03));
                    foreach (var limitC in new[] { 100.0, 150, 220 })
                    {
                        foreach (var q in new[] { TemperatureQuantity.Isentropic, TemperatureQuantity.Estimated, TemperatureQuantity.EstimatedUpperBound })
                        {
                            var limit = Temperature.FromDegreesCelsius(limitC);
                            var fast = RealGasEnvelopeSolver.MaxDischargePressureCore(model, c, q, limit, fastPath: true);
                            var slow = RealGasEnvelopeSolver.MaxDischargePressureCore(model, c, q, limit, fastPath: false);
                            Assert.Equal(slow.Status, fast.Status);
                            if (slow.Value is { } s0)
                            {
                                AssertEx.WithinRelative(s0.Pascals, fast.Value!.Value.Pascals, 2e-6, $"{model.GetType().Name} {bar} bar, {limitC} °C, {q}");
                                checkedFound++;
                            }
                        }
                    }
                }
            }
        }

        Assert.True(checkedFound > 60, $"only {checkedFound} found answers compared");
    }
}
