using BenchmarkDotNet.Attributes;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>
/// The GERG-2008 real-gas stage (<see cref="RealGasStageSolver.Solve(Gerg2008Mixture, in StageConditions)"/>: phase checks,
/// T2s, T2, the ideal-gas answer beside it) and one (T, p) property call. Goal: ≤ 30 µs for the 10-component natural gas
/// stage with an isentropic efficiency, 0 bytes allocated on the solve path.
/// </summary>
[MemoryDiagnoser]
public class GergBenchmarks
{
    private Gerg2008Mixture _naturalGas = null!;
    private Gerg2008Mixture _co2 = null!;
    private StageConditions _gasStage;
    private StageConditions _gasPolytropic;
    private StageConditions _co2Stage;

    [GlobalSetup]
    public void Setup()
    {
        // The same invented 10-component lean natural gas as StageBenchmarks and RealGasBenchmarks.
        _naturalGas = Gerg2008Mixture.Create(GasCatalog.Default.CreateMixture(
            [
                new("CH4", 0.8900), new("C2H6", 0.0500), new("C3H8", 0.0200), new("n-C4H10", 0.0050), new("i-C4H10", 0.0050),
                new("n-C5H12", 0.0015), new("i-C5H12", 0.0015), new("n-C6H14", 0.0010), new("N2", 0.0160), new("CO2", 0.0100),
            ],
            CompositionBasis.Mole));
        _co2 = Gerg2008Mixture.Create(GasCatalog.Default.Preset("carbon-dioxide"));
        _gasStage = new StageConditions(Pressure.FromKilopascals(2500), Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(7500), StageEfficiency.Isentropic(0.85));
        _gasPolytropic = _gasStage with { Efficiency = StageEfficiency.Polytropic(0.8) };
        _co2Stage = new StageConditions(Pressure.FromKilopascals(3000), Temperature.FromDegreesCelsius(40), Pressure.FromKilopascals(7500), StageEfficiency.Isentropic(0.8));
    }

    [Benchmark(Description = "GERG-2008: 10-component natural gas, 25 → 75 bar, ηs")]
    public RealGasStageResult NaturalGasIsentropic() => RealGasStageSolver.Solve(_naturalGas, _gasStage);

    [Benchmark(Description = "GERG-2008: 10-component natural gas, 25 → 75 bar, ηp (RK4 path)")]
    public RealGasStageResult NaturalGasPolytropic() => RealGasStageSolver.Solve(_naturalGas, _gasPolytropic);

    [Benchmark(Description = "GERG-2008: CO2, 30 → 75 bar from 40 °C, ηs (liquid-root check near Tc)")]
    public RealGasStageResult CarbonDioxide() => RealGasStageSolver.Solve(_co2, _co2Stage);

    [Benchmark(Description = "GERG-2008: natural gas properties at (T, p) with the phase check")]
    public Gerg2008State NaturalGasState() => _naturalGas.StateAt(Temperature.FromKelvins(303.15), Pressure.FromKilopascals(7500));
}
