using UnitsNet;

namespace DischargeGuard.Thermo.Tests;

public sealed class HumidityAndAtmosphereTests
{
    [Theory]
    // IAPWS-IF97 (2007 revised release), Table 35: verification values of the saturation-pressure equation (eq. 30).
    [InlineData(300, 0.353658941e-2)]
    [InlineData(500, 0.263889776e1)]
    [InlineData(600, 0.123443146e2)]
    public void SaturationPressure_MatchesIf97VerificationTable(double tKelvin, double pMegapascals) =>
        AssertEx.WithinRelative(pMegapascals, WaterSaturation.SaturationPressurePascals(tKelvin) / 1e6, 1e-8);

    [Theory]
    // IAPWS-IF97 (2007 revised release), Table 36: verification values of the saturation-temperature equation (eq. 31).
    [InlineData(0.1, 0.372755919e3)]
    [InlineData(1, 0.453035632e3)]
    [InlineData(10, 0.584149488e3)]
    public void SaturationTemperature_MatchesIf97VerificationTable(double pMegapascals, double tKelvin) =>
        AssertEx.WithinRelative(tKelvin, WaterSaturation.SaturationTemperatureKelvin(pMegapascals * 1e6), 1e-8);

    [Fact]
    public void SaturationPressure_At20C_MatchesSteamTableWorkedValue()
    {
        // Humid-air worked value: saturation pressure of water at 20 °C = 2.3392 kPa (IAPWS-95 based steam tables and the
        // ASHRAE Handbook—Fundamentals psychrometric table; from memory — verify).
        AssertEx.Within(2.3392, WaterSaturation.SaturationPressure(Temperature.FromDegreesCelsius(20)).Kilopascals, 0.0005);
    }

    [Fact]
    public void SublimationPressure_JoinsTriplePointAndMatchesIceTable()
    {
        // IAPWS 2011 sublimation equation: exactly the triple-point pressure 611.657 Pa at 273.16 K.
        AssertEx.WithinRelative(611.657, WaterSaturation.SaturationPressurePascals(273.159999999), 1e-6);
        // Vapour pressure over ice at −20 °C ≈ 103.3 Pa (ASHRAE Handbook—Fundamentals psychrometric table; from memory — verify).
        AssertEx.WithinRelative(103.26, WaterSaturation.SaturationPressurePascals(253.15), 0.005);
        // The frost-point inversion round-trips.
        AssertEx.Within(253.15, WaterSaturation.SaturationTemperatureKelvin(WaterSaturation.SaturationPressurePascals(253.15)), 1e-6);
    }

    [Fact]
    public void HumidAir_AtSixtyPercentAnd20C_HasPartialPressureRatioAsWaterFraction()
    {
        var dry = GasCatalog.Default.Preset("dry-air");
        var wet = HumidGas.FromRelativeHumidity(dry, 0.6, Temperature.FromDegreesCelsius(20), Pressure.FromKilopascals(101.325));
        var expected = 0.6 * WaterSaturation.SaturationPressurePascals(293.15) / 101_325;
        AssertEx.WithinRelative(expected, wet.MoleFractionOf("H2O"), 1e-12);
        Assert.True(wet.MolarMassKilogramsPerMole < dry.MolarMassKilogramsPerMole);
        var dew = HumidGas.DewPoint(wet, Pressure.FromKilopascals(101.325))!.Value;
        // Dew point of 20 °C / 60 % air ≈ 12.0 °C (psychrometric charts; common practice, no single source).
        AssertEx.Within(12.0, dew.DegreesCelsius, 0.1);
        var byDewPoint = HumidGas.FromDewPoint(dry, dew, Temperature.FromDegreesCelsius(20), Pressure.FromKilopascals(101.325));
        AssertEx.WithinRelative(wet.MoleFractionOf("H2O"), byDewPoint.MoleFractionOf("H2O"), 1e-9);
    }

    [Theory]
    [InlineData(-0.01)]
    [InlineData(1.2)]
    public void HumidAir_WithHumidityOutsideZeroToOne_IsRejected(double rh) =>
        Assert.Throws<ThermoInputException>(() => HumidGas.FromRelativeHumidity(GasCatalog.Default.Preset("dry-air"), rh, Temperature.FromDegreesCelsius(20), Pressure.FromKilopascals(100)));

    [Fact]
    public void HumidAir_DewPointAboveGasTemperature_IsRejected() =>
        Assert.Throws<ThermoInputException>(() => HumidGas.FromDewPoint(GasCatalog.Default.Preset("dry-air"), Temperature.FromDegreesCelsius(30), Temperature.FromDegreesCelsius(20), Pressure.FromKilopascals(100)));

    [Theory]
    // ISO 2533:1975 standard atmosphere table values (from memory — verify): 0 m 101.325 kPa, 1000 m 89.875 kPa, 2000 m 79.495 kPa.
    [InlineData(0, 101.325)]
    [InlineData(1000, 89.875)]
    [InlineData(2000, 79.495)]
    // domain-limits survey: 1500 m ≈ 84.6 kPa (ISA formula; from memory, high confidence).
    [InlineData(1500, 84.56)]
    public void StandardAtmosphere_PressureAtElevation_MatchesIso2533(double meters, double kilopascals) =>
        AssertEx.Within(kilopascals, StandardAtmosphere.PressureAt(Length.FromMeters(meters)).Kilopascals, 0.01);

    [Fact]
    public void StandardAtmosphere_OutsideTroposphere_IsRejected() =>
        Assert.Throws<ThermoInputException>(() => StandardAtmosphere.PressureAt(Length.FromMeters(12_000)));

    [Fact]
    public void StandardReference_NormalCubicMetre_OfAir_HasTheIdealGasMass()
    {
        // Ideal-gas density of dry air at 0 °C, 101.325 kPa: p·M/(R·T) = 1.2923 kg/m³ (M = 28.965 g/mol; the tabulated real
        // density 1.2922 kg/m³ differs by Z ≈ 0.9994 — DIN 1343 conditions, from memory — verify).
        var air = GasCatalog.Default.Preset("dry-air");
        var flow = StandardReference.Normal.ToMassFlow(VolumeFlow.FromCubicMetersPerHour(3600), air);
        AssertEx.Within(1.2923, flow.KilogramsPerSecond, 0.0005);
    }
}
