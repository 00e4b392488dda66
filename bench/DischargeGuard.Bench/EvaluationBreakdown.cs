using System.Diagnostics;
using System.Globalization;
using System.Text.Json;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>
/// A Stopwatch breakdown of one evaluation of <see cref="PipelineBenchmarks"/>'s request (run with
/// <c>-- breakdown</c>): the four request phases, then each Thermo call the pipeline makes for that stage, on the same
/// gas and states, as wall and process CPU time per call (the CPU time holds up better on a shared machine). Quicker
/// than BenchmarkDotNet and good enough to rank the parts; the recorded figures come from
/// <see cref="EvaluationPartsBenchmarks"/>.
/// </summary>
internal static class EvaluationBreakdown
{
    public static void Run(int iterations)
    {
        var rules = FileRuleSetProvider.LoadDirectory(Repository.RulesDirectory, DateTimeOffset.UnixEpoch);
        var utf8 = System.Text.Encoding.UTF8.GetBytes(PipelineBenchmarks.Body);
        var pipeline = new EvaluationPipeline();
        var validator = new EvaluationRequestValidator();
        var request = JsonSerializer.Deserialize<EvaluationRequest>(utf8, EvaluationJson.Options)!;
        var context = new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch);
        var response = pipeline.Evaluate(request, rules, context).Response!;
        var parts = new EvaluationParts();

        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{"part",-64} {"µs wall",10} {"µs CPU",10} {"B/call",10}"));
        Time("request: deserialise", iterations, () => JsonSerializer.Deserialize<EvaluationRequest>(utf8, EvaluationJson.Options));
        Time("request: validate", iterations, () => validator.Validate(request));
        Time("request: pipeline.Evaluate", iterations, () => pipeline.Evaluate(request, rules, context));
        Time("request: serialise", iterations, () => JsonSerializer.SerializeToUtf8Bytes(response, EvaluationJson.Options));
        Time("request: all four", iterations, () =>
        {
            var r = JsonSerializer.Deserialize<EvaluationRequest>(utf8, EvaluationJson.Options)!;
            validator.Validate(r);
            return JsonSerializer.SerializeToUtf8Bytes(pipeline.Evaluate(r, rules, context).Response!, EvaluationJson.Options);
        });
        Time("thermo: train solve (ideal gas)", iterations, parts.Train);
        Time("thermo: PhaseStability.Prepare", iterations, parts.PreparePhase);
        Time("thermo: phase Check at suction (prepared)", iterations, parts.SuctionCheck);
        Time("  of which TestStability at suction", iterations, parts.SuctionStability);
        Time("  of which HydrocarbonDewPointAt suction pressure", iterations, parts.SuctionDewPoint);
        Time("thermo: phase TestStability at discharge (prepared; 2 per stage)", iterations, parts.DischargeStability);
        Time("thermo: Gerg2008Mixture.Create", iterations, parts.GergCreate);
        Time("thermo: GERG stage solve", iterations, parts.GergStage);
        Time("thermo: RealGasMixture.Create (PR)", iterations, parts.PengRobinsonCreate);
        Time("thermo: RealGasCriteria.Assess (PR)", iterations, parts.Assess);
        Time("thermo: PR stage solve", iterations, parts.PengRobinsonStage);
        Time("thermo: internal-ratio η=1 solve (PR)", iterations, parts.InternalRatio);
        Time("thermo: PR envelope, max discharge pressure (6 per stage)", iterations, parts.MaxDischargePressure);
        Time("thermo: PR envelope, max discharge pressure, internal ratio", iterations, parts.MaxDischargePressureInternal);
        Time("thermo: humid envelope, max suction temperature (PR)", iterations, parts.HumidEnvelope);
        Time("thermo: humid envelope, max suction temperature, internal (PR)", iterations, parts.HumidEnvelopeInternal);
    }

    public static void Loop(double seconds)
    {
        var rules = FileRuleSetProvider.LoadDirectory(Repository.RulesDirectory, DateTimeOffset.UnixEpoch);
        var utf8 = System.Text.Encoding.UTF8.GetBytes(PipelineBenchmarks.Body);
        var pipeline = new EvaluationPipeline();
        var validator = new EvaluationRequestValidator();
        var context = new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch);
        var cpu = Process.GetCurrentProcess().TotalProcessorTime;
        var bytes = GC.GetAllocatedBytesForCurrentThread();
        var sw = Stopwatch.StartNew();
        var n = 0;
        while (sw.Elapsed.TotalSeconds < seconds)
        {
            var r = JsonSerializer.Deserialize<EvaluationRequest>(utf8, EvaluationJson.Options)!;
            validator.Validate(r);
            JsonSerializer.SerializeToUtf8Bytes(pipeline.Evaluate(r, rules, context).Response!, EvaluationJson.Options);
            n++;
        }

        cpu = Process.GetCurrentProcess().TotalProcessorTime - cpu;
        bytes = GC.GetAllocatedBytesForCurrentThread() - bytes;
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{n} requests: {sw.Elapsed.TotalMicroseconds / n:0.0} µs wall, {cpu.TotalMicroseconds / n:0.0} µs process CPU, {bytes / n} B allocated each"));
    }

    private static void Time<T>(string name, int iterations, Func<T> action)
    {
        for (var i = 0; i < Math.Max(50, iterations / 10); i++)
        {
            action();
        }

        var bytes = GC.GetAllocatedBytesForCurrentThread();
        var cpu = Process.GetCurrentProcess().TotalProcessorTime;
        var sw = Stopwatch.StartNew();
        for (var i = 0; i < iterations; i++)
        {
            action();
        }

        sw.Stop();
        cpu = Process.GetCurrentProcess().TotalProcessorTime - cpu;
        bytes = GC.GetAllocatedBytesForCurrentThread() - bytes;
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{name,-64} {sw.Elapsed.TotalMicroseconds / iterations,10:0.0} {cpu.TotalMicroseconds / iterations,10:0.0} {bytes / iterations,10}"));
    }
}

