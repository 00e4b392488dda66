using DischargeGuard.Testing;
using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo.Tests;

/// <summary>
/// The tangent-plane phase check and dew points (<see cref="PhaseStability"/>). Pure-component saturation is compared
/// with NIST reference vapour pressures within the known accuracy of Peng-Robinson (a few %); the mixture code is
/// compared with a published Peng-Robinson dew point and bubble point; the rest checks properties that hold exactly for
/// the equation (the phase flips at its own saturation pressure; the dew point separates stable from unstable states).
/// </summary>
public sealed class PhaseStabilityTests
{
    // The rich gas of the counter-example (composition chosen here so that its PR dew point at 40 bara is near 25 °C:
    // CH4 0.78, C2H6 0.10, C3H8 0.05, i-C4H10 0.015, n-C4H10 0.02, n-C5H12 0.02, N2 0.01, CO2 0.005; C3+ 10.5 %).
    private static readonly GasMixture RichGas = GasCatalog.Default.CreateMixture(
        [
            new("CH4", 0.78), new("C2H6", 0.10), new("C3H8", 0.05), new("i-C4H10", 0.015), new("n-C4H10", 0.02),
            new("n-C5H12", 0.02), new("N2", 0.01), new("CO2", 0.005),
        ],
        CompositionBasis.Mole);

    private static GasMixture Pure(string id) => GasCatalog.Default.CreateMixture([new(id, 1.0)], CompositionBasis.Mole);

    [Theory]
    // NIST Chemistry WebBook, saturation properties (Lemmon, McLinden & Friend reference equations) — from memory — verify:
    // propane 0.47446 MPa at 273.15 K; n-butane 0.10317 MPa at 273.15 K; CO2 3.4851 MPa at 273.15 K and 1.9696 MPa at
    // 253.15 K. PR reproduces hydrocarbon and CO2 vapour pressures to a few % (Peng & Robinson 1976, Table 2 reports
    // average deviations of about 1 %); tolerance 3 %.
    [InlineData("C3H8", 273.15, 4.7446e5)]
    [InlineData("n-C4H10", 273.15, 1.0317e5)]
    [InlineData("CO2", 273.15, 34.851e5)]
    [InlineData("CO2", 253.15, 19.696e5)]
    public void PureSaturationPressure_AgainstNist_WithinPengRobinsonAccuracy(string id, double tKelvin, double nistPascals)
    {
        var p = PhaseStability.PureSaturationPressure(id, Temperature.FromKelvins(tKelvin));
        Assert.NotNull(p);
        AssertEx.WithinRelative(nistPascals, p.Value.Pascals, 0.03, $"{id} P_sat at {tKelvin} K");
    }

    [Theory]
    // Normal boiling points, NIST Chemistry WebBook — from memory — verify: propane 231.04 K, n-butane 272.66 K,
    // methane 111.67 K; methane saturation temperature at 1 MPa 149.14 K. Tolerance 1.5 K (a few % in pressure).
    [InlineData("C3H8", 101325, 231.04)]
    [InlineData("n-C4H10", 101325, 272.66)]
    [InlineData("CH4", 101325, 111.67)]
    [InlineData("CH4", 1e6, 149.14)]
    // Normal boiling points of the heavy n-alkanes: n-heptane 371.533 K and n-octane 398.774 K, the T0 (normal boiling
    // point) of the Span & Wagner (2003) equations as stored in CoolProp@12f1cc6b86 dev/fluids/n-Heptane.json and
    // CoolProp@036f3206f5 dev/fluids/n-Octane.json (IdealGasHelmholtzCP0AlyLee T0); NIST Chemistry WebBook gives
    // n-heptane Tboil 371.5 ± 0.3 K (average of 215 values). n-nonane 423.91 K and n-decane 447.27 K, Lemmon & Span,
    // J. Chem. Eng. Data 51 (2006) — from memory — verify. PR with the reference equations' Tc, Pc and ω lands within
    // 0.25 K of all four (−0.22 K for n-decane).
    [InlineData("n-C7H16", 101325, 371.533)]
    [InlineData("n-C8H18", 101325, 398.774)]
    [InlineData("n-C9H20", 101325, 423.91)]
    [InlineData("n-C10H22", 101325, 447.27)]
    public void PureSaturationTemperature_AgainstNist_WithinPengRobinsonAccuracy(string id, double pPascals, double nistKelvin)
    {
        var t = PhaseStability.PureSaturationTemperature(id, Pressure.FromPascals(pPascals));
        Assert.NotNull(t);
        AssertEx.Within(nistKelvin, t.Value.Kelvins, 1.5, $"{id} T_sat at {pPascals} Pa");
    }

