using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using System.Text;

namespace DischargeGuard.Api.Tests;

/// <summary>A folder deleted on disposal.</summary>
internal sealed class TempFolder(string prefix = "dischargeguard-service-") : IDisposable
{
    public string Path { get; } = Directory.CreateTempSubdirectory(prefix).FullName;

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
        }
        catch (UnauthorizedAccessException)
        {
        }
    }
}

/// <summary>
/// The service as its own process (<c>dotnet DischargeGuard.Api.dll</c> from the test's output folder) on a free loopback
/// port, with its own content root <c>{folder}/{name}</c> holding a copy of the shipped rules and the SQLite audit file;
/// ready once <c>/health/ready</c> answers 200. Started again with the same folder and name, it finds the rules and the
/// audit file where the previous process left them (the rules are copied only when missing).
/// </summary>
internal sealed class ServiceProcess : IAsyncDisposable
{
    private static readonly TimeSpan ReadyTimeout = TimeSpan.FromSeconds(90);

    private readonly Process _process;
    private readonly StringBuilder _log = new();
    private int _disposed;

    private ServiceProcess(Process process, Uri baseAddress, string root)
    {
        _process = process;
        BaseAddress = baseAddress;
        Root = root;
    }

    public Uri BaseAddress { get; }

    /// <summary>The content root: <c>rules/</c>, <c>audit.db</c> and the host's own files.</summary>
    public string Root { get; }

    /// <summary>The SQLite audit file (used when the provider is sqlite).</summary>
    public string AuditPath => System.IO.Path.Combine(Root, "audit.db");

    /// <summary>Everything the process wrote to stdout and stderr so far (kept after it exits).</summary>
    public string Log
    {
        get
        {
            lock (_log)
            {
                return _log.ToString();
            }
        }
    }

    /// <summary>The exit code once the process has exited (137, 128 + 9, after SIGKILL).</summary>
    public int ExitCode => _process.ExitCode;

    public static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    public static async Task<ServiceProcess> StartAsync(string folder, string name, IReadOnlyDictionary<string, string> settings)
    {
        var root = System.IO.Path.Combine(folder, name);
        var rules = System.IO.Path.Combine(root, "rules");
        if (!Directory.Exists(rules))
        {
            CopyDirectory(System.IO.Path.Combine(RepoPaths.Root, "rules"), rules);
        }

        var port = FreePort();
        var start = new ProcessStartInfo("dotnet")
        {
            WorkingDirectory = root,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(System.IO.Path.Combine(AppContext.BaseDirectory, "DischargeGuard.Api.dll"));
        start.ArgumentList.Add("--urls");
        start.ArgumentList.Add(string.Create(CultureInfo.InvariantCulture, $"http://127.0.0.1:{port}"));
        start.Environment["DischargeGuard__RulesDirectory"] = rules;
        start.Environment["DischargeGuard__RulesWatch"] = "false";
        start.Environment["Audit__SqlitePath"] = System.IO.Path.Combine(root, "audit.db");
        start.Environment["Serilog__MinimumLevel__Default"] = "Warning";
        start.Environment["RateLimits__PermitsPerSecond"] = "100000";
        start.Environment["RateLimits__Burst"] = "100000";
        foreach (var (key, value) in settings)
        {
            start.Environment[key] = value;
        }

        var process = Process.Start(start) ?? throw new InvalidOperationException("dotnet did not start");
        var service = new ServiceProcess(process, new Uri(string.Create(CultureInfo.InvariantCulture, $"http://127.0.0.1:{port}")), root);
        process.OutputDataReceived += (_, e) => service.Append(e.Data);
        process.ErrorDataReceived += (_, e) => service.Append(e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();

        using var client = new HttpClient { BaseAddress = service.BaseAddress, Timeout = TimeSpan.FromSeconds(2) };
        var deadline = DateTime.UtcNow + ReadyTimeout;
        while (DateTime.UtcNow < deadline && !process.HasExited)
        {
            try
            {
                using var ready = await client.GetAsync(new Uri("/health/ready", UriKind.Relative));
                if (ready.IsSuccessStatusCode)
                {
                    return service;
                }
            }
            catch (HttpRequestException)
            {
            }
            catch (TaskCanceledException)
            {
            }

            await Task.Delay(200);
        }

        await service.DisposeAsync();
        throw new InvalidOperationException($"service process {name} did not become ready; its output:\n{service.Log}");
    }

    /// <summary>
    /// Ends the process with SIGKILL (what <see cref="Process.Kill()"/> sends on Linux): no shutdown handler, no flush,
    /// no disposal runs. Returns once the process is gone and its output has been read to the end.
    /// </summary>
    public async Task KillAsync()
    {
        if (!_process.HasExited)
        {
            _process.Kill(entireProcessTree: true);
        }

        await _process.WaitForExitAsync();
    }

    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) == 0)
        {
            await KillAsync();
            _process.Dispose();
        }
    }

    private void Append(string? line)
    {
        if (line is not null)
        {
            lock (_log)
            {
                _log.AppendLine(line);
            }
        }
    }

    private static void CopyDirectory(string from, string to)
    {
        Directory.CreateDirectory(to);
        foreach (var file in Directory.EnumerateFiles(from, "*", SearchOption.AllDirectories))
        {
            var target = System.IO.Path.Combine(to, System.IO.Path.GetRelativePath(from, file));
            Directory.CreateDirectory(System.IO.Path.GetDirectoryName(target)!);
            File.Copy(file, target);
        }
    }
}
