using BenchmarkDotNet.Attributes;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>
/// The solve path of one stage (T2s, T2 and the constant-k estimate, all in one <see cref="StageSolver.Solve"/> call)
/// and of a three-stage train. Goal: ≤ 300 ns per stage and 0 B allocated, whatever the number of species.
/// </summary>
[MemoryDiagnoser]
public class StageBenchmarks
{
    private readonly TrainStageResult[] _trainResults = new TrainStageResult[3];
    private GasMixture _air = null!;
    private GasMixture _naturalGas = null!;
    private StageConditions _airStage;
    private StageConditions _airStageWithBand;
    private StageConditions _gasStage;
    private TrainStage[] _train = [];

    [GlobalSetup]
    public void Setup()
    {
        _air = GasCatalog.Default.Preset("dry-air");
        // A 10-component pipeline gas (invented composition, typical of a lean natural gas).
        _naturalGas = GasCatalog.Default.CreateMixture(
            [
                new("CH4", 0.8900), new("C2H6", 0.0500), new("C3H8", 0.0200), new("n-C4H10", 0.0050), new("i-C4H10", 0.0050),
                new("n-C5H12", 0.0015), new("i-C5H12", 0.0015), new("n-C6H14", 0.0010), new("N2", 0.0160), new("CO2", 0.0100),
            ],
            CompositionBasis.Mole);
        _airStage = new StageConditions(Pressure.FromKilopascals(101.325), Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(400), StageEfficiency.Isentropic(0.8));
        _airStageWithBand = _airStage with { Efficiency = StageEfficiency.Isentropic(0.8, 0.03) };
        _gasStage = new StageConditions(Pressure.FromKilopascals(2500), Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(7500), StageEfficiency.Isentropic(0.85));
        _train =
        [
            new(Pressure.FromKilopascals(400), StageEfficiency.Isentropic(0.8), SuctionPressure: Pressure.FromKilopascals(100), SuctionTemperature: Temperature.FromDegreesCelsius(30)),
            new(Pressure.FromKilopascals(1500), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.ToOutlet(Temperature.FromDegreesCelsius(40), PressureDrop.OfUpstream(0.02))),
            new(Pressure.FromKilopascals(5500), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.WithApproach(TemperatureDelta.FromKelvins(10), Temperature.FromDegreesCelsius(30), PressureDrop.Absolute(Pressure.FromKilopascals(30)))),
        ];
    }

    [Benchmark(Description = "dry air, one stage (T2s + T2 + constant k)")]
    public StageResult DryAirStage() => StageSolver.Solve(_air, _airStage);

    [Benchmark(Description = "dry air, one stage with the ±0.03 efficiency band")]
    public StageResult DryAirStageWithBand() => StageSolver.Solve(_air, _airStageWithBand);

    [Benchmark(Description = "10-component natural gas, one stage")]
    public StageResult NaturalGasStage() => StageSolver.Solve(_naturalGas, _gasStage);

    [Benchmark(Description = "dry air, three-stage train with intercoolers")]
    public TrainStageResult ThreeStageTrain()
    {
        TrainSolver.Solve(_air, _train, null, _trainResults);
        return _trainResults[2];
    }
}
