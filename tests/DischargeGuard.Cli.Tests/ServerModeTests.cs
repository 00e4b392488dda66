using System.Net;
using System.Net.Sockets;
using System.Text.Json;

namespace DischargeGuard.Cli.Tests;

/// <summary>One keyed service shared by the tests of this class (starting a host costs about a second).</summary>
public sealed class KeyedService : IAsyncLifetime
{
    internal ServiceHost Host { get; private set; } = null!;

    public async Task InitializeAsync() => Host = await ServiceHost.StartAsync(new Dictionary<string, string>
    {
        ["RateLimits:PermitsPerSecond"] = "100000",
        ["RateLimits:Burst"] = "100000",
    });

    public async Task DisposeAsync() => await Host.DisposeAsync();
}

public class ServerModeTests(KeyedService service) : IClassFixture<KeyedService>
{
    private ServiceHost Host => service.Host;

    [Fact]
    public async Task Server_WithTheGateKey_EvaluatesEveryCaseAndTheServiceRecordsEach()
    {
        var before = AuditFile.Records(Host.DatabasePath).Count;
        var run = await Gate.RunAsync(Host.GateEnvironment(), "check", "--server", Host.Url, "--format", "json", Repo.Example("c-204b-rerate.yaml"));
        Assert.True(run.ExitCode == 2, run.ToString());
        using var doc = JsonDocument.Parse(run.Stdout);
        Assert.Equal(Host.Url + "/", doc.RootElement.GetProperty("evaluatedBy").GetString());
        var ids = doc.RootElement.GetProperty("cases").EnumerateArray().Select(c => c.GetProperty("response").GetProperty("id").GetGuid()).ToList();
        Assert.Equal(3, ids.Count);
        var records = AuditFile.Records(Host.DatabasePath);
        Assert.Equal(before + 3, records.Count);
        Assert.All(ids, id => Assert.Contains(records, r => r.Id == id && r.Caller == "marlow-fen-change-gate"));

        // Each case a server evaluated names its management-of-change report, and the report opens with the gate's key.
        foreach (var c in doc.RootElement.GetProperty("cases").EnumerateArray())
        {
            var id = c.GetProperty("response").GetProperty("id").GetGuid();
            Assert.Equal($"{Host.Url}/v1/evaluations/{id:D}/report", c.GetProperty("report").GetString());
        }
    }

    [Fact]
    public async Task Server_TextAndJUnitReports_NameEachCasesReport()
    {
        var text = await Gate.RunAsync(Host.GateEnvironment(), "check", "--server", Host.Url, Repo.Example("c-204b-design.json"));
        Assert.True(text.ExitCode == 0, text.ToString());
        Assert.Matches(@"/v1/evaluations/[0-9a-f-]{36}/report", text.Stdout);
        var junit = await Gate.RunAsync(Host.GateEnvironment(), "check", "--server", Host.Url, "--format", "junit", Repo.Example("c-204b-design.json"));
        Assert.Matches(@"/v1/evaluations/[0-9a-f-]{36}/report", junit.Stdout);
    }

