using System.Text.Json;
using System.Text.RegularExpressions;
using BenchmarkDotNet.Attributes;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Service;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Bench;

/// <summary>
/// Issue 18's in-process goal: the README's one-stage example (read from README.md, so the two cannot drift; method
/// auto, with the phase checks and its calibration), JSON in → validated → bound → evaluated → JSON out through the one
/// evaluation service, compact and full; the record (with its per-stage summary) is built but not stored.
/// </summary>
[MemoryDiagnoser]
public partial class ReadmeExampleBenchmarks
{
    private readonly EvaluationService _service = new(new EvaluationPipeline(), new EvaluationRequestValidator());
    private RuleSetSnapshot _rules = null!;
    private byte[] _utf8 = [];

    /// <summary>The README's first curl body.</summary>
    public static string ReadmeBody()
    {
        var readme = File.ReadAllText(Path.Combine(Path.GetDirectoryName(Repository.RulesDirectory)!, "README.md"));
        return CurlBody().Match(readme).Groups[1].Value;
    }

    [GlobalSetup]
    public void Setup()
    {
        _rules = FileRuleSetProvider.LoadDirectory(Repository.RulesDirectory, DateTimeOffset.UnixEpoch);
        _utf8 = System.Text.Encoding.UTF8.GetBytes(ReadmeBody());
    }

    [Benchmark(Baseline = true, Description = "README one-stage example, compact answer")]
    public int Compact() => Run(AnswerDetail.Compact);

    [Benchmark(Description = "README one-stage example, ?detail=full")]
    public int Full() => Run(AnswerDetail.Full);

    private int Run(AnswerDetail detail)
    {
        var request = JsonSerializer.Deserialize(_utf8, EvaluationJsonContext.Default.EvaluationRequest)!;
        if (_service.Validate(request) is not null)
        {
            throw new InvalidOperationException("The README example no longer validates.");
        }

        var evaluated = _service.Evaluate(request, _utf8, _rules, new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch) { Detail = detail }, "bench");
        return evaluated.Record!.Response.Length;
    }

    [GeneratedRegex(@"curl -s http://127\.0\.0\.1:5080/v1/evaluations -H 'Content-Type: application/json' -d '(\{.*?\})'\n```", RegexOptions.Singleline)]
    private static partial Regex CurlBody();
}
