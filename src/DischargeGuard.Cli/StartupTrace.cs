using System.Diagnostics;
using System.Globalization;

namespace DischargeGuard.Cli;

/// <summary>
/// With <c>DISCHARGEGUARD_TRACE_STARTUP=1</c>, writes to stderr how many milliseconds after process start each phase of
/// a run ended (how docs/gate.md's start-up figures were broken down). Off by default and free when off.
/// </summary>
internal static class StartupTrace
{
    private static readonly bool Enabled = Environment.GetEnvironmentVariable("DISCHARGEGUARD_TRACE_STARTUP") == "1";

    public static void Mark(string phase)
    {
        if (!Enabled)
        {
            return;
        }

        using var self = Process.GetCurrentProcess();
        var ms = (DateTime.Now - self.StartTime).TotalMilliseconds;
        Console.Error.WriteLine(string.Create(CultureInfo.InvariantCulture, $"startup: {ms,7:0.0} ms  {phase}"));
    }
}
