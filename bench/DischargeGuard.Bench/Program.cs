using BenchmarkDotNet.Running;
using DischargeGuard.Bench;

// `-- breakdown [iterations]` prints a quick Stopwatch breakdown of one evaluation (EvaluationBreakdown), `-- dump` its
// answer (to compare before and after a change); anything else
// runs the BenchmarkDotNet benchmarks in this assembly (pass e.g. --filter *Stage* to narrow).
if (args.Length > 0 && args[0] == "dump")
{
    DumpProbe.Run();
    return;
}

if (args.Length > 0 && args[0] == "loop")
{
    // For a sampling profiler: the whole request, repeated for the given number of seconds.
    EvaluationBreakdown.Loop(args.Length > 1 ? double.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture) : 10);
    return;
}

if (args.Length > 0 && args[0] == "breakdown")
{
    EvaluationBreakdown.Run(args.Length > 1 ? int.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture) : 2000);
    return;
}

BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
