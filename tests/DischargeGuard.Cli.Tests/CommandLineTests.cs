namespace DischargeGuard.Cli.Tests;

public class CommandLineTests
{
    [Theory]
    [InlineData(new string[0], "Required command was not provided")]
    [InlineData(new[] { "check" }, "Required argument missing")]
    [InlineData(new[] { "check", "--bogus", "x.yaml" }, "Unrecognized option '--bogus'")]
    [InlineData(new[] { "check", "--format", "xml", "x.yaml" }, "xml")]
    [InlineData(new[] { "check", "--timeout", "soon", "x.yaml" }, "soon")]
    [InlineData(new[] { "frobnicate" }, "frobnicate")]
    [InlineData(new[] { "rules", "check" }, "Required argument missing")]
    public async Task ParseErrors_ExitWith64OnStderr(string[] args, string mention)
    {
        var run = await Gate.RunAsync(args);
        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Contains(mention, run.Stderr, StringComparison.Ordinal);
        Assert.Equal(string.Empty, run.Stdout);
    }

    [Fact]
    public async Task LocalAndServerTogether_IsUsageError()
    {
        var run = await Gate.RunAsync("check", "--local", "--server", "http://127.0.0.1:9", Repo.Example("c-204b-design.json"));
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("--local and --server exclude each other", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task RulesOptionWithAServerFromTheEnvironment_IsUsageError()
    {
        var env = new Dictionary<string, string> { [GateEnvironment.ServerVariable] = "http://127.0.0.1:9" };
        var run = await Gate.RunAsync(env, "check", "--rules", Repo.Rules, Repo.Example("c-204b-design.json"));
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("--rules and --audit-file apply to --local", run.Stderr, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("not-a-digest")]
    [InlineData("abc")]
    public async Task MalformedExpectedDigest_IsUsageError(string digest)
    {
        var run = await Gate.RunAsync("check", "--local", "--expect-rules-digest", digest, Repo.Example("c-204b-design.json"));
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("is not a rule digest", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task BadServerAddress_IsUsageError()
    {
        var run = await Gate.RunAsync("check", "--server", "ftp://plant/", Repo.Example("c-204b-design.json"));
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("not an absolute http or https URL", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Help_ExitsZero_AndNamesTheExitCodes()
    {
        var run = await Gate.RunAsync("--help");
        Assert.Equal(0, run.ExitCode);
        Assert.Contains("64 invalid input or usage", run.Stdout, StringComparison.Ordinal);
        var check = await Gate.RunAsync("check", "--help");
        Assert.Equal(0, check.ExitCode);
        Assert.Contains("--expect-rules-digest", check.Stdout, StringComparison.Ordinal);
    }
}