/// <summary>
/// The Thermo calls the pipeline makes for <see cref="PipelineBenchmarks"/>'s stage (humid air at 60 % RH, 35 °C,
/// 0.2 barg at 350 m → 2.6 barg, ηs 0.80, ηs uncertainty 0.03, recip with a 5 % valve loss; auto decides Peng-Robinson
/// there), each on its own. The counts per stage ("6 per stage") were read off the pipeline: six violation limits on the
/// estimated temperature and one on the internal ratio each ask for the highest discharge pressure, and the governing
/// limit and the internal-ratio limit each ask for the humid suction-temperature envelope.
/// </summary>
internal sealed class EvaluationParts
{
    private const double ValveLoss = 0.05;

    public EvaluationParts()
    {
        var barometer = StandardAtmosphere.PressureAt(Length.FromMeters(350));
        var p1 = Pressure.FromPascals(barometer.Pascals + 20_000);
        var p2 = Pressure.FromPascals(barometer.Pascals + 260_000);
        var t1 = Temperature.FromDegreesCelsius(35);
        Gas = HumidGas.FromRelativeHumidity(GasCatalog.Default.Preset("dry-air"), 0.6, t1, p1);
        Conditions = new StageConditions(p1, t1, p2, StageEfficiency.Isentropic(0.80, 0.03));
        Internal = Conditions with
        {
            SuctionPressure = Pressure.FromPascals(p1.Pascals * (1 - ValveLoss)),
            DischargePressure = Pressure.FromPascals(p2.Pascals * (1 + ValveLoss)),
        };
        Gerg = Gerg2008Mixture.Create(Gas);
        PengRobinson = RealGasMixture.Create(Gas);
        Phase = PhaseStability.Prepare(Gas);
        DischargeTemperature = StageSolver.Solve(Gas, Conditions).EstimatedDischargeTemperature;
    }

