namespace DischargeGuard.Thermo.Tests;

public sealed class CatalogTests
{
    [Fact]
    public void Presets_IncludeTheRequiredOnes()
    {
        foreach (var id in new[] { "dry-air", "nitrogen", "hydrogen", "carbon-dioxide", "methane" })
        {
            Assert.True(GasCatalog.Default.TryGetPreset(id, out var p), id);
            Assert.False(string.IsNullOrWhiteSpace(p.Source));
        }
    }

    [Fact]
    public void DryAir_HasTheGordon1982CompositionAndMolarMass()
    {
        // NASA Glenn 'Air' entry (Gordon 1982): N2 78.084, O2 20.9476, Ar 0.9365, CO2 0.0319 mol %. With CIAAW 2017 atomic
        // weights the molar mass is 28.9654 g/mol (the NASA entry, with older weights, prints 28.9651159).
        var air = GasCatalog.Default.Preset("dry-air");
        AssertEx.Within(0.78084, air.MoleFractionOf("N2"), 1e-12);
        AssertEx.Within(0.209476, air.MoleFractionOf("O2"), 1e-12);
        AssertEx.Within(28.9651159, air.MolarMassKilogramsPerMole * 1000, 0.001);
    }

    [Fact]
    public void Mixture_ByMass_ConvertsToMoleFractions()
    {
        var gas = GasCatalog.Default.CreateMixture([new("H2", 0.5), new("N2", 0.5)], CompositionBasis.Mass);
        var h2Moles = 0.5 / 2.016;
        var n2Moles = 0.5 / 28.014;
        AssertEx.WithinRelative(h2Moles / (h2Moles + n2Moles), gas.MoleFractionOf("H2"), 1e-12);
        AssertEx.Within(0.5, gas.Components.Single(c => c.Species.Id == "H2").MassFraction, 1e-12);
    }

    [Fact]
    public void Mixture_PlainNameAlias_IsAnsweredWithTheFormula()
    {
        var gas = GasCatalog.Default.CreateMixture([new("methane", 0.9), new("Ethane", 0.1)], CompositionBasis.Mole);
        Assert.Equal(["CH4", "C2H6"], gas.Components.Select(c => c.Species.Id));
    }

    [Fact]
    public void Mixture_FractionsNotSummingToOne_ErrorStatesTheSum()
    {
        var ex = Assert.Throws<InvalidCompositionException>(() =>
            GasCatalog.Default.CreateMixture([new("CH4", 0.9), new("C2H6", 0.05)], CompositionBasis.Mole));
        Assert.Contains("0.95", ex.Message, StringComparison.Ordinal);
        Assert.Equal(0.95, ex.Sum!.Value, 12);
    }

    [Fact]
    public void Mixture_SumWithinTolerance_IsAcceptedAndNormalised()
    {
        var gas = GasCatalog.Default.CreateMixture([new("CH4", 0.90005), new("C2H6", 0.1)], CompositionBasis.Mole);
        AssertEx.Within(1.0, gas.Components.Sum(c => c.MoleFraction), 1e-15);
    }

    [Fact]
    public void Mixture_UnknownSpecies_ErrorListsSupportedOnes()
    {
        var ex = Assert.Throws<InvalidCompositionException>(() =>
            GasCatalog.Default.CreateMixture([new("CH4", 0.9), new("Xe", 0.1)], CompositionBasis.Mole));
        Assert.Equal("Xe", ex.SpeciesKey);
        Assert.Contains("n-C4H10", ex.Message, StringComparison.Ordinal);
        Assert.Contains("Kr", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Mixture_PropertiesAt_AreMoleWeightedSumsOfSpecies()
    {
        var gas = GasCatalog.Default.CreateMixture([new("CH4", 0.7), new("CO2", 0.2), new("N2", 0.1)], CompositionBasis.Mole);
        GasCatalog.Default.TryGetSpecies("CH4", out var ch4);
        GasCatalog.Default.TryGetSpecies("CO2", out var co2);
        GasCatalog.Default.TryGetSpecies("N2", out var n2);
        foreach (var t in new[] { 250.0, 600.0, 1500.0 })
        {
            var p = gas.PropertiesAt(UnitsNet.Temperature.FromKelvins(t));
            var cp = (0.7 * ch4.HeatCapacityJoulesPerMoleKelvin(t)) + (0.2 * co2.HeatCapacityJoulesPerMoleKelvin(t)) + (0.1 * n2.HeatCapacityJoulesPerMoleKelvin(t));
            AssertEx.WithinRelative(cp, p.MolarCp.JoulesPerMoleKelvin, 1e-12);
            var mixing = -ThermoConstants.MolarGasConstantJoulesPerMoleKelvin * ((0.7 * Math.Log(0.7)) + (0.2 * Math.Log(0.2)) + (0.1 * Math.Log(0.1)));
            var s = (0.7 * ch4.EntropyJoulesPerMoleKelvin(t)) + (0.2 * co2.EntropyJoulesPerMoleKelvin(t)) + (0.1 * n2.EntropyJoulesPerMoleKelvin(t)) + mixing;
            AssertEx.WithinRelative(s, p.MolarEntropy.JoulesPerMoleKelvin, 1e-12);
            AssertEx.WithinRelative(p.MolarCp.JoulesPerMoleKelvin / p.MolarCv.JoulesPerMoleKelvin, p.K, 1e-12);
        }
    }
}
