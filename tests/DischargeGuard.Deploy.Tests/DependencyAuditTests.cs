using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text;

namespace DischargeGuard.Deploy.Tests;

/// <summary>
/// Vulnerable dependencies fail the build. The package feed this project is built from serves no vulnerability data (its
/// service index has only package and registration resources), so a restore there can prove nothing. These tests give
/// NuGet a loopback audit source of their own and restore a probe project under the repository's Directory.Build.props:
/// a package with a known advisory must fail the restore with NU1903 as an error, its fixed version must restore, and an
/// audit source that cannot answer must leave NU1900 a warning.
/// </summary>
/// <remarks>
/// The advisory: GHSA-5crp-9r3c-p9vr (CVE-2024-21907), Newtonsoft.Json before 13.0.1, improper handling of exceptional
/// conditions, rated high — from memory (GitHub Advisory Database), the versions and rating as published there.
/// </remarks>
public sealed class DependencyAuditTests
{
    private const string Advisory = "https://github.com/advisories/GHSA-5crp-9r3c-p9vr";

    [Fact]
    public async Task Restore_WhenADependencyHasAHighSeverityAdvisory_FailsWithNu1903AsAnError()
    {
        await using var source = await AuditSource.StartAsync(serveData: true);

        var (code, output) = await RestoreProbeAsync(source, "12.0.1");

        Assert.NotEqual(0, code);
        Assert.Contains("error NU1903", output, StringComparison.Ordinal);
        Assert.Contains(Advisory, output, StringComparison.Ordinal);
        Assert.True(source.Served, "NuGet never asked the audit source");
    }

    [Fact]
    public async Task Restore_WhenTheFixedVersionIsUsed_Succeeds()
    {
        await using var source = await AuditSource.StartAsync(serveData: true);

        var (code, output) = await RestoreProbeAsync(source, "13.0.1");

        Assert.True(code == 0, output);
        Assert.DoesNotContain("NU190", output, StringComparison.Ordinal);
        Assert.True(source.Served, "NuGet never asked the audit source");
    }

    [Fact]
    public async Task Restore_WhenTheAuditSourceCannotAnswer_KeepsNu1900AWarningAndFailsOnNu1905()
    {
        await using var source = await AuditSource.StartAsync(serveData: false);

        var (code, output) = await RestoreProbeAsync(source, "13.0.1");

        // NU1900 (the data could not be fetched) stays a warning, as the build settings say. NuGet adds NU1905 for an
        // explicitly configured audit source that gave no data, and that one is an error: a misconfigured advisory source
        // would otherwise switch the check off without anyone noticing.
        Assert.Contains("warning NU1900", output, StringComparison.Ordinal);
        Assert.DoesNotContain("error NU1900", output, StringComparison.Ordinal);
        Assert.Contains("error NU1905", output, StringComparison.Ordinal);
        Assert.NotEqual(0, code);
    }

