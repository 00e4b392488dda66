using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>The shipped rule directory, found by walking up to the solution file.</summary>
internal static class TestRules
{
    private static readonly Lazy<RuleSetSnapshot> Shipped = new(() => FileRuleSetProvider.LoadDirectory(Directory, DateTimeOffset.UnixEpoch));

    public static string RepositoryRoot { get; } = DischargeGuard.Testing.RepositoryRoot.Path;

    public static string Directory => Path.Combine(RepositoryRoot, "rules");

    public static RuleSetSnapshot Snapshot => Shipped.Value;

}
