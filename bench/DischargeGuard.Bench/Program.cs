using BenchmarkDotNet.Running;

// Runs every benchmark in this assembly; pass BenchmarkDotNet arguments (e.g. --filter *Stage*) to narrow.
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
