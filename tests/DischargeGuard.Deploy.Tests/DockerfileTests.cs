using System.Text.RegularExpressions;

namespace DischargeGuard.Deploy.Tests;

/// <summary>The Dockerfile and .dockerignore, read as instructions (no Docker engine runs here; scripts/verify-container.sh runs the same steps).</summary>
public sealed partial class DockerfileTests
{
    private static readonly DockerfileModel Model = DockerfileModel.Load(Repo.At("Dockerfile"));

    [GeneratedRegex(@"\b(curl|wget)\b")]
    private static partial Regex Downloader();

    [Fact]
    public void It_builds_on_the_sdk_and_runs_on_the_aspnet_runtime_in_separate_stages()
    {
        Assert.True(Model.Stages.Count >= 2, "the Dockerfile is not multi-stage");
        var from = Model.Stages.Select(s => s[0].Arguments).ToList();
        Assert.StartsWith("mcr.microsoft.com/dotnet/sdk:10.0", from[0], StringComparison.Ordinal);
        Assert.Matches(@"\bAS build\b", from[0]);
        Assert.StartsWith("mcr.microsoft.com/dotnet/aspnet:10.0", from[^1], StringComparison.Ordinal);
        Assert.Contains(Model.Stages[0], i => i.Keyword == "RUN" && i.Arguments.Contains("dotnet publish", StringComparison.Ordinal));
        Assert.Contains(Model.Runtime, i => i.Keyword == "COPY" && i.Arguments.StartsWith("--from=build", StringComparison.Ordinal));
        Assert.DoesNotContain(Model.Runtime, i => i.Keyword == "RUN" && i.Arguments.Contains("dotnet publish", StringComparison.Ordinal));
    }

    [Fact]
    public void The_runtime_runs_as_a_non_root_user_by_number()
    {
        var user = Model.Runtime.LastOrDefault(i => i.Keyword == "USER")?.Arguments;
        Assert.NotNull(user);
        var uid = user!.Split(':')[0];
        Assert.Matches("^[0-9]+$", uid);
        Assert.NotEqual("0", uid);
        var userLine = Model.Runtime.Last(i => i.Keyword == "USER").Line;
        Assert.True(Model.Runtime.Last(i => i.Keyword is "ENTRYPOINT" or "CMD").Line > userLine, "the entry point is declared before USER");
    }

    [Fact]
    public void The_health_check_uses_the_services_probe_mode_on_readiness()
    {
        var health = Assert.Single(Model.Runtime, i => i.Keyword == "HEALTHCHECK").Arguments;
        Assert.Contains("\"--probe\"", health, StringComparison.Ordinal);
        Assert.Matches(@"http://127\.0\.0\.1:8080/health/ready", health);
        Assert.Contains("\"dotnet\"", health, StringComparison.Ordinal);
        Assert.Contains("/app/DischargeGuard.Api.dll", health, StringComparison.Ordinal);
        Assert.Equal("http://+:8080", DockerfileModel.Env(Model.Runtime)["Urls"]);
    }

    [Fact]
    public void Nothing_uses_curl_or_wget()
    {
        var uses = Model.All.Where(i => i.Keyword is "RUN" or "HEALTHCHECK" or "CMD" or "ENTRYPOINT" or "ADD" && Downloader().IsMatch(i.Arguments)).ToList();
        Assert.True(uses.Count == 0, "curl/wget at line(s) " + string.Join(", ", uses.Select(u => u.Line)));
        Assert.DoesNotContain(Model.All, i => i.Keyword == "ADD" && i.Arguments.Contains("://", StringComparison.Ordinal));
    }

    [Fact]
    public void Configuration_is_by_environment_with_rules_at_rules_and_writes_under_data()
    {
        var env = DockerfileModel.Env(Model.Runtime);
        Assert.Equal("/rules", env["DischargeGuard__RulesDirectory"]);
        Assert.Equal("sqlite", env["Audit__Provider"]);
        Assert.StartsWith("/data/", env["Audit__SqlitePath"], StringComparison.Ordinal);
        Assert.Equal("1", env["DischargeGuard__Replicas"]);
        Assert.Equal("/app", env["ASPNETCORE_CONTENTROOT"]);
        Assert.DoesNotContain(env.Keys, k => k.Contains("ConnectionString", StringComparison.OrdinalIgnoreCase) || k.StartsWith("Auth__", StringComparison.Ordinal));

        // Logs go to <content root>/data/logs: /app/data must lead to the data volume, the only writable place.
        Assert.Contains(Model.Runtime, i => i.Keyword == "RUN" && i.Arguments.Contains("ln -s /data /app/data", StringComparison.Ordinal));
        var volume = Assert.Single(Model.Runtime, i => i.Keyword == "VOLUME").Arguments;
        Assert.Equal("[\"/data\"]", volume);
        Assert.Equal(["dotnet", "/app/DischargeGuard.Api.dll"], ExecForm(Model.Runtime.Last(i => i.Keyword == "ENTRYPOINT").Arguments));
    }

    [Fact]
    public void The_build_context_leaves_out_build_output_audit_files_and_history()
    {
        var ignore = File.ReadAllLines(Repo.At(".dockerignore")).Select(l => l.Trim()).Where(l => l.Length > 0 && !l.StartsWith('#')).ToList();
        Assert.Equal("*", ignore[0]);
        foreach (var pattern in new[] { "**/bin/", "**/obj/", "**/*.db", "data/" })
        {
            Assert.Contains(pattern, ignore);
        }

        // Everything the build stage copies is let back in.
        foreach (var copy in Model.Stages[0].Where(i => i.Keyword == "COPY"))
        {
            foreach (var source in copy.Arguments.Split(' ', StringSplitOptions.RemoveEmptyEntries)[..^1])
            {
                var top = source.TrimEnd('/').Split('/')[0];
                Assert.True(ignore.Contains("!" + top) || ignore.Contains("!" + top + "/"), $"COPY {source} (line {copy.Line}) is excluded by .dockerignore");
            }
        }
    }

    private static string[] ExecForm(string arguments) =>
        System.Text.Json.JsonSerializer.Deserialize<string[]>(arguments) ?? [];
}
