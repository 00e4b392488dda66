namespace DischargeGuard.Cli;

/// <summary>The process entry point; all the work is in <see cref="GateApp.RunAsync(string[], TextWriter, TextWriter)"/>, which tests call in-process.</summary>
public static class EntryPoint
{
    /// <summary>Runs the gate with the console's writers and the process's environment.</summary>
    /// <param name="args">The command line.</param>
    /// <returns>The exit code (see <see cref="ExitCodes"/>).</returns>
    public static Task<int> Main(string[] args) => GateApp.RunAsync(args, Console.Out, Console.Error);
}
