using BenchmarkDotNet.Attributes;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>Break-down of the stage solve: the raw-double core, one entropy inversion, and the quantity wrapping.</summary>
[MemoryDiagnoser]
public class CoreProbe
{
    private GasMixture _air = null!;
    private StageConditions _stage;
    private StageConditions _kelvinStage;

    [GlobalSetup]
    public void Setup()
    {
        _air = GasCatalog.Default.Preset("dry-air");
        _stage = new StageConditions(Pressure.FromKilopascals(101.325), Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(400), StageEfficiency.Isentropic(0.8));
        _kelvinStage = new StageConditions(Pressure.FromPascals(101_325), Temperature.FromKelvins(303.15), Pressure.FromPascals(400_000), StageEfficiency.Isentropic(0.8));
    }

    [Benchmark]
    public double Core()
    {
        StageSolver.TrySolveCore(_air, 303.15, 3.95, StageEfficiency.Isentropic(0.8), out var n);
        return n.T2;
    }

    [Benchmark]
    public double EntropyInversion()
    {
        CompressionPath.TrySolveIsentropicTemperature(_air, 303.15, 3.95, 1e-9, 60, out var t);
        return t;
    }

    [Benchmark]
    public double ReadQuantities() => _stage.SuctionPressure.Pascals + _stage.DischargePressure.Pascals + _stage.SuctionTemperature.Kelvins;

    [Benchmark]
    public Temperature MakeQuantity() => Temperature.FromKelvins(400.0);

    [Benchmark]
    public Temperature TemperatureFromDouble() => new(_stage.SuctionPressure.Value, UnitsNet.Units.TemperatureUnit.Kelvin);

    [Benchmark]
    public StageResult FullKelvinInputs() => StageSolver.Solve(_air, _kelvinStage);

    [Benchmark]
    public StageResult Full() => StageSolver.Solve(_air, _stage);
}