    public GasMixture Gas { get; }

    public StageConditions Conditions { get; }

    public StageConditions Internal { get; }

    public Gerg2008Mixture Gerg { get; }

    public RealGasMixture PengRobinson { get; }

    public PhaseStabilityModel Phase { get; }

    public Temperature DischargeTemperature { get; }

    /// <summary>API 618's 150 °C on the internal ratio and the default lubricated-recip estimate limit are of this size.</summary>
    public Temperature Limit { get; } = Temperature.FromDegreesCelsius(150);

    public TrainStageResult[] Train() => TrainSolver.Solve(Gas, [new TrainStage(Conditions.DischargePressure, Conditions.Efficiency, null, Conditions.SuctionPressure, Conditions.SuctionTemperature)]);

    public PhaseStabilityModel PreparePhase() => PhaseStability.Prepare(Gas);

    public PhaseCheck SuctionCheck() => Phase.Check(Conditions.SuctionTemperature, Conditions.SuctionPressure);

    public StabilityResult SuctionStability() => Phase.TestStability(Conditions.SuctionTemperature, Conditions.SuctionPressure);

    public HydrocarbonDewPoint SuctionDewPoint() => Phase.HydrocarbonDewPointAt(Conditions.SuctionPressure);

    public StabilityResult DischargeStability() => Phase.TestStability(DischargeTemperature, Conditions.DischargePressure);

    public Gerg2008Mixture GergCreate() => Gerg2008Mixture.Create(Gas);

    public RealGasStageResult GergStage() => RealGasStageSolver.Solve(Gerg, Conditions);

    public RealGasMixture PengRobinsonCreate() => RealGasMixture.Create(Gas);

    public RealGasAssessment Assess() => RealGasCriteria.Assess(PengRobinson, Conditions.SuctionTemperature, Conditions.SuctionPressure, DischargeTemperature, Conditions.DischargePressure);

    public RealGasStageResult PengRobinsonStage() => RealGasStageSolver.Solve(PengRobinson, Conditions);

    public RealGasStageResult InternalRatio() => RealGasStageSolver.Solve(PengRobinson, Internal with { Efficiency = StageEfficiency.Isentropic(1) });

    public EnvelopeResult<Pressure> MaxDischargePressure() => RealGasEnvelopeSolver.MaxDischargePressure(PengRobinson, Conditions, TemperatureQuantity.Estimated, Limit);

    public EnvelopeResult<Pressure> MaxDischargePressureInternal() => RealGasEnvelopeSolver.MaxDischargePressure(PengRobinson, Internal, TemperatureQuantity.Isentropic, Limit);

    public EnvelopeResult<Temperature> HumidEnvelope() => HumidEnvelopeSolver.MaxSuctionTemperature(Gas, Conditions, TemperatureQuantity.Estimated, Limit, true);

    public EnvelopeResult<Temperature> HumidEnvelopeInternal() => HumidEnvelopeSolver.MaxSuctionTemperature(Gas, Internal, TemperatureQuantity.Isentropic, Limit, true);
}
/// <summary>Prints the answer to <see cref="PipelineBenchmarks"/>'s request (<c>-- dump</c>), to compare answers before and after a speed change.</summary>
internal static class DumpProbe
{
    public static void Run()
    {
        var rules = FileRuleSetProvider.LoadDirectory(Repository.RulesDirectory, DateTimeOffset.UnixEpoch);
        var request = JsonSerializer.Deserialize<EvaluationRequest>(System.Text.Encoding.UTF8.GetBytes(PipelineBenchmarks.Body), EvaluationJson.Options)!;
        var r = new EvaluationPipeline().Evaluate(request, rules, new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch));
        Console.WriteLine(JsonSerializer.Serialize(r.Response, EvaluationJson.Options));
    }
}
