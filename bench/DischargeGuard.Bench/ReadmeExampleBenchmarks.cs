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
/// Issue 18's in-process goal: the README's one-stage example, and issue 20's scenarios example beside it (read from README.md, so the two cannot drift; method
/// auto, with the phase checks and its calibration), JSON in → validated → bound → evaluated → JSON out through the one
/// evaluation service, compact and full; the record (with its per-stage summary) is built but not stored.
/// </summary>
[MemoryDiagnoser]
public partial class ReadmeExampleBenchmarks
{
    private readonly EvaluationService _service = new(new EvaluationPipeline(), new EvaluationRequestValidator());
    private RuleSetSnapshot _rules = null!;
    private byte[] _utf8 = [];

    private byte[] _scenarios = [];

    /// <summary>The README's curl bodies, in order: the one-stage example first, the scenarios example after it.</summary>
    public static IReadOnlyList<string> ReadmeBodies()
    {
        var readme = File.ReadAllText(Path.Combine(Path.GetDirectoryName(Repository.RulesDirectory)!, "README.md"));
        return CurlBody().Matches(readme).Select(m => m.Groups[1].Value).ToArray();
    }

    /// <summary>The README's first curl body.</summary>
    public static string ReadmeBody() => ReadmeBodies()[0];

    [GlobalSetup]
    public void Setup()
    {
        _rules = FileRuleSetProvider.LoadDirectory(Repository.RulesDirectory, DateTimeOffset.UnixEpoch);
        _utf8 = System.Text.Encoding.UTF8.GetBytes(ReadmeBody());
        _scenarios = System.Text.Encoding.UTF8.GetBytes(ReadmeBodies().Single(b => b.Contains("\"scenarios\"", StringComparison.Ordinal)));
    }

    [Benchmark(Baseline = true, Description = "README one-stage example, compact answer")]
    public int Compact() => Run(AnswerDetail.Compact);

    [Benchmark(Description = "README one-stage example, ?detail=full")]
    public int Full() => Run(AnswerDetail.Full);

    [Benchmark(Description = "README two-stage scenarios example (five scenarios and the train's envelope), compact")]
    public int Scenarios() => Run(AnswerDetail.Compact, _scenarios);

    private int Run(AnswerDetail detail) => Run(detail, _utf8);

    private int Run(AnswerDetail detail, byte[] utf8)
    {
        var request = JsonSerializer.Deserialize(utf8, EvaluationJsonContext.Default.EvaluationRequest)!;
        if (_service.Validate(request) is not null)
        {
            throw new InvalidOperationException("The README example no longer validates.");
        }

        var evaluated = _service.Evaluate(request, utf8, _rules, new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch) { Detail = detail }, "bench");
        return evaluated.Record!.Response.Length;
    }

    [GeneratedRegex(@"curl -s http://127\.0\.0\.1:5080/v1/evaluations[^\s']* -H 'Content-Type: application/json' -d '(\{.*?\n\})'", RegexOptions.Singleline)]
    private static partial Regex CurlBody();
}
