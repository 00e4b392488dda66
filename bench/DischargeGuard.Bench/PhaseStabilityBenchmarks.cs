using BenchmarkDotNet.Attributes;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>
/// The phase check per state (<see cref="PhaseStabilityModel.Check"/>: tangent-plane test at the state, the upper
/// hydrocarbon dew point at its pressure, the water dew point). Goal: well under 1 ms per call, so it can run at every
/// stage's suction and discharge.
/// </summary>
[MemoryDiagnoser]
public class PhaseStabilityBenchmarks
{
    private PhaseStabilityModel _rich = null!;
    private PhaseStabilityModel _lean = null!;
    private PhaseStabilityModel _air = null!;
    private PhaseStabilityModel _propane = null!;
    private GasMixture _richGas = null!;
    private GasMixture _airGas = null!;

    [GlobalSetup]
    public void Setup()
    {
        // The rich gas of PhaseStabilityTests (C3+ 10.5 %, dew point ≈ 25 °C at 40 bara).
        _richGas = GasCatalog.Default.CreateMixture(
            [
                new("CH4", 0.78), new("C2H6", 0.10), new("C3H8", 0.05), new("i-C4H10", 0.015), new("n-C4H10", 0.02),
                new("n-C5H12", 0.02), new("N2", 0.01), new("CO2", 0.005),
            ],
            CompositionBasis.Mole);
        _rich = PhaseStability.Prepare(_richGas);

        // The invented 10-component lean natural gas of StageBenchmarks, with water at 50 % RH and 30 °C, 25 bara.
        var lean = GasCatalog.Default.CreateMixture(
            [
                new("CH4", 0.8900), new("C2H6", 0.0500), new("C3H8", 0.0200), new("n-C4H10", 0.0050), new("i-C4H10", 0.0050),
                new("n-C5H12", 0.0015), new("i-C5H12", 0.0015), new("n-C6H14", 0.0010), new("N2", 0.0160), new("CO2", 0.0100),
            ],
            CompositionBasis.Mole);
        _lean = PhaseStability.Prepare(HumidGas.FromRelativeHumidity(lean, 0.5, Temperature.FromDegreesCelsius(30), Pressure.FromBars(25)));
        _airGas = GasCatalog.Default.Preset("dry-air");
        _air = PhaseStability.Prepare(_airGas);
        _propane = PhaseStability.Prepare(GasCatalog.Default.CreateMixture([new("C3H8", 1.0)], CompositionBasis.Mole));
    }

    [Benchmark(Description = "phase check: rich gas 40 bara 10 °C (two-phase), prepared model")]
    public PhaseCheck RichTwoPhase() => _rich.Check(Temperature.FromDegreesCelsius(10), Pressure.FromBars(40));

    [Benchmark(Description = "phase check: rich gas 120 bara 110 °C discharge (above cricondenbar), prepared model")]
    public PhaseCheck RichDischarge() => _rich.Check(Temperature.FromDegreesCelsius(110), Pressure.FromBars(120));

    [Benchmark(Description = "phase check: humid 10-component lean gas 25 bara 30 °C suction, prepared model")]
    public PhaseCheck LeanSuction() => _lean.Check(Temperature.FromDegreesCelsius(30), Pressure.FromBars(25));

    [Benchmark(Description = "phase check: dry air 1 bara 20 °C, prepared model")]
    public PhaseCheck Air() => _air.Check(Temperature.FromDegreesCelsius(20), Pressure.FromBars(1));

    [Benchmark(Description = "phase check: propane 5 bara −5 °C (liquid), prepared model")]
    public PhaseCheck Propane() => _propane.Check(Temperature.FromDegreesCelsius(-5), Pressure.FromBars(5));

    [Benchmark(Description = "phase check: rich gas 40 bara 10 °C, PhaseStability.Check (prepares each call)")]
    public PhaseCheck RichUnprepared() => PhaseStability.Check(_richGas, Temperature.FromDegreesCelsius(10), Pressure.FromBars(40));

    // PhaseStability.Prepare keeps one model per composition and a model remembers its last dew points, so the
    // benchmarks above measure a repeated question. These build a new model every call (the internal constructor,
    // bypassing the cache): the cost of the first question on a gas, the dew-point search included.
    [Benchmark(Description = "phase check, new model every call: rich gas 40 bara 10 °C")]
    public PhaseCheck RichTwoPhaseNewModel() => new PhaseStabilityModel(_richGas).Check(Temperature.FromDegreesCelsius(10), Pressure.FromBars(40));

    [Benchmark(Description = "phase check, new model every call: rich gas 120 bara 110 °C (above cricondenbar)")]
    public PhaseCheck RichDischargeNewModel() => new PhaseStabilityModel(_richGas).Check(Temperature.FromDegreesCelsius(110), Pressure.FromBars(120));

    [Benchmark(Description = "phase check, new model every call: dry air 1 bara 20 °C")]
    public PhaseCheck AirNewModel() => new PhaseStabilityModel(_airGas).Check(Temperature.FromDegreesCelsius(20), Pressure.FromBars(1));
}
