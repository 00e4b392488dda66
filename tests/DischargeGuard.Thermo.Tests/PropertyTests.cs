using CsCheck;
using UnitsNet;
using static DischargeGuard.Thermo.Tests.CompressionTests;

namespace DischargeGuard.Thermo.Tests;

/// <summary>Generated-input properties of the compression paths (CsCheck; each runs its default 100 samples).</summary>
public sealed class PropertyTests
{
    private static readonly GasMixture[] Gases =
    [
        GasCatalog.Default.Preset("dry-air"),
        GasCatalog.Default.Preset("hydrogen"),
        GasCatalog.Default.Preset("carbon-dioxide"),
        GasCatalog.Default.CreateMixture([new("CH4", 0.85), new("C2H6", 0.08), new("C3H8", 0.04), new("n-C4H10", 0.01), new("N2", 0.02)], CompositionBasis.Mole),
    ];

    private static readonly Gen<GasMixture> GenGas = Gen.Int[0, Gases.Length - 1].Select(i => Gases[i]);
    private static readonly Gen<double> GenRatio = Gen.Double[1.05, 8];
    private static readonly Gen<double> GenT1 = Gen.Double[230, 420];
    private static readonly Gen<double> GenEta = Gen.Double[0.55, 0.95];

    [Fact]
    public void DischargeTemperature_RisesWithRatio() =>
        Gen.Select(GenGas, GenT1, GenRatio, GenEta).Sample((gas, t1, r, eta) =>
        {
            var a = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Isentropic(eta)));
            var b = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r * 1.01, StageEfficiency.Isentropic(eta)));
            return b.EstimatedDischargeTemperature > a.EstimatedDischargeTemperature && b.IsentropicDischargeTemperature > a.IsentropicDischargeTemperature;
        });

    [Fact]
    public void DischargeTemperature_RisesWithSuctionTemperature() =>
        Gen.Select(GenGas, GenT1, GenRatio, GenEta).Sample((gas, t1, r, eta) =>
        {
            var a = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Isentropic(eta)));
            var b = StageSolver.Solve(gas, Stage(1e5, t1 + 1, 1e5 * r, StageEfficiency.Isentropic(eta)));
            return b.EstimatedDischargeTemperature > a.EstimatedDischargeTemperature;
        });

    [Fact]
    public void DischargeTemperature_FallsWithEfficiency() =>
        Gen.Select(GenGas, GenT1, GenRatio, GenEta).Sample((gas, t1, r, eta) =>
        {
            var a = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Isentropic(eta)));
            var b = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Isentropic(eta + 0.02)));
            var pa = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Polytropic(eta)));
            var pb = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Polytropic(eta + 0.02)));
            return b.EstimatedDischargeTemperature < a.EstimatedDischargeTemperature && pb.EstimatedDischargeTemperature < pa.EstimatedDischargeTemperature;
        });

    [Fact]
    public void UnitEfficiency_GivesTheIsentropicTemperature() =>
        Gen.Select(GenGas, GenT1, GenRatio).Sample((gas, t1, r) =>
        {
            var s = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Isentropic(1)));
            var p = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r, StageEfficiency.Polytropic(1)));
            return Math.Abs(s.EstimatedDischargeTemperature.Kelvins - s.IsentropicDischargeTemperature.Kelvins) < 1e-7
                && Math.Abs(p.EstimatedDischargeTemperature.Kelvins - p.IsentropicDischargeTemperature.Kelvins) < 1e-7;
        });

    [Fact]
    public void PolytropicAndIsentropicEfficiency_AgreeAsRatioTendsToOne() =>
        Gen.Select(GenGas, GenT1, GenEta).Sample((gas, t1, eta) =>
        {
            // The two definitions differ by a reheat factor that vanishes as r → 1.
            var r = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * 1.0001, StageEfficiency.Polytropic(eta)));
            return Math.Abs(r.IsentropicEfficiency - eta) < 1e-4;
        });

    [Fact]
    public void EnvelopePressure_RoundTripsToTheLimit() =>
        Gen.Select(GenGas, GenT1, GenEta, Gen.Double[20, 250]).Sample((gas, t1, eta, riseK) =>
        {
            var c = Stage(1e5, t1, 2e5, StageEfficiency.Isentropic(eta));
            var limit = Temperature.FromKelvins(t1 + riseK);
            var e = EnvelopeSolver.MaxDischargePressure(gas, c, TemperatureQuantity.Estimated, limit);
            var at = StageSolver.Solve(gas, c with { DischargePressure = e.Value!.Value });
            return e.Status == EnvelopeStatus.Found && Math.Abs((at.EstimatedDischargeTemperature.Kelvins / limit.Kelvins) - 1) < 1e-6;
        });

    [Fact]
    public void EnvelopeSuctionTemperature_RoundTripsToTheLimit() =>
        Gen.Select(GenGas, Gen.Double[1.2, 4], GenEta).Sample((gas, r, eta) =>
        {
            var c = Stage(1e5, 300, 1e5 * r, StageEfficiency.Polytropic(eta));
            var limit = Temperature.FromKelvins(480);
            var e = EnvelopeSolver.MaxSuctionTemperature(gas, c, TemperatureQuantity.Estimated, limit);
            if (e.Status == EnvelopeStatus.AlreadyExceeded)
            {
                // Then even the coldest suction in range overshoots.
                return StageSolver.Solve(gas, c with { SuctionTemperature = gas.MinimumTemperature }).EstimatedDischargeTemperature >= limit;
            }

            var at = StageSolver.Solve(gas, c with { SuctionTemperature = e.Value!.Value });
            return e.Status == EnvelopeStatus.Found && Math.Abs((at.EstimatedDischargeTemperature.Kelvins / limit.Kelvins) - 1) < 1e-6;
        });

    [Fact]
    public void TrainWithoutCooling_EqualsOneStage() =>
        Gen.Select(GenGas, GenT1, Gen.Double[1.2, 3], Gen.Double[1.2, 3], GenEta).Sample((gas, t1, r1, r2, eta) =>
        {
            // Polytropic efficiency is path-consistent, and η = 1 isentropic stages chain exactly: both must equal one stage.
            foreach (var e in new[] { StageEfficiency.Polytropic(eta), StageEfficiency.Isentropic(1) })
            {
                TrainStage[] stages =
                [
                    new(Pressure.FromPascals(1e5 * r1), e, SuctionPressure: Pressure.FromPascals(1e5), SuctionTemperature: Temperature.FromKelvins(t1)),
                    new(Pressure.FromPascals(1e5 * r1 * r2), e),
                ];
                var train = TrainSolver.Solve(gas, stages);
                var single = StageSolver.Solve(gas, Stage(1e5, t1, 1e5 * r1 * r2, e));
                if (Math.Abs(train[1].Stage.EstimatedDischargeTemperature.Kelvins - single.EstimatedDischargeTemperature.Kelvins) > 1e-6)
                {
                    return false;
                }
            }

            return true;
        });
}
