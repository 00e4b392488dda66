using System.Text.RegularExpressions;

namespace DischargeGuard.Deploy.Tests;

/// <summary>docs/deploy.md: the safety caution, and every repository path and overlay it names exists.</summary>
public sealed partial class DeployDocsTests
{
    private static readonly string Text = File.ReadAllText(Repo.At("docs", "deploy.md"));

    [GeneratedRegex(@"(?<![\w/.-])((?:deploy|scripts|docs|rules|src)/[A-Za-z0-9._/-]*[A-Za-z0-9_])")]
    private static partial Regex RepoPath();

    [Fact]
    public void It_carries_the_safety_caution()
    {
        Assert.Contains("local codes", Text, StringComparison.Ordinal);
        Assert.Contains("manufacturer's limits", Text, StringComparison.Ordinal);
        Assert.Contains("licensed engineer's review", Text, StringComparison.Ordinal);
    }

    [Fact]
    public void Every_repository_path_it_names_exists()
    {
        var missing = RepoPath().Matches(Text).Select(m => m.Groups[1].Value)
            .Where(p => !p.Contains('<', StringComparison.Ordinal))
            .Distinct(StringComparer.Ordinal)
            .Where(p => !File.Exists(Repo.At(p.Split('/'))) && !Directory.Exists(Repo.At(p.Split('/'))))
            .ToList();
        Assert.True(missing.Count == 0, "docs/deploy.md names paths that do not exist: " + string.Join(", ", missing));
    }

    [Fact]
    public void It_names_the_probe_command_the_image_runs()
    {
        Assert.Contains("dotnet DischargeGuard.Api.dll --probe http://127.0.0.1:8080/health/ready", Text, StringComparison.Ordinal);
        Assert.Contains("new-key --id", Text, StringComparison.Ordinal);
    }
}