    [Fact]
    public async Task ServerFromTheEnvironment_IsTheDefault()
    {
        var run = await Gate.RunAsync(Host.GateEnvironment(), "check", Repo.Example("c-204b-design.json"));
        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Contains("evaluated by " + Host.Url, run.Stdout, StringComparison.Ordinal);
        Assert.Contains(DischargeGuard.Evaluation.Pipeline.Cautions.DeferToCodes, run.Stdout, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Server_SameCase_GivesTheSameResultsAsLocal()
    {
        using var temp = new TempFolder();
        var remote = await Gate.RunAsync(Host.GateEnvironment(), "check", "--format", "json", Repo.Example("c-204b-valve-plates.yaml"));
        var local = await Gate.RunAsync("check", "--local", "--rules", Host.RulesDirectory, "--audit-file", temp.File("a.db"), "--format", "json", Repo.Example("c-204b-valve-plates.yaml"));
        Assert.Equal(local.ExitCode, remote.ExitCode);
        using var r = JsonDocument.Parse(remote.Stdout);
        using var l = JsonDocument.Parse(local.Stdout);
        static string Stages(JsonDocument d) => string.Join("|", d.RootElement.GetProperty("cases").EnumerateArray().Select(c => c.GetProperty("response").GetProperty("stages").GetRawText()));
        Assert.Equal(Stages(l), Stages(r));
    }

    [Fact]
    public async Task UnknownKey_Is401_Exit77_AndNothingIsRecorded()
    {
        var before = AuditFile.Records(Host.DatabasePath).Count;
        var env = Host.GateEnvironment();
        env[GateEnvironment.KeyVariable] = "not-a-key-of-this-service";
        var run = await Gate.RunAsync(env, "check", Repo.Example("c-204b-rerate.yaml"));
        Assert.True(run.ExitCode == 77, run.ToString());
        Assert.Contains("refused the key (401)", run.Stderr, StringComparison.Ordinal);
        Assert.Equal(before, AuditFile.Records(Host.DatabasePath).Count);
    }

    [Fact]
    public async Task MissingKey_Is401_Exit77()
    {
        var env = Host.GateEnvironment();
        env.Remove(GateEnvironment.KeyVariable);
        var run = await Gate.RunAsync(env, "check", Repo.Example("c-204b-design.json"));
        Assert.True(run.ExitCode == 77, run.ToString());
    }

    [Fact]
    public async Task KeyWithoutTheEvaluateRole_Is403_Exit77()
    {
        var run = await Gate.RunAsync(Host.GateEnvironment("planner"), "check", Repo.Example("c-204b-design.json"));
        Assert.True(run.ExitCode == 77, run.ToString());
        Assert.Contains("refused the key (403)", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task KeyFromAnotherVariable_WithKeyEnv()
    {
        var env = new Dictionary<string, string> { ["MARLOW_FEN_GATE_KEY"] = Host.Keys["gate"] };
        var run = await Gate.RunAsync(env, "check", "--server", Host.Url, "--key-env", "MARLOW_FEN_GATE_KEY", Repo.Example("c-204b-design.json"));
        Assert.True(run.ExitCode == 0, run.ToString());
    }

    [Fact]
    public async Task InvalidCase_IsRefusedByTheService_Exit64_WithTheFileLine()
    {
        using var temp = new TempFolder();
        var file = temp.Write("unknown-lube.yaml", """
            asset: C-204B
            site: {id: marlow-fen, elevation: 4 m}
            gas: {preset: methane}
            stages:
              - suction: {pressure: 2.5 barg, temperature: 25 °C}
                discharge: {pressure: 8.2 barg}
                efficiency: {isentropic: 0.84}
                equipment: {compressorType: recip-packaged-lubricated, lubricant: whale-oil}
            """);
        var run = await Gate.RunAsync(Host.GateEnvironment(), "check", file);
        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Contains("unknown-lube.yaml:8:", run.Stderr, StringComparison.Ordinal);
        Assert.Contains("stages[0].equipment.lubricant", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ExpectedDigestMismatch_Exit64_AndTheServiceRecordsNothing()
    {
        var before = AuditFile.Records(Host.DatabasePath).Count;
        var run = await Gate.RunAsync(Host.GateEnvironment(), "check", "--expect-rules-digest", new string('b', 64), Repo.Example("c-204b-rerate.yaml"));
        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Contains("is not the approved set", run.Stderr, StringComparison.Ordinal);
        Assert.Equal(before, AuditFile.Records(Host.DatabasePath).Count);

        var digest = RulesCheckTests.DigestLine(await Gate.RunAsync("rules", "check", Host.RulesDirectory, "--site", "marlow-fen", "--asset", "C-204B"));
        var approved = await Gate.RunAsync(Host.GateEnvironment(), "check", "--expect-rules-digest", digest, Repo.Example("c-204b-design.json"));
        Assert.True(approved.ExitCode == 0, approved.ToString());
    }

    [Fact]
    public async Task ServiceNotListening_Exit69()
    {
        var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        var port = ((IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        var env = new Dictionary<string, string> { [GateEnvironment.KeyVariable] = "any" };
        var run = await Gate.RunAsync(env, "check", "--server", $"http://127.0.0.1:{port}", "--timeout", "5", Repo.Example("c-204b-rerate.yaml"));
        Assert.True(run.ExitCode == 69, run.ToString());
        Assert.Contains("cannot be reached", run.Stderr, StringComparison.Ordinal);
        // After the first unreachable case the others are not sent.
        Assert.Contains("Not sent:", run.Stderr, StringComparison.Ordinal);
    }
}

public class RateLimitTests
{
    [Fact]
    public async Task RateLimited_Exit75_OutranksTheVerdicts()
    {
        await using var host = await ServiceHost.StartAsync(new Dictionary<string, string>
        {
            ["RateLimits:PermitsPerSecond"] = "0.01",
            ["RateLimits:Burst"] = "1",
        });
        var run = await Gate.RunAsync(host.GateEnvironment(), "check", "--format", "json", Repo.Example("c-204b-rerate.yaml"));
        Assert.True(run.ExitCode == 75, run.ToString());
        Assert.Contains("rate limit", run.Stderr, StringComparison.Ordinal);
        using var doc = JsonDocument.Parse(run.Stdout);
        var codes = doc.RootElement.GetProperty("cases").EnumerateArray().Select(c => c.GetProperty("exitCode").GetInt32()).ToList();
        Assert.Equal([0, 75, 75], codes);
        Assert.Single(AuditFile.Records(host.DatabasePath));
    }
}
