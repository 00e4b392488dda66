using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;
using static DischargeGuard.Rules.Tests.Facts;

namespace DischargeGuard.Rules.Tests;

public class LayeringTests
{
    private static RuleLayer Site(string overrides, string id = "test-site") => Layer($"sites/{id}.yaml", $"""
        schemaVersion: 1
        layer:
          kind: site
          id: {id}
        overrides:
        {overrides}
        """);

    private static EffectiveRuleSet Merge(params RuleLayer[] upper) => LayerMerger.Merge([DefaultLayer, .. upper]);

    [Fact]
    public void Override_WhenTightened_FindingNamesSiteLayer()
    {
        var set = Merge(Site("  - rule: R-API618-GEN\n    limit: 140 °C"));
        var f = RuleEngine.EvaluateStage(set, Quiet() with { Isentropic = C(142), IsentropicInternal = C(142) }).Find("R-API618-GEN");
        Assert.Equal(Severity.Violation, f.Severity);
        Assert.Equal("site:test-site", f.Layer);
        Assert.Null(f.LoosenedReason);
        AssertEx.Close(413.15, f.Limit!.Value.SiValue, 1e-9, "limit");
    }

    [Fact]
    public void Override_WhenLoosenedWithReason_FindingCarriesReason()
    {
        var set = Merge(Site("  - rule: R-RATIO\n    limit: 4.5\n    reason: \"Frame rating sheet allows 4.5\""));
        var f = RuleEngine.EvaluateStage(set, Quiet() with { DischargePressure = UnitsNet.Pressure.FromBars(42) }).Find("R-RATIO");
        Assert.Equal(Severity.Pass, f.Severity);
        Assert.Equal("site:test-site", f.Layer);
        Assert.Equal("Frame rating sheet allows 4.5", f.LoosenedReason);
    }

    [Fact]
    public void Override_WhenLoosenedWithoutReason_IsErrorWithFileLineKey()
    {
        var site = Site("  - rule: R-API618-GEN\n    limit: 160 °C");
        var ex = Assert.Throws<RuleFileException>(() => Merge(site));
        var e = Assert.Single(ex.Errors);
        Assert.Equal(RuleFileErrorKind.LayeringViolation, e.Kind);
        Assert.Equal("sites/test-site.yaml", e.File);
        Assert.Equal(7, e.Line);
        Assert.Equal("overrides.reason", e.Key);
    }

    [Fact]
    public void Override_WhenWarningBandNarrowedWithoutReason_IsError()
    {
        var ex = Assert.Throws<RuleFileException>(() => Merge(Site("  - rule: R-API618-GEN\n    warningBand: 1 K")));
        Assert.Equal(RuleFileErrorKind.LayeringViolation, Assert.Single(ex.Errors).Kind);
    }

    [Fact]
    public void Override_WhenDisabledWithReason_RuleGoneAndListed()
    {
        var set = Merge(Site("  - rule: R-DEPOSIT\n    disabled: true\n    reason: \"Synthetic oil only at this site\""));
        var result = RuleEngine.EvaluateStage(set, Quiet() with { LubricantId = "mineral-vdl", Estimated = C(160) });
        Assert.DoesNotContain(result.Findings, f => f.RuleId == "R-DEPOSIT");
        var d = Assert.Single(result.Disabled);
        Assert.Equal(("R-DEPOSIT", "site:test-site"), (d.RuleId, d.Layer));
    }

    [Fact]
    public void Override_WhenDisabledWithoutReason_IsError()
    {
        var ex = Assert.Throws<RuleFileException>(() => Merge(Site("  - rule: R-DEPOSIT\n    disabled: true")));
        var e = Assert.Single(ex.Errors);
        Assert.Equal("overrides.reason", e.Key);
        Assert.Equal(7, e.Line);
    }

    [Theory]
    [InlineData("R-SCREW-PREDICTION")]
    [InlineData("R-SETPOINTS")]
    public void Override_WhenRuleHasNoLimit_IsBadValue(string ruleId)
    {
        var ex = Assert.Throws<RuleFileException>(() => Merge(Site($"  - rule: {ruleId}\n    limit: 100 °C\n    reason: \"x\"")));
        var e = Assert.Single(ex.Errors);
        Assert.Equal((RuleFileErrorKind.BadValue, "overrides.limit", 7L), (e.Kind, e.Key, e.Line));
    }

    [Fact]
    public void Override_WhenUnknownRule_IsUnknownReference()
    {
        var ex = Assert.Throws<RuleFileException>(() => Merge(Site("  - rule: R-NOPE\n    limit: 100 °C")));
        Assert.Equal(RuleFileErrorKind.UnknownReference, Assert.Single(ex.Errors).Kind);
    }