    [Theory]
    [InlineData("C3H8", 273.15)]
    [InlineData("n-C4H10", 300.0)]
    [InlineData("CO2", 280.0)]
    public void Check_PureComponent_FlipsExactlyAtItsPengRobinsonSaturationPressure(string id, double tKelvin)
    {
        // PR-exact property: the liquid and vapour roots have equal fugacity at P_sat, so the stable root (lower Gibbs
        // energy) is the vapour just below it and the liquid just above it; T_sat(P_sat(T)) = T.
        var pSat = PhaseStability.PureSaturationPressure(id, Temperature.FromKelvins(tKelvin))!.Value.Pascals;
        var model = PhaseStability.Prepare(Pure(id));
        Assert.Equal(FluidPhase.Gas, model.Check(Temperature.FromKelvins(tKelvin), Pressure.FromPascals(pSat * (1 - 1e-6))).Phase);
        Assert.Equal(FluidPhase.Liquid, model.Check(Temperature.FromKelvins(tKelvin), Pressure.FromPascals(pSat * (1 + 1e-6))).Phase);

        // The tangent-plane code's own root choice (used for mixtures) flips at the same pressure.
        var eos = new PhaseEquilibrium(RealGasMixture.Create(Pure(id)).Eos);
        var below = eos.Test(tKelvin, pSat * (1 - 1e-6), true, false, default, default);
        var above = eos.Test(tKelvin, pSat * (1 + 1e-6), true, false, default, default);
        Assert.False(below.Unstable || below.FeedLiquidLike);
        Assert.True(!above.Unstable && above.FeedLiquidLike);

        AssertEx.Within(tKelvin, PhaseStability.PureSaturationTemperature(id, Pressure.FromPascals(pSat))!.Value.Kelvins, 1e-6);
    }

    [Fact]
    public void Check_Propane5Bara_Minus5C_IsLiquidBelowItsSaturationTemperature()
    {
        // The ideal-gas counter-example: propane at 5 bara and −5 °C is a subcooled liquid. NIST Chemistry WebBook:
        // propane's saturation temperature at 0.5 MPa is 274.9 K (from memory — verify); PR within 1.5 K.
        var c = PhaseStability.Check(Pure("C3H8"), Temperature.FromDegreesCelsius(-5), Pressure.FromBars(5));
        Assert.Equal(FluidPhase.Liquid, c.Phase);
        Assert.True(c.LiquidPresent);
        Assert.Equal(DewPointStatus.Found, c.HydrocarbonDewPoint.Status);
        AssertEx.Within(274.9, c.HydrocarbonDewPoint.TemperatureKelvin, 1.5);
        Assert.True(c.SuperheatAboveHydrocarbonDewPoint!.Value.Kelvins < -5);
    }

