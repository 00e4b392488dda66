using System.CommandLine;
using System.Text;
using System.Text.RegularExpressions;
using DischargeGuard.Cli.Commands;

namespace DischargeGuard.Cli;

/// <summary>The <c>dischargeguard</c> command line: <c>check</c>, <c>envelope</c> and <c>rules check</c>.</summary>
public static partial class GateApp
{
    /// <summary>Runs the command line with the process's environment.</summary>
    /// <param name="args">The arguments.</param>
    /// <param name="stdout">Reports.</param>
    /// <param name="stderr">Diagnostics.</param>
    /// <returns>The exit code (see <see cref="ExitCodes"/>).</returns>
    public static Task<int> RunAsync(string[] args, TextWriter stdout, TextWriter stderr) =>
        RunAsync(args, stdout, stderr, GateEnvironment.Process, CancellationToken.None);

    /// <summary>Runs the command line.</summary>
    /// <param name="args">The arguments.</param>
    /// <param name="stdout">Reports.</param>
    /// <param name="stderr">Diagnostics.</param>
    /// <param name="environment">Environment variables and the shipped rules directory.</param>
    /// <param name="cancellationToken">Cancels the run.</param>
    /// <returns>The exit code (see <see cref="ExitCodes"/>).</returns>
    public static async Task<int> RunAsync(string[] args, TextWriter stdout, TextWriter stderr, GateEnvironment environment, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(stdout);
        ArgumentNullException.ThrowIfNull(stderr);
        ArgumentNullException.ThrowIfNull(environment);
        try
        {
            StartupTrace.Mark("main");
            var root = Build(stdout, stderr, environment);
            var parsed = root.Parse(args);
            StartupTrace.Mark("command line parsed");
            if (parsed.Errors.Count > 0)
            {
                foreach (var e in parsed.Errors)
                {
                    await stderr.WriteLineAsync("dischargeguard: " + e.Message).ConfigureAwait(false);
                }

                await stderr.WriteLineAsync("Usage: see 'dischargeguard --help' (exit 64: invalid usage).").ConfigureAwait(false);
                return ExitCodes.InvalidInput;
            }

            var config = new InvocationConfiguration { Output = stdout, Error = stderr, EnableDefaultExceptionHandler = false };
            return await parsed.InvokeAsync(config, cancellationToken).ConfigureAwait(false);
        }
#pragma warning disable CA1031 // The gate's last line: any unexpected failure is reported as exit 70, never as a verdict.
        catch (Exception ex)
#pragma warning restore CA1031
        {
            await stderr.WriteLineAsync($"dischargeguard: internal error (exit 70): {ex.GetType().Name}: {ex.Message}").ConfigureAwait(false);
            return ExitCodes.InternalError;
        }
    }

    private static RootCommand Build(TextWriter stdout, TextWriter stderr, GateEnvironment environment)
    {
        var root = new RootCommand(
            "DischargeGuard engineering-change gate: checks proposed compressor operating cases against the rule set and records every evaluation. "
            + "Exit codes: 0 pass, 1 review needed, 2 fail, 64 invalid input or usage, 69 service unavailable, 70 internal error, 75 rate limited, 77 key refused.");
        root.Subcommands.Add(CheckCommand.Create(stdout, stderr, environment, envelope: false));
        root.Subcommands.Add(CheckCommand.Create(stdout, stderr, environment, envelope: true));
        var rules = new Command("rules", "Rule files.");
        rules.Subcommands.Add(RulesCheckCommand.Create(stdout, stderr, environment.ShippedRulesDirectory));
        rules.Subcommands.Add(RulesShowCommand.Create(stdout, stderr, environment.ShippedRulesDirectory));
        root.Subcommands.Add(rules);
        return root;
    }

    [GeneratedRegex(@"^[0-9a-fA-F]{64}\z", RegexOptions.CultureInvariant)]
    internal static partial Regex DigestPattern();

    /// <summary>Writes UTF-8 bytes (a JSON or XML report) to a text writer.</summary>
    internal static void WriteBytes(TextWriter w, Action<Stream> write)
    {
        using var buffer = new MemoryStream();
        write(buffer);
        w.Write(Encoding.UTF8.GetString(buffer.GetBuffer(), 0, (int)buffer.Length));
        w.WriteLine();
    }
}
