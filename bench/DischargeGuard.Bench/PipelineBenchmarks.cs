using System.Text.Json;
using BenchmarkDotNet.Attributes;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Bench;

/// <summary>The whole in-process evaluation a request costs before the audit write: parse, validate, evaluate, serialise.</summary>
[MemoryDiagnoser]
public class PipelineBenchmarks
{
    /// <summary>The one-stage request (the README's example shape; method auto by default).</summary>
    internal const string Body = """
    {"asset":"K-101A","site":{"id":"kestrel-ridge","elevation":"350 m"},"gas":{"preset":"dry-air","relativeHumidity":0.6},
     "stages":[{"suction":{"pressure":"0.2 barg","temperature":"35 °C"},"discharge":{"pressure":"2.6 barg"},
       "efficiency":{"isentropic":0.80,"uncertainty":0.03},
       "equipment":{"compressorType":"recip-lubricated","lubricant":"mineral-vdl","valveMaterial":"peek","sealMaterial":"fkm"},
       "operation":{"normalDischargeTemperature":"140 °C","coolantInletTemperature":"45 °C","unloadedRunning":false},
       "measured":{"dischargeTemperature":"141 °C"}}]}
    """;

    private readonly EvaluationPipeline _pipeline = new();
    private readonly EvaluationRequestValidator _validator = new();
    private RuleSetSnapshot _rules = null!;
    private byte[] _utf8 = [];
    private long _calls;

    [GlobalSetup]
    public void Setup()
    {
        _rules = FileRuleSetProvider.LoadDirectory(Repository.RulesDirectory, DateTimeOffset.UnixEpoch);
        _utf8 = System.Text.Encoding.UTF8.GetBytes(Body);
    }

    [Benchmark(Description = "one-stage request: JSON in, validate, evaluate, JSON out")]
    public int EvaluateOneStage()
    {
        var request = JsonSerializer.Deserialize<EvaluationRequest>(_utf8, EvaluationJson.Options)!;
        _validator.Validate(request);
        var outcome = _pipeline.Evaluate(request, _rules, new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch));
        return JsonSerializer.SerializeToUtf8Bytes(outcome.Response!, EvaluationJson.Options).Length;
    }

    /// <summary>
    /// The same request with a relative humidity that differs in the last digits at every call, so no per-composition
    /// model or result is ever reused: the figure for a stream of requests that never repeat a gas.
    /// </summary>
    [Benchmark(Description = "one-stage request, a new gas composition every call (no reuse)")]
    public int EvaluateOneStageNewGas()
    {
        var request = JsonSerializer.Deserialize<EvaluationRequest>(_utf8, EvaluationJson.Options)!;
        request = request with { Gas = request.Gas! with { RelativeHumidity = 0.6 + ((++_calls % 1_000_000) * 1e-9) } };
        _validator.Validate(request);
        var outcome = _pipeline.Evaluate(request, _rules, new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch));
        return JsonSerializer.SerializeToUtf8Bytes(outcome.Response!, EvaluationJson.Options).Length;
    }
}
