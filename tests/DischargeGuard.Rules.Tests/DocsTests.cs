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

    [Fact]
    public void RulesDoc_ExampleLayers_LoadAndMergeOverTheDefaults()
    {
        var doc = File.ReadAllText(Path.Combine(Repo.Root, "docs", "rules.md"));
        var blocks = System.Text.RegularExpressions.Regex.Matches(doc, "```yaml\n(# rules/(sites|assets)/[^\n]+\n.*?)```", System.Text.RegularExpressions.RegexOptions.Singleline)
            .Select(m => m.Groups[1].Value)
            .ToList();
        Assert.Equal(2, blocks.Count);
        var site = Loading.RuleFileParser.Parse("sites/marlow-fen.yaml", blocks[0], Model.LayerKind.Site);
        var asset = Loading.RuleFileParser.Parse("assets/C-204B.yaml", blocks[1], Model.LayerKind.Asset);
        var set = Loading.LayerMerger.Merge([Repo.Shipped.Default, site, asset]);
        Assert.Equal("site:marlow-fen", set.RulesById["R-SPECIAL-O2"].LimitLayer);
        Assert.Equal("asset:C-204B", set.RulesById["R-FIELD-HC"].LimitLayer);
    }
}
