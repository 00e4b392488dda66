using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>The shipped rule directory, found by walking up to the solution file.</summary>
internal static class TestRules
{
    private static readonly Lazy<RuleSetSnapshot> Shipped = new(() => FileRuleSetProvider.LoadDirectory(Directory, DateTimeOffset.UnixEpoch));

    public static string RepositoryRoot { get; } = FindRoot();

    public static string Directory => Path.Combine(RepositoryRoot, "rules");

    public static RuleSetSnapshot Snapshot => Shipped.Value;

    private static string FindRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "DischargeGuard.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("DischargeGuard.sln not found above the test output folder.");
    }
}