    [Fact]
    public void Check_RichGas40Bara10C_IsTwoPhaseAboutFifteenKelvinInsideItsDewPoint()
    {
        // The real-gas counter-example: liquid drops out of the rich gas at 40 bara and 10 °C.
        var model = PhaseStability.Prepare(RichGas);
        var c = model.Check(Temperature.FromDegreesCelsius(10), Pressure.FromBars(40));
        Assert.Equal(FluidPhase.TwoPhase, c.Phase);
        Assert.Equal(FluidPhase.TwoPhase, c.HydrocarbonPhase);
        Assert.True(c.IncipientPhaseLiquidLike);
        Assert.True(c.MinimumReducedTangentPlaneDistance < 0);
        var superheat = c.SuperheatAboveHydrocarbonDewPoint!.Value.Kelvins;
        Assert.InRange(superheat, -20, -10);

        // The incipient phase is a liquid richer in the heavy ends than the feed.
        var s = model.TestStability(Temperature.FromDegreesCelsius(10), Pressure.FromBars(40));
        Assert.False(s.Stable);
        Assert.Equal(FluidPhase.Gas, s.FeedPhase);
        Assert.True(s.IncipientMoleFractions!["n-C5H12"] > 0.02);
        Assert.True(s.IncipientMoleFractions["CH4"] < 0.78);
    }

    [Theory]
    [InlineData(10.0)]
    [InlineData(40.0)]
    [InlineData(80.0)]
    public void HydrocarbonDewPoint_RichGas_SeparatesStableFromUnstableStates(double bar)
    {
        // Definition of the upper dew point: single-phase just above it, unstable just below it (every trial phase).
        var model = PhaseStability.Prepare(RichGas);
        var dew = model.HydrocarbonDewPointAt(Pressure.FromBars(bar));
        Assert.Equal(DewPointStatus.Found, dew.Status);
        var above = model.TestStability(Temperature.FromKelvins(dew.TemperatureKelvin + 0.05), Pressure.FromBars(bar));
        var below = model.TestStability(Temperature.FromKelvins(dew.TemperatureKelvin - 0.05), Pressure.FromBars(bar));
        Assert.True(above.Stable, $"stable 0.05 K above the dew point {dew.TemperatureKelvin} K");
        Assert.False(below.Stable, $"unstable 0.05 K below the dew point {dew.TemperatureKelvin} K");
        Assert.True(below.IncipientPhaseLiquidLike);

        // No instability anywhere above it (1 K scan, all trial phases): it is the upper dew point.
        for (var t = dew.TemperatureKelvin + 1; t < 450; t += 1)
        {
            Assert.True(model.TestStability(Temperature.FromKelvins(t), Pressure.FromBars(bar)).Stable, $"stable at {t} K");
        }
    }

    [Fact]
    public void HydrocarbonDewPoint_RichGasAt40Bara_IsNear25C()
    {
        // The composition was chosen for this (see RichGas); the check guards the counter-example's premise, with the
        // dew point bracketed by the stability test above. Value computed by this model, not a published one.
        var dew = PhaseStability.Prepare(RichGas).HydrocarbonDewPointAt(Pressure.FromBars(40));
        Assert.InRange(dew.TemperatureKelvin, 273.15 + 22, 273.15 + 28);
    }

    [Fact]
    public void HydrocarbonDewPoint_AboveTheCricondenbar_ReportsNoDewPoint()
    {
        // At 120 bara the rich gas turns liquid-like on cooling without a second phase; confirmed by a 1 K scan with every
        // trial phase from 450 K down to 150 K finding no instability.
        var model = PhaseStability.Prepare(RichGas);
        var dew = model.HydrocarbonDewPointAt(Pressure.FromBars(120));
        Assert.Equal(DewPointStatus.AboveCricondenbar, dew.Status);
        Assert.Null(dew.Temperature);
        for (var t = 450.0; t >= 150; t -= 1)
        {
            Assert.True(model.TestStability(Temperature.FromKelvins(t), Pressure.FromBars(120)).Stable, $"stable at {t} K");
        }

        var c = model.Check(Temperature.FromDegreesCelsius(40), Pressure.FromBars(120));
        Assert.Equal(FluidPhase.Gas, c.Phase);
        Assert.Null(c.SuperheatAboveHydrocarbonDewPoint);
    }

