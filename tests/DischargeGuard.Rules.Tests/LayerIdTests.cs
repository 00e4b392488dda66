using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Rules.Tests;

/// <summary>
/// Layer ids: a request's near miss of a layer id is refused, a close but different id is named, and the rule files
/// themselves cannot hold two spellings of one id (case, separators, trailing blanks or dots).
/// </summary>
public sealed class LayerIdTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "dg-layer-ids-" + Guid.NewGuid().ToString("N"));

    public LayerIdTests()
    {
        Directory.CreateDirectory(Path.Combine(_dir, "sites"));
        Directory.CreateDirectory(Path.Combine(_dir, "assets"));
        File.Copy(Path.Combine(Repo.RulesDirectory, "default.yaml"), Path.Combine(_dir, "default.yaml"));
        File.Copy(Path.Combine(Repo.RulesDirectory, "sites", "marlow-fen.yaml"), Path.Combine(_dir, "sites", "marlow-fen.yaml"));
        File.Copy(Path.Combine(Repo.RulesDirectory, "assets", "C-204B.yaml"), Path.Combine(_dir, "assets", "C-204B.yaml"));
    }

    public void Dispose()
    {
        if (Directory.Exists(_dir))
        {
            Directory.Delete(_dir, recursive: true);
        }
    }

    private static string Asset(string id, string? site = null) => $"""
        schemaVersion: 1
        layer:
          kind: asset
          id: "{id}"
        {(site is null ? string.Empty : $"  site: \"{site}\"")}
        overrides:
          - rule: R-API618-GEN
            limit: 140 °C
        """;

    private RuleFileException LoadFails() => Assert.Throws<RuleFileException>(() => FileRuleSetProvider.LoadDirectory(_dir, DateTimeOffset.UnixEpoch));

    [Theory]
    [InlineData("c-204b")]
    [InlineData("C204B")]
    [InlineData("C_204B")]
    [InlineData("C.204B")]
    public void ResolveRequest_WhenAssetDiffersOnlyInCaseOrSeparators_RefusesWithSuggestion(string asset)
    {
        var r = Repo.Shipped.ResolveRequest("marlow-fen", asset);
        Assert.Null(r.Set);
        Assert.Equal(LayerIdField.Asset, r.Refusal!.Field);
        Assert.Equal("C-204B", r.Refusal.Suggestion);
        Assert.Contains("did you mean C-204B?", r.Refusal.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ResolveRequest_WhenAssetOneCharacterAway_ResolvesWithoutItAndNamesIt()
    {
        var r = Repo.Shipped.ResolveRequest("marlow-fen", "C-204A");
        Assert.Null(r.Refusal);
        Assert.Equal(Repo.Shipped.Resolve("marlow-fen", null).Digest, r.Set!.Digest);
        var u = Assert.Single(r.Unmatched);
        Assert.Equal("asset:C-204B", u.NearestLayer);
        Assert.Equal("no layer for asset C-204A: default and site rules only (nearest layer asset:C-204B not applied: a different asset)", u.Message);
    }

    [Fact]
    public void ResolveRequest_WhenAssetThreeCharactersAway_NamesNoNearestLayer()
    {
        var u = Assert.Single(Repo.Shipped.ResolveRequest(null, "C-311X").Unmatched);
        Assert.Null(u.NearestLayer);
        Assert.Equal("no layer for asset C-311X: default rules only", u.Message);
    }

    [Fact]
    public void ResolveRequest_WhenAssetLayerNamesAnotherSite_Refuses()
    {
        var r = Repo.Shipped.ResolveRequest("kestrel-ridge", "C-204B");
        Assert.Equal(LayerIdField.Site, r.Refusal!.Field);
        Assert.Contains("belongs to site 'marlow-fen'", r.Refusal.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ResolveRequest_WhenAssetNamesItsSiteImplicitly_AppliesSiteAndAsset()
    {
        var r = Repo.Shipped.ResolveRequest(null, "C-204B");
        Assert.Equal("layers applied: default ← site:marlow-fen ← asset:C-204B", r.Applied);
        Assert.Empty(r.Unmatched);
    }

    [Theory]
    [InlineData("c-204b", "C-204B", 1, 0)]
    [InlineData("C-204A", "C-204B", 1, 1)]
    [InlineData("C-204", "C-204B", 1, 1)]
    [InlineData("K-101A", "C-204B", 3, 3)]
    public void FoldedDistance_CountsEditsOnFoldedIds(string a, string b, int cap, int expected) =>
        Assert.Equal(expected, LayerIds.FoldedDistance(a, b, cap) > cap ? cap : LayerIds.FoldedDistance(a, b, cap));

    [Fact]
    public void LoadDirectory_WhenTwoAssetLayersDifferOnlyInCase_IsDuplicateIdError()
    {
        File.WriteAllText(Path.Combine(_dir, "assets", "c-204b.yaml"), Asset("c-204b"));
        var e = Assert.Single(LoadFails().Errors);
        Assert.Equal(RuleFileErrorKind.DuplicateId, e.Kind);
        Assert.Equal("assets/c-204b.yaml", e.File);
        Assert.Equal("layer.id", e.Key);
        Assert.Equal(4, e.Line);
    }

    [Fact]
    public void LoadDirectory_WhenAssetLayerNamesNearMissOfSiteLayer_IsErrorWithSuggestion()
    {
        File.WriteAllText(Path.Combine(_dir, "assets", "C-311X.yaml"), Asset("C-311X", site: "marlowfen"));
        var e = Assert.Single(LoadFails().Errors);
        Assert.Equal("assets/C-311X.yaml", e.File);
        Assert.Equal("layer.site", e.Key);
        Assert.Equal(5, e.Line);
        Assert.Contains("did you mean marlow-fen?", e.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("C-311X.")]
    [InlineData("C-311X ")]
    [InlineData("C-311X\n")]
    [InlineData("C-311X-")]
    public void Parse_WhenLayerIdEndsInBlankBreakOrPunctuation_IsBadValue(string id)
    {
        var yaml = Asset(id.Replace("\n", "\\n", StringComparison.Ordinal));
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("assets/x.yaml", yaml));
        Assert.Contains(ex.Errors, e => e.Key == "layer.id" && e.Kind == RuleFileErrorKind.BadValue);
    }

    [Fact]
    public void Parse_WhenSiteLayerIdNotInRequestForm_IsBadValue()
    {
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("sites/Marlow_Fen.yaml", "schemaVersion: 1\nlayer:\n  kind: site\n  id: Marlow_Fen\n"));
        var e = Assert.Single(ex.Errors);
        Assert.Equal("layer.id", e.Key);
        Assert.Contains("not a site id", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void LoadDirectory_WhenFileNameEndsInDot_IsErrorNamingTheFile()
    {
        File.WriteAllText(Path.Combine(_dir, "assets", "C-311X..yaml"), Asset("C-311X"));
        var e = Assert.Single(LoadFails().Errors);
        Assert.Equal("assets/C-311X..yaml", e.File);
        Assert.Contains("not a layer id", e.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("R-API618-GEN.")]
    [InlineData("R-API618-GEN_")]
    public void Parse_WhenRuleIdEndsInPunctuation_IsBadValue(string id)
    {
        var yaml = $"""
            schemaVersion: 1
            layer:
              kind: site
              id: test-site
            rules:
              - id: "{id}"
                title: t
                quantity: pressureRatio
                limit: 2.0
                severity: warning
                basis: "invented for the test"
                message: "m"
            """;
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("sites/test-site.yaml", yaml));
        Assert.Contains(ex.Errors, e => e.Key == "rules[0].id" && e.Message.Contains("ending with a letter or digit", StringComparison.Ordinal));
    }
}

/// <summary>
/// The limit in force and where it came from: each merged rule carries the chain of layers that touched it, and once a
/// layer changes a limit the basis shown is that layer's, never a lower layer's basis that names other numbers.
/// </summary>
public sealed class RuleChainTests
{
    [Fact]
    public void Merge_WhenAssetTightensLimit_BasisIsTheAssetLayersAndTheDefaultsIsInTheChain()
    {
        var rule = Repo.Shipped.Resolve("marlow-fen", "C-204B").RulesById["R-FIELD-HC"];

        // rules/assets/C-204B.yaml: 170 °C, band 15 K; rules/default.yaml: 350 °F (177 °C in the basis), band 12 K. The
        // default's limit reads as the file states it (350 °F, not 176.667 °C) since the stated-limit change.
        Assert.Equal("170 °C", Model.LimitText.Of(rule));
        Assert.Equal("asset:C-204B", rule.LimitLayer);
        Assert.StartsWith("asset:C-204B: cylinder manufacturer's stated maximum", rule.Basis, StringComparison.Ordinal);
        Assert.DoesNotContain("177", rule.Basis, StringComparison.Ordinal);
        Assert.Equal(["default", "asset:C-204B"], rule.Chain.Select(c => c.Layer));
        Assert.Equal("defined the rule", rule.Chain[0].Change);
        Assert.Equal("350 °F", rule.Chain[0].Limit);
        Assert.Contains("177 °C", rule.Chain[0].Basis, StringComparison.Ordinal);
        Assert.Equal("tightened the limit from 350 °F to 170 °C; widened the warning band from 12 K to 15 K", rule.Chain[1].Change);
        Assert.Equal("15 K", rule.Chain[1].WarningBand);
    }

    [Fact]
    public void Merge_WhenSiteLoosensWithReasonAndNoBasis_ReasonIsTheBasis()
    {
        var rule = Repo.Shipped.Resolve("marlow-fen", null).RulesById["R-RATIO"];

        // rules/sites/marlow-fen.yaml: R-RATIO 4.0 → 4.5 with the packager's rating sheet as its reason.
        Assert.Equal("4.5", Model.LimitText.Of(rule));
        Assert.StartsWith("site:marlow-fen: Packager's frame rating sheet PR-17", rule.Basis, StringComparison.Ordinal);
        Assert.Equal("loosened the limit from 4 to 4.5", rule.Chain[^1].Change);
        Assert.Equal(rule.LoosenedReason, rule.Chain[^1].Reason);
    }

    [Fact]
    public void Merge_WhenLayerGivesNoBasisReasonOrSignOff_BasisSaysSoInsteadOfKeepingTheLowerOne()
    {
        var site = RuleFileParser.Parse("sites/test-site.yaml", "schemaVersion: 1\nlayer:\n  kind: site\n  id: test-site\noverrides:\n  - rule: R-FIELD-HC\n    limit: 160 °C\n");
        var rule = LayerMerger.Merge([Repo.Shipped.Default, site]).RulesById["R-FIELD-HC"];
        Assert.Equal("site:test-site: the layer states no basis for this change; the bases of the layers below are in the rule's chain", rule.Basis);
        Assert.Null(rule.Chain[^1].Basis);
    }

    [Fact]
    public void Merge_WhenRuleDisabled_ChainEndsWithTheDisablingLayer()
    {
        var d = Assert.Single(Repo.Shipped.Resolve("marlow-fen", null).Disabled, d => d.RuleId == "R-FLASH-SOFT");
        Assert.Equal(["default", "site:marlow-fen"], d.Chain.Select(c => c.Layer));
        Assert.Equal("disabled the rule", d.Chain[^1].Change);
    }

    [Fact]
    public void Parse_WhenOverrideBasisBlank_IsBadValue()
    {
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("sites/test-site.yaml",
            "schemaVersion: 1\nlayer:\n  kind: site\n  id: test-site\noverrides:\n  - rule: R-FIELD-HC\n    limit: 160 °C\n    basis: \" \"\n"));
        Assert.Equal("overrides[0].basis", Assert.Single(ex.Errors).Key);
    }
}
