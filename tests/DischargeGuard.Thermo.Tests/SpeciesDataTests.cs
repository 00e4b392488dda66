using System.Globalization;

namespace DischargeGuard.Thermo.Tests;

/// <summary>The embedded NASA-7 data against NIST-JANAF tables and the NASA-9 fits (Data/README.md names both).</summary>
public sealed class SpeciesDataTests
{
    private const double R = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;

    // cp tolerances required for the JANAF comparison; C2H4, NH3 and C2H2 get 1 % (their TM-4513 fits deviate most;
    // C2H2 is 0.54 % below JANAF at 1000 K).
    private static readonly Dictionary<string, double> CpTolerance = new()
    {
        ["N2"] = 0.005, ["O2"] = 0.005, ["Ar"] = 0.005, ["CO2"] = 0.005, ["H2O"] = 0.005, ["H2"] = 0.005, ["CO"] = 0.005,
        ["He"] = 0.005, ["H2S"] = 0.005, ["SO2"] = 0.005, ["Ne"] = 0.005, ["Kr"] = 0.005, ["C2H4"] = 0.01, ["NH3"] = 0.01,
        ["Cl2"] = 0.005, ["C2H2"] = 0.01,
    };

    public static TheoryData<string, double> JanafRows()
    {
        // Source: NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998); rows in Data/janaf-checks.csv, 200–1000 K.
        var data = new TheoryData<string, double>();
        foreach (var row in Csv.Read("janaf-checks.csv"))
        {
            var t = row.D("T_K");
            if (t <= 1000 && CpTolerance.ContainsKey(row["species"]))
            {
                data.Add(row["species"], t);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(JanafRows))]
    public void Species_AgainstNistJanaf_WithinRequiredTolerances(string speciesId, double tKelvin)
    {
        var species = Find(speciesId);
        if (tKelvin < species.MinimumKelvin)
        {
            // SO2's only published fit starts at 300 K; the 298.15 K row lies outside the species' valid range.
            Assert.True(speciesId == "SO2" && tKelvin == 298.15, $"{speciesId} {tKelvin} K unexpectedly outside range");
            return;
        }

        var row = Csv.Read("janaf-checks.csv").Single(r => r["species"] == speciesId && r.D("T_K") == tKelvin);
        var label = string.Create(CultureInfo.InvariantCulture, $"{speciesId} at {tKelvin} K");
        AssertEx.WithinRelative(row.D("cp_J_per_mol_K"), species.HeatCapacityJoulesPerMoleKelvin(tKelvin), CpTolerance[speciesId], label + " cp");
        // C2H2: the TM-4513 fit's entropy is 0.106 % below JANAF at 1000 K (its cp runs 0.54 % low there); 0.2 % for it.
        AssertEx.WithinRelative(row.D("s_J_per_mol_K"), species.EntropyJoulesPerMoleKelvin(tKelvin), speciesId == "C2H2" ? 0.002 : 0.001, label + " S°");
        if (tKelvin >= 400)
        {
            var dh = (species.EnthalpyJoulesPerMole(tKelvin) - species.EnthalpyJoulesPerMole(298.15)) / 1000;
            // C2H4: every published NASA-7 fit available (TM-4513, GRI-Mech 3.0, Burcat) is the same fit, 0.551 % off
            // JANAF at 500 K; it gets the same 1 % allowance as its cp.
            AssertEx.WithinRelative(row.D("h_minus_h298_kJ_per_mol"), dh, speciesId == "C2H4" ? 0.01 : 0.005, label + " H − H(298.15 K)");
        }
    }

    public static TheoryData<string> Nasa9Species() =>
    [
        // CH4 (JANAF's own CH4 table is low above 500 K) and the species with no JANAF table.
        "CH4", "C2H6", "C3H8", "n-C4H10", "i-C4H10", "n-C5H12", "i-C5H12", "n-C6H14", "C3H6",
    ];

    [Theory]
    [MemberData(nameof(Nasa9Species))]
    public void Species_AgainstNasa9Fit_Within1Percent(string speciesId)
    {
        // Source: NASA Glenn 9-coefficient fits, McBride, Zehe & Gordon, NASA TP-2002-211556 (Data/nasa9.csv).
        var species = Find(speciesId);
        var nine = Nasa9.All[speciesId];
        for (var t = Math.Max(200, nine.TLow); t <= 1000; t += 50)
        {
            var label = string.Create(CultureInfo.InvariantCulture, $"{speciesId} at {t} K");
            AssertEx.WithinRelative(nine.CpOverR(t) * R, species.HeatCapacityJoulesPerMoleKelvin(t), 0.01, label + " cp");
            AssertEx.WithinRelative(nine.SOverR(t) * R, species.EntropyJoulesPerMoleKelvin(t), 0.01, label + " S°");
            if (t >= 400)
            {
                var expected = (nine.HOverR(t) - nine.HOverR(298.15)) * R;
                var actual = species.EnthalpyJoulesPerMole(t) - species.EnthalpyJoulesPerMole(298.15);
                AssertEx.WithinRelative(expected, actual, 0.01, label + " H − H(298.15 K)");
            }
        }
    }

    [Fact]
    public void Catalog_HasEverySpecies_EachWithRangeMolarMassAndSource()
    {
        string[] expected = ["N2", "O2", "Ar", "CO2", "H2O", "CO", "H2", "He", "CH4", "C2H6", "C3H8", "n-C4H10", "i-C4H10", "n-C5H12", "i-C5H12", "n-C6H14", "n-C7H16", "n-C8H18", "n-C9H20", "n-C10H22", "C2H4", "C3H6", "H2S", "NH3", "SO2", "Ne", "Kr", "Cl2", "C2H2"];
        Assert.Equal(expected, GasCatalog.Default.Species.Select(s => s.Id));
        foreach (var s in GasCatalog.Default.Species)
        {
            Assert.False(string.IsNullOrWhiteSpace(s.Source), s.Id);
            Assert.True(s.MolarMassKilogramsPerMole > 0.001, s.Id);
            Assert.True(s.MinimumKelvin <= (s.Id == "SO2" ? 300 : 200), $"{s.Id} starts at {s.MinimumKelvin} K");
        }
    }

    [Theory]
    // Molar masses from CIAAW 2017 standard atomic weights (conventional values): N 14.007, O 15.999, C 12.011, H 1.008.
    [InlineData("N2", 28.014)]
    [InlineData("CO2", 44.009)]
    [InlineData("CH4", 16.043)]
    [InlineData("H2O", 18.015)]
    public void Species_MolarMass_MatchesCiaawAtomicWeights(string id, double gramsPerMole) =>
        AssertEx.Within(gramsPerMole, Find(id).MolarMassKilogramsPerMole * 1000, 0.0005);

    [Fact]
    public void Species_NasaRanges_JoinContinuouslyAtTheirBreakpoint()
    {
        foreach (var s in GasCatalog.Default.Species)
        {
            var lo = s.Ranges[0];
            var hi = s.Ranges[1];
            var t = lo.HighKelvin;
            // The published fits join to ~1e-6 in cp/R except the TM-4513 pentanes (~1.3e-4); allow 2e-3 everywhere.
            AssertEx.Within(lo.HeatCapacityOverR(t), hi.HeatCapacityOverR(t), 2e-3, s.Id + " cp/R at the joint");
            AssertEx.Within(lo.EntropyOverR(t), hi.EntropyOverR(t), 2e-3, s.Id + " S/R at the joint");
        }
    }

    private static Species Find(string id) =>
        GasCatalog.Default.TryGetSpecies(id, out var s) ? s : throw new InvalidOperationException(id);
}