    [Theory]
    // NIST Chemistry WebBook critical pressures — from memory — verify: CO2 7.3773 MPa, H2 1.2964 MPa (normal hydrogen).
    [InlineData("CO2", 80e5)]
    [InlineData("H2", 20e5)]
    public void HydrocarbonDewPoint_PureAboveCriticalPressure_HasNone(string id, double pPascals)
    {
        var dew = PhaseStability.Prepare(Pure(id)).HydrocarbonDewPointAt(Pressure.FromPascals(pPascals));
        Assert.Equal(DewPointStatus.AboveCricondenbar, dew.Status);
        Assert.Null(PhaseStability.PureSaturationTemperature(id, Pressure.FromPascals(pPascals)));
    }

    [Fact]
    public void PublishedPengRobinsonExample_MethaneEthaneNitrogen_DewAndBubblePoints()
    {
        // CalebBell/thermo documentation (docs/ and the FlashVL docstring): CH4/C2H6/N2 = 0.965/0.018/0.017, PR with the
        // 'ChemSep PR' k_ij [[0, -0.0059, 0.0289], [-0.0059, 0, 0.0533], [0.0289, 0.0533, 0]], constants Tc = 190.564,
        // 305.32, 126.2 K; Pc = 4 599 000, 4 872 000, 3 394 387.5 Pa; ω = 0.008, 0.098, 0.04 (as printed with the same
        // example). Printed: dew point at 1e5 Pa 133.6 K (133.8 K in another release with slightly different constants,
        // hence ± 0.3 K); bubble pressure at 133 K 518 367.4 Pa (515 029.6 Pa in that release).
        var eos = new PengRobinsonMixture(
            [190.564, 305.32, 126.2], [4599000.0, 4872000.0, 3394387.5], [0.008, 0.098, 0.04], [],
            [0, -0.0059, 0.0289, -0.0059, 0, 0.0533, 0.0289, 0.0533, 0], [0.965, 0.018, 0.017], 8.31446261815324);
        var pe = new PhaseEquilibrium(eos);
        var dew = pe.UpperDewPoint(1e5, 0.001);
        Assert.Equal(DewPointOutcome.Found, dew.Outcome);
        AssertEx.Within(133.6, dew.TemperatureKelvin, 0.3, "dew point at 1 bar, K");

        // Bubble point: just below it the liquid feed is unstable against a vapour-like trial; just above it, stable.
        var below = pe.Test(133, 518367.4 * 0.99, true, false, default, default);
        var above = pe.Test(133, 518367.4 * 1.01, true, false, default, default);
        Assert.True(below.Unstable && below.FeedLiquidLike && !below.IncipientLiquidLike);
        Assert.True(!above.Unstable && above.FeedLiquidLike);
    }

    [Theory]
    // Ordinary compressor suction and discharge states (common practice, no single source).
    [InlineData("dry-air", 20.0, 1.0)]
    [InlineData("dry-air", 180.0, 10.0)]
    [InlineData("hydrogen", 30.0, 20.0)]
    [InlineData("hydrogen", 150.0, 80.0)]
    [InlineData("nitrogen", 25.0, 50.0)]
    [InlineData("methane", 20.0, 40.0)]
    [InlineData("methane", 130.0, 100.0)]
    public void Check_PermanentGasesAtCompressorStates_AreStableGas(string preset, double celsius, double bar)
    {
        var c = PhaseStability.Check(GasCatalog.Default.Preset(preset), Temperature.FromDegreesCelsius(celsius), Pressure.FromBars(bar));
        Assert.Equal(FluidPhase.Gas, c.Phase);
        Assert.False(c.LiquidPresent);
        Assert.True(c.MinimumReducedTangentPlaneDistance >= 0);
        if (c.SuperheatAboveHydrocarbonDewPoint is { } sh)
        {
            Assert.True(sh.Kelvins > 50, $"superheat {sh.Kelvins} K");
        }
    }