    [Fact]
    public void AssetOverSite_WhenBothChangeRule_AssetWinsAndIsNamed()
    {
        var site = Site("  - rule: R-API618-GEN\n    limit: 145 °C");
        var asset = Layer("assets/K-9.yaml", "schemaVersion: 1\nlayer:\n  kind: asset\n  id: K-9\n  site: test-site\noverrides:\n  - rule: R-API618-GEN\n    limit: 140 °C\n");
        var f = RuleEngine.EvaluateStage(Merge(site, asset), Quiet() with { Isentropic = C(141), IsentropicInternal = C(141) }).Find("R-API618-GEN");
        Assert.Equal("asset:K-9", f.Layer);
        Assert.Equal(Severity.Violation, f.Severity);
    }

    [Fact]
    public void AssetOverSite_WhenAssetLoosensSiteTightening_NeedsReason()
    {
        // Loosening is judged against the layer below (the site's 140 °C), not against the default.
        var site = Site("  - rule: R-API618-GEN\n    limit: 140 °C");
        var asset = Layer("assets/K-9.yaml", "schemaVersion: 1\nlayer:\n  kind: asset\n  id: K-9\noverrides:\n  - rule: R-API618-GEN\n    limit: 145 °C\n");
        var ex = Assert.Throws<RuleFileException>(() => Merge(site, asset));
        Assert.Equal("assets/K-9.yaml", Assert.Single(ex.Errors).File);
    }

    [Fact]
    public void SpecialService_WhenSiteSetsSignedLimit_CheckedAgainstIt()
    {
        var set = Merge(Site("  - rule: R-SPECIAL-O2\n    limit: 140 °C\n    approvedBy: \"E. Vardy, PE\"\n    approvedOn: 2026-03-02\n    reference: \"MOC-0117\""));
        var inside = RuleEngine.EvaluateStage(set, Quiet() with { OxygenMoleFraction = UnitsNet.Ratio.FromPercent(99.5), Estimated = C(130) });
        var f = inside.Find("R-SPECIAL-O2");
        Assert.Equal(Severity.Pass, f.Severity);
        Assert.Equal("E. Vardy, PE", f.SignOff!.ApprovedBy);
        Assert.Equal("site:test-site", f.Layer);
        var beyond = RuleEngine.EvaluateStage(set, Quiet() with { OxygenMoleFraction = UnitsNet.Ratio.FromPercent(99.5), Estimated = C(140.01) });
        Assert.Equal(Severity.Violation, beyond.Find("R-SPECIAL-O2").Severity);
    }

    [Fact]
    public void SpecialService_WhenLimitSetWithoutSignOff_IsError()
    {
        var ex = Assert.Throws<RuleFileException>(() => Merge(Site("  - rule: R-SPECIAL-CL2\n    limit: 120 °C\n    reason: \"x\"")));
        var e = Assert.Single(ex.Errors);
        Assert.Equal(RuleFileErrorKind.LayeringViolation, e.Kind);
        Assert.Equal("overrides.approvedBy", e.Key);
    }

    [Fact]
    public void CatalogueEntry_WhenRedefinedInUpperLayer_IsDuplicateIdWithLine()
    {
        var site = Layer("sites/s.yaml", "schemaVersion: 1\nlayer:\n  kind: site\n  id: s\nmaterials:\n  - id: peek\n    title: PEEK again\n    use: valve\n    continuousLimit: 250 °C\n    basis: x\n");
        var ex = Assert.Throws<RuleFileException>(() => Merge(site));
        var e = Assert.Single(ex.Errors);
        Assert.Equal((RuleFileErrorKind.DuplicateId, 6L, "materials.id"), (e.Kind, e.Line, e.Key));
    }

    [Fact]
    public void Digest_WhenOnlyTheUnitSpellingDiffers_IsUnchanged()
    {
        // degC and ℃ are spellings of °C (docs/units.md): the same reading, so the same digest.
        var a = Merge(Site("  - rule: R-API618-GEN\n    limit: 145 °C"));
        var b = Merge(Site("  - rule: R-API618-GEN\n    limit: 145 degC"));
        var c = Merge(Site("  - rule: R-API618-GEN\n    limit: 144 °C"));
        Assert.Equal(a.Digest, b.Digest);
        Assert.NotEqual(a.Digest, c.Digest);
        Assert.NotEqual(a.Digest, Repo.Defaults.Digest);
        Assert.Equal(["default", "site:test-site"], a.Layers.Select(l => l.Name));
        Assert.All(a.Layers, l => Assert.Equal(64, l.Digest.Length));
    }

