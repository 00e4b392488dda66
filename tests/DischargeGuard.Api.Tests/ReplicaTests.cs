using System.Collections.Concurrent;
using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using System.Text;
using DischargeGuard.Audit.Tests.Postgres;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Several replicas on one PostgreSQL audit store: two service processes on two loopback ports, evaluations sent to both
/// at once, every one readable from either, none lost or stored twice. Also the guard that refuses SQLite when the
/// service is told it is one of several replicas, and the container probe mode.
/// </summary>
public sealed class ReplicaTests
{
    [SkippableFact]
    public async Task TwoReplicas_WhenBothTakeEvaluationsAtOnce_EveryRecordIsReadableFromEitherExactlyOnce()
    {
        await using var server = await PostgresServer.StartNewAsync(PostgresFixture.RequireBinaries());
        var database = await server.CreateDatabaseAsync();
        using var folder = new TempFolder();
        var settings = new Dictionary<string, string>
        {
            ["Audit__Provider"] = "postgresql",
            ["Audit__ConnectionString"] = server.ConnectionString(database),
            ["DischargeGuard__Replicas"] = "2",
        };

        // Both start at once: the schema migration runs under an advisory lock, so exactly one applies it.
        var starting = new[] { ServiceProcess.StartAsync(folder.Path, "a", settings), ServiceProcess.StartAsync(folder.Path, "b", settings) };
        await using var a = await starting[0];
        await using var b = await starting[1];
        using var clientA = new HttpClient { BaseAddress = a.BaseAddress };
        using var clientB = new HttpClient { BaseAddress = b.BaseAddress };

        var ids = new ConcurrentBag<Guid>();
        async Task SendAsync(HttpClient client, int count)
        {
            for (var i = 0; i < count; i++)
            {
                var request = Requests.Minimal(suctionTemperature: string.Create(CultureInfo.InvariantCulture, $"{20 + (i % 20)} °C"));
                request["asset"] = "C-204B";
                using var content = new StringContent(request.ToJsonString(), Encoding.UTF8, "application/json");
                using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);
                var body = await Json.ReadAsync(response);
                Assert.True(response.StatusCode == HttpStatusCode.OK, body.ToString());
                ids.Add(body.At("id").GetGuid());
            }
        }

        await Task.WhenAll(SendAsync(clientA, 60), SendAsync(clientA, 60), SendAsync(clientB, 60), SendAsync(clientB, 60));

        Assert.Equal(240, ids.Distinct().Count());
        foreach (var id in ids)
        {
            using var fromA = await clientA.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative));
            using var fromB = await clientB.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative));
            Assert.Equal(HttpStatusCode.OK, fromA.StatusCode);
            Assert.Equal(await fromA.Content.ReadAsStringAsync(), await fromB.Content.ReadAsStringAsync());
        }

        // The store holds exactly these records: the list, paged from either replica, has each id once.
        var listed = new List<Guid>();
        string? cursor = null;
        do
        {
            using var page = await clientB.GetAsync(new Uri("/v1/evaluations?asset=C-204B&limit=100" + (cursor is null ? string.Empty : "&cursor=" + Uri.EscapeDataString(cursor)), UriKind.Relative));
            var body = await Json.ReadAsync(page);
            listed.AddRange(body.At("evaluations").EnumerateArray().Select(e => e.At("id").GetGuid()));
            cursor = body.TryGetProperty("nextCursor", out var next) && next.ValueKind == System.Text.Json.JsonValueKind.String ? next.GetString() : null;
        }
        while (cursor is not null);

        Assert.Equal(ids.Order(), listed.Order());

        // The container health check's probe mode, against a live replica and against nothing.
        using var output = new StringWriter();
        Assert.Equal(0, await ProbeCommand.RunAsync(["--probe", new Uri(a.BaseAddress, "/health/ready").ToString()], output));
        Assert.Equal(1, await ProbeCommand.RunAsync(["--probe", $"http://127.0.0.1:{ServiceProcess.FreePort()}/health/ready"], output, TimeSpan.FromSeconds(2)));
        Assert.Equal(1, await ProbeCommand.RunAsync(["--probe", "not a url"], output));
    }

    [Fact]
    public async Task Start_WhenTwoReplicasAreConfiguredOnSqlite_StopsNamingBothSettings()
    {
        using var folder = new TempFolder();

        var e = await Assert.ThrowsAsync<InvalidOperationException>(() =>
            ServiceProcess.StartAsync(folder.Path, "sqlite", new Dictionary<string, string> { ["DischargeGuard__Replicas"] = "2" }));

        Assert.Contains("did not become ready", e.Message, StringComparison.Ordinal);
        Assert.Contains("DischargeGuard:Replicas is 2", e.Message, StringComparison.Ordinal);
        Assert.Contains("Audit:Provider=postgresql", e.Message, StringComparison.Ordinal);
    }
}

/// <summary>A folder deleted on disposal.</summary>
internal sealed class TempFolder : IDisposable
{
    public string Path { get; } = Directory.CreateTempSubdirectory("dischargeguard-replicas-").FullName;

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
        }
    }
}

/// <summary>
/// The service as its own process (<c>dotnet DischargeGuard.Api.dll</c> from the test's output folder) on a free loopback
/// port, with its own content root and a copy of the shipped rules; ready once <c>/health/ready</c> answers 200.
/// </summary>
internal sealed class ServiceProcess : IAsyncDisposable
{
    private readonly Process _process;
    private readonly StringBuilder _log = new();

    private ServiceProcess(Process process, Uri baseAddress)
    {
        _process = process;
        BaseAddress = baseAddress;
    }

    public Uri BaseAddress { get; }

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
        CopyDirectory(System.IO.Path.Combine(RepoPaths.Root, "rules"), rules);
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
        var service = new ServiceProcess(process, new Uri(string.Create(CultureInfo.InvariantCulture, $"http://127.0.0.1:{port}")));
        process.OutputDataReceived += (_, e) => service.Append(e.Data);
        process.ErrorDataReceived += (_, e) => service.Append(e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();

        using var client = new HttpClient { BaseAddress = service.BaseAddress, Timeout = TimeSpan.FromSeconds(2) };
        var deadline = DateTime.UtcNow.AddSeconds(90);
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

        var log = service.Log;
        await service.DisposeAsync();
        throw new InvalidOperationException($"replica {name} did not become ready; its output:\n{log}");
    }

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

    public async ValueTask DisposeAsync()
    {
        if (!_process.HasExited)
        {
            _process.Kill(entireProcessTree: true);
            await _process.WaitForExitAsync();
        }

        _process.Dispose();
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
