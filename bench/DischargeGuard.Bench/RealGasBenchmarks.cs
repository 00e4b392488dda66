using BenchmarkDotNet.Attributes;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>
/// The Peng-Robinson real-gas stage (<see cref="RealGasStageSolver.Solve"/>: phase checks, T2s, T2, the ideal-gas answer
/// beside it). Goal: ≤ 5 µs per stage and 0 bytes allocated on the solve path.
/// </summary>
[MemoryDiagnoser]
public class RealGasBenchmarks
{
    private RealGasMixture _naturalGas = null!;
    private RealGasMixture _co2 = null!;
    private RealGasMixture _hydrogenRich = null!;
    private StageConditions _gasStage;
    private StageConditions _gasPolytropic;
    private StageConditions _gasWithBand;
    private StageConditions _co2Stage;
    private StageConditions _hydrogenStage;

    [GlobalSetup]
    public void Setup()
    {
        // The same invented 10-component lean natural gas as StageBenchmarks.
        _naturalGas = RealGasMixture.Create(GasCatalog.Default.CreateMixture(
            [
                new("CH4", 0.8900), new("C2H6", 0.0500), new("C3H8", 0.0200), new("n-C4H10", 0.0050), new("i-C4H10", 0.0050),
                new("n-C5H12", 0.0015), new("i-C5H12", 0.0015), new("n-C6H14", 0.0010), new("N2", 0.0160), new("CO2", 0.0100),
            ],
            CompositionBasis.Mole));
        _co2 = RealGasMixture.Create(GasCatalog.Default.Preset("carbon-dioxide"));

        // Hydrogen-rich gas: ISO 20765 'gas 4' without its trace of water (CH4 0.55, C3H8 0.1, H2 0.2, O2 0.05, CO 0.1).
        _hydrogenRich = RealGasMixture.Create(GasCatalog.Default.CreateMixture(
            [new("CH4", 0.55), new("C3H8", 0.10), new("H2", 0.20), new("O2", 0.05), new("CO", 0.10)],
            CompositionBasis.Mole));
        _gasStage = new StageConditions(Pressure.FromKilopascals(2500), Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(7500), StageEfficiency.Isentropic(0.85));
        _gasPolytropic = _gasStage with { Efficiency = StageEfficiency.Polytropic(0.8) };
        _gasWithBand = _gasStage with { Efficiency = StageEfficiency.Isentropic(0.85, 0.03) };
        _co2Stage = new StageConditions(Pressure.FromKilopascals(3000), Temperature.FromDegreesCelsius(40), Pressure.FromKilopascals(9000), StageEfficiency.Isentropic(0.8));
        _hydrogenStage = new StageConditions(Pressure.FromKilopascals(2000), Temperature.FromDegreesCelsius(35), Pressure.FromKilopascals(6000), StageEfficiency.Isentropic(0.8));
    }

    [Benchmark(Description = "real gas: 10-component natural gas, 25 → 75 bar, ηs")]
    public RealGasStageResult NaturalGasIsentropic() => RealGasStageSolver.Solve(_naturalGas, _gasStage);

    [Benchmark(Description = "real gas: 10-component natural gas, 25 → 75 bar, ηp (RK4 path)")]
    public RealGasStageResult NaturalGasPolytropic() => RealGasStageSolver.Solve(_naturalGas, _gasPolytropic);

    [Benchmark(Description = "real gas: natural gas with the ±0.03 efficiency band")]
    public RealGasStageResult NaturalGasWithBand() => RealGasStageSolver.Solve(_naturalGas, _gasWithBand);

    [Benchmark(Description = "real gas: CO2, 30 → 90 bar from 40 °C, ηs")]
    public RealGasStageResult CarbonDioxide() => RealGasStageSolver.Solve(_co2, _co2Stage);

    [Benchmark(Description = "real gas: hydrogen-rich gas (20 % H2), 20 → 60 bar, ηs")]
    public RealGasStageResult HydrogenRich() => RealGasStageSolver.Solve(_hydrogenRich, _hydrogenStage);
}
