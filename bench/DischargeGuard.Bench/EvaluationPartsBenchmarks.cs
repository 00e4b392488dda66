using BenchmarkDotNet.Attributes;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>
/// The Thermo parts of <see cref="PipelineBenchmarks"/>'s stage one by one (<see cref="EvaluationParts"/>): model
/// builds, the phase check at suction and discharge, the stage solves and the envelopes, with their allocation.
/// </summary>
[MemoryDiagnoser]
public class EvaluationPartsBenchmarks
{
    private EvaluationParts _parts = null!;

    [GlobalSetup]
    public void Setup() => _parts = new EvaluationParts();

    [Benchmark(Description = "PhaseStability.Prepare")]
    public PhaseStabilityModel PreparePhase() => _parts.PreparePhase();

    [Benchmark(Description = "phase Check at suction (prepared model)")]
    public PhaseCheck SuctionCheck() => _parts.SuctionCheck();

    [Benchmark(Description = "phase TestStability at discharge (prepared model)")]
    public StabilityResult DischargeStability() => _parts.DischargeStability();

    [Benchmark(Description = "Gerg2008Mixture.Create")]
    public Gerg2008Mixture GergCreate() => _parts.GergCreate();

    [Benchmark(Description = "GERG-2008 stage solve")]
    public RealGasStageResult GergStage() => _parts.GergStage();

    [Benchmark(Description = "RealGasMixture.Create (Peng-Robinson)")]
    public RealGasMixture PengRobinsonCreate() => _parts.PengRobinsonCreate();

    [Benchmark(Description = "Peng-Robinson stage solve")]
    public RealGasStageResult PengRobinsonStage() => _parts.PengRobinsonStage();

    [Benchmark(Description = "PR envelope: max discharge pressure (estimated)")]
    public EnvelopeResult<Pressure> MaxDischargePressure() => _parts.MaxDischargePressure();

    [Benchmark(Description = "humid envelope: max suction temperature (PR, estimated)")]
    public EnvelopeResult<Temperature> HumidEnvelope() => _parts.HumidEnvelope();
}
