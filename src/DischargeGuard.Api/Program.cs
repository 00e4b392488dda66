using DischargeGuard.Api.Infrastructure;
using Serilog;

// `new-key` prints a key and its configuration entry; it needs no host, rules or store.
if (DischargeGuard.Api.KeyCommand.IsCommand(args))
{
    return DischargeGuard.Api.KeyCommand.Run(args, Console.Out);
}

// `--probe [URL]` checks a health endpoint for a container health check (the runtime image has no curl).
if (DischargeGuard.Api.ProbeCommand.IsCommand(args))
{
    return await DischargeGuard.Api.ProbeCommand.RunAsync(args, Console.Out).ConfigureAwait(false);
}

Log.Logger = new LoggerConfiguration().WriteTo.Console().CreateBootstrapLogger();
try
{
    var builder = WebApplication.CreateBuilder(args);
    builder.AddDischargeGuard();
    var app = builder.Build();
    app.UseDischargeGuard();
    await app.RunAsync().ConfigureAwait(false);
    return 0;
}
catch (Exception ex) when (ex is not HostAbortedException)
{
    // The reasons, outermost first (a broken rule file names file, line and key); no stack trace in the log.
    var reasons = new List<string>();
    for (Exception? e = ex; e is not null; e = e.InnerException)
    {
        reasons.Add($"{e.GetType().Name}: {e.Message}");
    }

    Log.Fatal("DischargeGuard stopped during start-up or shutdown: {Reasons}", string.Join(" <- ", reasons));
    return 1;
}
finally
{
    await Log.CloseAndFlushAsync().ConfigureAwait(false);
}

/// <summary>The entry point, public for the in-process test host.</summary>
public partial class Program;
