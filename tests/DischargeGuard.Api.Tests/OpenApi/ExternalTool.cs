using System.Diagnostics;
using System.Text;

namespace DischargeGuard.Api.Tests.OpenApi;

/// <summary>Runs a command-line tool the contract tests need (npx, dotnet, kiota) and finds it on PATH.</summary>
internal static class ExternalTool
{
    /// <summary>The full path of <paramref name="name"/> on PATH, or null.</summary>
    public static string? Find(string name) =>
        (Environment.GetEnvironmentVariable("PATH") ?? string.Empty)
            .Split(Path.PathSeparator, StringSplitOptions.RemoveEmptyEntries)
            .Select(dir => Path.Combine(dir, name))
            .FirstOrDefault(File.Exists);

    /// <summary>
    /// Skips the test with the command that installs <paramref name="tool"/>, or fails it under CI=true (CI installs its
    /// tools in .ci/run, so a missing one there is a broken pipeline, not a reason to skip).
    /// </summary>
    public static void RequireOrSkip(string? path, string tool, string install)
    {
        if (path is not null)
        {
            return;
        }

        var message = $"{tool} is not on PATH; install it with `{install}`.";
        if (string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase))
        {
            Assert.Fail(message);
        }

        Skip.If(true, message);
    }

    /// <summary>Runs a command to its end and returns its exit code, stdout and stderr.</summary>
    public static async Task<(int ExitCode, string Output, string Error)> RunAsync(
        string file, IEnumerable<string> arguments, string workingDirectory, TimeSpan timeout, IReadOnlyDictionary<string, string>? environment = null)
    {
        var start = new ProcessStartInfo(file)
        {
            WorkingDirectory = workingDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            RedirectStandardInput = true,
            UseShellExecute = false,
        };
        foreach (var argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        foreach (var (key, value) in environment ?? new Dictionary<string, string>())
        {
            start.Environment[key] = value;
        }

        using var process = Process.Start(start) ?? throw new InvalidOperationException("could not start " + file);
        process.StandardInput.Close();
        var output = new StringBuilder();
        var error = new StringBuilder();
        var outputTask = Pump(process.StandardOutput, output);
        var errorTask = Pump(process.StandardError, error);
        using var cancel = new CancellationTokenSource(timeout);
        try
        {
            await process.WaitForExitAsync(cancel.Token);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{file} {string.Join(' ', start.ArgumentList)} ran past {timeout}:\n{output}\n{error}");
        }

        await Task.WhenAll(outputTask, errorTask);
        return (process.ExitCode, output.ToString(), error.ToString());
    }

    private static async Task Pump(StreamReader reader, StringBuilder into)
    {
        var buffer = new char[4096];
        int read;
        while ((read = await reader.ReadAsync(buffer)) > 0)
        {
            into.Append(buffer, 0, read);
        }
    }
}