    private static async Task<(int Code, string Output)> RestoreProbeAsync(AuditSource source, string version)
    {
        var folder = Directory.CreateTempSubdirectory("dischargeguard-audit-probe-").FullName;
        try
        {
            // The repository's build settings (NuGetAudit, audit mode, warnings as errors, NU1900 excepted), nothing else.
            await File.WriteAllTextAsync(Path.Combine(folder, "Directory.Build.props"), $"""
                <Project>
                  <Import Project="{Repo.At("Directory.Build.props")}" />
                </Project>
                """);
            await File.WriteAllTextAsync(Path.Combine(folder, "probe.csproj"), $"""
                <Project Sdk="Microsoft.NET.Sdk">
                  <PropertyGroup>
                    <ManagePackageVersionsCentrally>false</ManagePackageVersionsCentrally>
                  </PropertyGroup>
                  <ItemGroup>
                    <PackageReference Include="Newtonsoft.Json" Version="{version}" />
                  </ItemGroup>
                </Project>
                """);
            await File.WriteAllTextAsync(Path.Combine(folder, "nuget.config"), $"""
                <?xml version="1.0" encoding="utf-8"?>
                <configuration>
                  <auditSources>
                    <clear />
                    <add key="loopback-advisories" value="{source.IndexUrl}" allowInsecureConnections="true" />
                  </auditSources>
                </configuration>
                """);
            var start = new ProcessStartInfo("dotnet")
            {
                WorkingDirectory = folder,
                RedirectStandardOutput = true,
                RedirectStandardError = true,
                UseShellExecute = false,
            };
            foreach (var argument in new[] { "restore", "--no-http-cache", "probe.csproj" })
            {
                start.ArgumentList.Add(argument);
            }

            start.Environment["DOTNET_CLI_TELEMETRY_OPTOUT"] = "1";
            start.Environment["DOTNET_NOLOGO"] = "1";
            using var process = Process.Start(start)!;
            var stdout = process.StandardOutput.ReadToEndAsync();
            var stderr = process.StandardError.ReadToEndAsync();
            using var timeout = new CancellationTokenSource(TimeSpan.FromMinutes(3));
            await process.WaitForExitAsync(timeout.Token);
            return (process.ExitCode, await stdout + await stderr);
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }

    /// <summary>A NuGet V3 service index with a VulnerabilityInfo resource on loopback, holding one advisory.</summary>
    private sealed class AuditSource : IAsyncDisposable
    {
        private readonly HttpListener _listener;
        private readonly bool _serveData;
        private readonly Task _loop;
        private int _served;

        private AuditSource(HttpListener listener, string prefix, bool serveData)
        {
            _listener = listener;
            _serveData = serveData;
            IndexUrl = prefix + "index.json";
            Prefix = prefix;
            _loop = Task.Run(LoopAsync);
        }

        public string IndexUrl { get; }

        public bool Served => Volatile.Read(ref _served) > 0;

        private string Prefix { get; }

        public static Task<AuditSource> StartAsync(bool serveData)
        {
            var port = FreePort();
            var prefix = $"http://127.0.0.1:{port}/";
            var listener = new HttpListener();
            listener.Prefixes.Add(prefix);
            listener.Start();
            return Task.FromResult(new AuditSource(listener, prefix, serveData));
        }

        public async ValueTask DisposeAsync()
        {
            _listener.Stop();
            _listener.Close();
            try
            {
                await _loop;
            }
            catch (HttpListenerException)
            {
            }
            catch (ObjectDisposedException)
            {
            }
        }

        private static int FreePort()
        {
            using var probe = new TcpListener(IPAddress.Loopback, 0);
            probe.Start();
            return ((IPEndPoint)probe.LocalEndpoint).Port;
        }

        private async Task LoopAsync()
        {
            while (_listener.IsListening)
            {
                HttpListenerContext context;
                try
                {
                    context = await _listener.GetContextAsync();
                }
                catch (Exception e) when (e is HttpListenerException or ObjectDisposedException or InvalidOperationException)
                {
                    return;
                }

                var path = context.Request.Url!.AbsolutePath;
                var body = (_serveData, path) switch
                {
                    (_, "/index.json") => $$"""{"version":"3.0.0","resources":[{"@id":"{{Prefix}}vulnerability/index.json","@type":"VulnerabilityInfo/6.7.0"}]}""",
                    (true, "/vulnerability/index.json") => $$"""[{"@name":"base","@id":"{{Prefix}}vulnerability/base.json","@updated":"2026-11-01T00:00:00Z"}]""",
                    (true, "/vulnerability/base.json") => $$"""{"newtonsoft.json":[{"url":"{{Advisory}}","severity":2,"versions":"(, 13.0.1)"}]}""",
                    _ => null,
                };
                if (path.StartsWith("/vulnerability/", StringComparison.Ordinal))
                {
                    Interlocked.Increment(ref _served);
                }

                context.Response.StatusCode = body is null ? 500 : 200;
                context.Response.ContentType = "application/json";
                var bytes = Encoding.UTF8.GetBytes(body ?? "{}");
                await context.Response.OutputStream.WriteAsync(bytes);
                context.Response.Close();
            }
        }
    }
}
