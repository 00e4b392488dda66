using DischargeGuard.Testing;
using UnitsNet;

namespace DischargeGuard.Thermo.Tests;

public sealed class FloodedStageTests
{
    [Fact]
    public void FloodedBalance_OnArgon_MatchesTheHandCalculation()
    {
        // Hand calculation (marked as such): argon cp = 5/2·R/M = 2.5·8.314462618/0.039948 = 520.33 J/(kg·K) exactly for a
        // monatomic ideal gas (NIST-JANAF Ar: cp = 20.786 J/(mol·K) at every temperature). Balance per kg of gas:
        // 520.33·(T2 − 300) + 5·2000·(T2 − 330) = 200 000 → T2 = (200 000 + 156 099 + 3 300 000)/10 520.33 = 347.53 K.
        var argon = GasCatalog.Default.CreateMixture(new Dictionary<string, double> { ["Ar"] = 1 }, CompositionBasis.Mole);
        var t2 = FloodedStageSolver.Solve(argon, Temperature.FromKelvins(300), SpecificEnergy.FromJoulesPerKilogram(200_000), 5, 2000, Temperature.FromKelvins(330));

        AssertEx.Within(347.53, t2.Kelvins, 0.01);
    }

    [Fact]
    public void FloodedBalance_WithoutRoot_ReturnsFalseAndNeverThrows()
    {
        var argon = GasCatalog.Default.CreateMixture(new Dictionary<string, double> { ["Ar"] = 1 }, CompositionBasis.Mole);
        Assert.False(FloodedStageSolver.TrySolve(argon, Temperature.FromKelvins(300), SpecificEnergy.FromJoulesPerKilogram(-1), 5, 2000, Temperature.FromKelvins(330), 1e-6, 200, out _));
    }
}