    [Fact]
    public void Digest_WhenTheSameLimitIsStatedInOtherUnits_Changes()
    {
        // 145 °C = 293 °F exactly (°F = 1.8·°C + 32): the check is the same, but answers show the limit as stated, so
        // the digest that names what an answer rests on changes with the stated form.
        var celsius = Merge(Site("  - rule: R-API618-GEN\n    limit: 145 °C"));
        var fahrenheit = Merge(Site("  - rule: R-API618-GEN\n    limit: 293 °F"));
        var both = Merge(Site("  - rule: R-API618-GEN\n    limit: 145 °C (293 °F)"));
        Assert.Equal(3, new[] { celsius.Digest, fahrenheit.Digest, both.Digest }.Distinct().Count());
        AssertEx.Close(418.15, celsius.RulesById["R-API618-GEN"].Limit!.Absolute!.Value, 1e-9, "145 °C in K");
        AssertEx.Close(418.15, fahrenheit.RulesById["R-API618-GEN"].Limit!.Absolute!.Value, 1e-9, "293 °F in K");
        Assert.Equal([new StatedValue(293, "°F")], fahrenheit.RulesById["R-API618-GEN"].Limit!.AsStated);
    }

    [Fact]
    public void ShippedExample_WhenResolvedForAsset_NamesAllThreeLayers()
    {
        var set = Repo.Shipped.Resolve("marlow-fen", "C-204B");
        Assert.Equal(["default", "site:marlow-fen", "asset:C-204B"], set.Layers.Select(l => l.Name));
        Assert.Same(set, Repo.Shipped.Resolve("marlow-fen", "C-204B"));
        var f = RuleEngine.EvaluateStage(set, Quiet("recip-packaged-lubricated") with { DeclaredServiceClasses = ["hydrocarbon"], Estimated = C(160) }).Find("R-FIELD-HC");
        Assert.Equal("asset:C-204B", f.Layer);
        Assert.Equal(Severity.Warning, f.Severity); // 170 °C limit with a 15 K band: 160 °C is in the band.
        Assert.Throws<ArgumentOutOfRangeException>(() => Repo.Shipped.Resolve("other-site", "C-204B"));
    }

    [Fact]
    public void SpecialService_WhenDisabledWithReasonButNoSignOff_IsError()
    {
        var ex = Assert.Throws<RuleFileException>(() => Merge(Site("  - rule: R-SPECIAL-C2H2\n    disabled: true\n    reason: \"not used here\"")));
        Assert.Equal("overrides.approvedBy", Assert.Single(ex.Errors).Key);
    }

    [Fact]
    public void Override_WhenSignOffHalfGiven_IsMissingKey()
    {
        var ex = Assert.Throws<RuleFileException>(() => Layer("sites/s.yaml", "schemaVersion: 1\nlayer:\n  kind: site\n  id: s\noverrides:\n  - rule: R-SPECIAL-O2\n    limit: 120 °C\n    approvedBy: \"E. Vardy\"\n"));
        var e = Assert.Single(ex.Errors);
        Assert.Equal((RuleFileErrorKind.MissingKey, "overrides[0].approvedOn"), (e.Kind, e.Key));
    }

    [Fact]
    public void CatalogueLimit_WhenEntryAddedBySite_FindingNamesSiteLayer()
    {
        // tarnbrook-pao-150 is defined in the example site layer with ratedMaxDischarge 200 °C.
        var set = Repo.Shipped.Resolve("marlow-fen", null);
        var f = RuleEngine.EvaluateStage(set, Quiet() with { LubricantId = "tarnbrook-pao-150" }).Find("R-LUBE-CLASS");
        Assert.Equal("site:marlow-fen", f.Layer);
        AssertEx.Close(473.15, f.Limit!.Value.SiValue, 1e-9, "limit");
        Assert.Equal("default", RuleEngine.EvaluateStage(set, Quiet() with { LubricantId = "mineral-vdl" }).Find("R-LUBE-CLASS").Layer);
    }

    [Fact]
    public void ShippedExample_WhenAssetResolvedWithoutSite_UsesItsDeclaredSite()
    {
        var set = Repo.Shipped.Resolve(null, "C-204B");
        Assert.Equal(["default", "site:marlow-fen", "asset:C-204B"], set.Layers.Select(l => l.Name));
        Assert.Equal(Repo.Shipped.Resolve("marlow-fen", "C-204B").Digest, set.Digest);
    }
}
