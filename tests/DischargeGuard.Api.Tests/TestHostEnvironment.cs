using System.Runtime.CompilerServices;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Settings every in-process test host needs before <c>WebApplication.CreateBuilder</c> runs. Each host would otherwise
/// watch its configuration files through inotify, and a Linux user gets 128 inotify instances by default: with many
/// hosts alive at once (and other processes on the machine) a host start could fail. Rule-directory watching, which
/// the reload tests exercise, is unaffected.
/// </summary>
internal static class TestHostEnvironment
{
    [ModuleInitializer]
    internal static void Initialize()
    {
        Environment.SetEnvironmentVariable("DOTNET_hostBuilder__reloadConfigOnChange", "false");
        Environment.SetEnvironmentVariable("ASPNETCORE_hostBuilder__reloadConfigOnChange", "false");
    }
}