    [Fact]
    public void Check_Methane10Bar_DewPointIsItsSaturationTemperature()
    {
        // NIST Chemistry WebBook: methane saturation temperature at 1 MPa 149.14 K (from memory — verify); PR within 1.5 K.
        var c = PhaseStability.Check(GasCatalog.Default.Preset("methane"), Temperature.FromDegreesCelsius(20), Pressure.FromBars(10));
        AssertEx.Within(149.14, c.HydrocarbonDewPoint.TemperatureKelvin, 1.5);
        AssertEx.Within(293.15 - c.HydrocarbonDewPoint.TemperatureKelvin, c.SuperheatAboveHydrocarbonDewPoint!.Value.Kelvins, 1e-9);
    }

    [Fact]
    public void Check_SaturatedAirCompressedIsothermally_WaterCondenses()
    {
        // Water dew point from y_w·P and IAPWS-IF97: the IF97 verification value P_sat(300 K) = 3.53658941e-3 MPa
        // (IAPWS R7-97(2012), Table 35) means a gas with y_w·P = 3536.58941 Pa has its dew point at 300 K.
        var pTotal = 1e6;
        var humid = GasCatalog.Default.CreateMixture(
            [new("N2", 0.78084 * (1 - (3536.58941 / pTotal))), new("O2", 0.219160 * (1 - (3536.58941 / pTotal))), new("H2O", 3536.58941 / pTotal)],
            CompositionBasis.Mole);
        var model = PhaseStability.Prepare(humid);
        AssertEx.Within(300.0, model.WaterDewPointAt(Pressure.FromPascals(pTotal))!.Value.Kelvins, 1e-3);

        var warm = model.Check(Temperature.FromKelvins(310), Pressure.FromPascals(pTotal));
        Assert.Equal(FluidPhase.Gas, warm.Phase);
        AssertEx.Within(10.0, warm.SuperheatAboveWaterDewPoint!.Value.Kelvins, 1e-3);

        var cold = model.Check(Temperature.FromKelvins(295), Pressure.FromPascals(pTotal));
        Assert.Equal(FluidPhase.TwoPhase, cold.Phase);
        Assert.Equal(FluidPhase.Gas, cold.HydrocarbonPhase);
        Assert.True(cold.SuperheatAboveWaterDewPoint!.Value.Kelvins < 0);
    }

    [Fact]
    public void Check_WaterIsStrippedBeforeTheHydrocarbonTest()
    {
        // Water is split off before the tangent-plane test (it is judged from its own saturation pressure): the humid
        // gas has the dry gas's hydrocarbon dew point at the same pressure.
        var humid = HumidGas.FromRelativeHumidity(RichGas, 0.5, Temperature.FromDegreesCelsius(40), Pressure.FromBars(40));
        Assert.True(humid.WaterMoleFraction > 0);
        var dry = PhaseStability.Prepare(RichGas).HydrocarbonDewPointAt(Pressure.FromBars(40));
        var wet = PhaseStability.Prepare(humid).HydrocarbonDewPointAt(Pressure.FromBars(40));
        AssertEx.Within(dry.TemperatureKelvin, wet.TemperatureKelvin, 0.02);
    }

    [Theory]
    [InlineData(10.0, 1e5, "temperature")]
    [InlineData(300.0, 0.0, "pressure")]
    [InlineData(300.0, 2e8, "pressure")]
    public void Check_OutOfRange_ThrowsNamingTheInput(double tKelvin, double pPascals, string member)
    {
        var e = Assert.Throws<ThermoInputException>(() => PhaseStability.Check(RichGas, Temperature.FromKelvins(tKelvin), Pressure.FromPascals(pPascals)));
        Assert.Equal(member, e.ParamName);
    }
}
