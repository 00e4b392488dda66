using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;
using static DischargeGuard.Rules.Tests.Facts;

namespace DischargeGuard.Rules.Tests;

/// <summary>
/// Limits stated the way their source states them: <c>150 °C (300 °F)</c>, <c>350 °F</c>. The first reading is checked;
/// both are shown. Conversions: °F = 1.8·°C + 32 and K = °C + 273.15 (NIST SP 811, §B.9 and Appendix B.8).
/// </summary>
public class StatedLimitTests
{
    // One rule whose limit line is the file's 9th line, so refusals can be located.
    private static string File(string limit, string quantity = "estimated") => $"""
        schemaVersion: 1
        layer:
          kind: default
          id: default
        rules:
          - id: R-T1
            title: Test rule
            quantity: {quantity}
            limit: {limit}
            severity: violation
            basis: "test"
            message: "test"

        """;

    private static RuleLimit LimitOf(string limit, string quantity = "estimated") =>
        RuleFileParser.Parse("default.yaml", File(limit, quantity)).Rules[0].Limit!;

    private static RuleFileError Refused(string limit, string quantity = "estimated")
    {
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("default.yaml", File(limit, quantity)));
        // The refused limit, then (as for any unreadable limit) the rule's complaint that it has none.
        var e = ex.Errors[0];
        Assert.Equal(("default.yaml", 9L, "rules[0].limit"), (e.File, e.Line, e.Key));
        Assert.All(ex.Errors.Skip(1), other => Assert.Equal(RuleFileErrorKind.MissingKey, other.Kind));
        return e;
    }

    [Fact]
    public void Parse_WhenLimitGivesTheSourcesEquivalent_ChecksTheFirstAndKeepsBoth()
    {
        // API 618 5th ed. "150 °C (300 °F)" — from memory — verify ((c) high, as rules/default.yaml marks it).
        var limit = LimitOf("150 °C (300 °F)");
        AssertEx.Close(423.15, limit.Absolute!.Value, 1e-9, "150 °C in K");
        Assert.Equal([new StatedValue(150, "°C"), new StatedValue(300, "°F")], limit.AsStated);
        Assert.Equal("150 °C (300 °F)", LimitText.Stated(limit));
    }

    [Fact]
    public void Parse_WhenLimitIsStatedInFahrenheitOnly_ChecksThatValueExactly()
    {
        // Bloch & Hoefner (1996) p.382: 350 °F. (350 − 32)/1.8 = 176.666… °C = 449.81666… K, not 177 °C = 450.15 K.
        var limit = LimitOf("350 °F");
        AssertEx.Close(449.816666666667, limit.Absolute!.Value, 1e-9, "350 °F in K");
        Assert.Equal([new StatedValue(350, "°F")], limit.AsStated);
        Assert.Equal("350 °F", LimitText.Stated(limit));
    }

    [Fact]
    public void Parse_WhenFahrenheitComesFirst_TheFahrenheitValueIsChecked()
    {
        // 350 °F (177 °C): 177 °C is 0.33 K from 350 °F, well inside 1 %; the check uses 350 °F.
        var limit = LimitOf("350 °F (177 °C)");
        AssertEx.Close(449.816666666667, limit.Absolute!.Value, 1e-9, "350 °F in K");
        Assert.Equal([new StatedValue(350, "°F"), new StatedValue(177, "°C")], limit.AsStated);
    }

    [Fact]
    public void Parse_WhenUnitsAreSpelledInAscii_StatedUnitsAreTheSymbols()
    {
        var limit = LimitOf("150 degC (300 degF)");
        Assert.Equal([new StatedValue(150, "°C"), new StatedValue(300, "°F")], limit.AsStated);
        Assert.Equal(LimitOf("150 °C (300 °F)"), limit);
    }

    [Fact]
    public void Parse_WhenADifferenceLimitGivesTheSourcesEquivalent_KeepsBoth()
    {
        // 85 K (153 °F) adiabatic rise: API 618-2007 §5.7.2 as restated in a project specification ((a)); 85 × 1.8 = 153.
        var limit = LimitOf("85 K (153 Δ°F)", "temperatureRise");
        AssertEx.Close(85.0, limit.Absolute!.Value, 1e-9, "85 K");
        Assert.Equal([new StatedValue(85, "K"), new StatedValue(153, "Δ°F")], limit.AsStated);
    }

    [Fact]
    public void Parse_WhenEquivalentIsJustInsideOnePercent_IsAccepted()
    {
        // 309 °F = 153.89 °C: 3.89 K from 423.15 K is 0.92 %.
        Assert.Equal(2, LimitOf("150 °C (309 °F)").AsStated.Count);
    }

    [Fact]
    public void Parse_WhenEquivalentHasNoUnit_IsRefusedSayingSo()
    {
        var e = Refused("150 °C (300)");
        Assert.Equal(RuleFileErrorKind.BadUnit, e.Kind);
        Assert.Contains("no unit", e.Message, StringComparison.Ordinal);
        Assert.Contains("'150 °C (300 °F)'", e.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("150 °C (300 K)", "both units are metric")]
    [InlineData("150 °C (150 degC)", "both units are metric")]
    [InlineData("300 °F (759.67 °R)", "both units are US customary")]
    public void Parse_WhenBothReadingsAreInOneUnitSystem_IsRefused(string limit, string expected)
    {
        var e = Refused(limit);
        Assert.Equal(RuleFileErrorKind.BadValue, e.Kind);
        Assert.Contains(expected, e.Message, StringComparison.Ordinal);
    }

    [Theory]
    // 310 °F = 154.44 °C: 4.44 K from 423.15 K is 1.05 %.
    [InlineData("150 °C (310 °F)", "1.05 % away")]
    // A typo: 320 °F = 160 °C, 10 K from 423.15 K is 2.36 %.
    [InlineData("150 °C (320 °F)", "2.36 % away")]
    // The two readings swapped in meaning: 150 °C is 26.67 K below 350 °F = 449.82 K, 5.93 %.
    [InlineData("350 °F (150 °C)", "5.93 % away")]
    public void Parse_WhenEquivalentIsMoreThanOnePercentAway_IsRefusedWithBothValues(string limit, string expected)
    {
        var e = Refused(limit);
        Assert.Equal(RuleFileErrorKind.BadValue, e.Kind);
        Assert.Contains(expected, e.Message, StringComparison.Ordinal);
        Assert.Contains("within 1 %", e.Message, StringComparison.Ordinal);
        Assert.Contains("Check both numbers against the source", e.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("150 °C (300 °F) (302 °F)")]
    [InlineData("150 °C (300 °F")]
    [InlineData("150 °C 300 °F)")]
    [InlineData("(300 °F)")]
    [InlineData("150 °C (300 °F) extra")]
    [InlineData("150 °C ((300 °F))")]
    public void Parse_WhenShapeIsNotOneQuantityAndOneParenthesisedEquivalent_IsRefused(string limit)
    {
        var e = Refused(limit);
        Assert.Equal(RuleFileErrorKind.BadValue, e.Kind);
        Assert.Contains("one pair of parentheses", e.Message, StringComparison.Ordinal);
    }

    [Theory]
    // °F alone names a point on a scale; a difference is written Δ°F (docs/units.md).
    [InlineData("85 K (153 °F)", "temperatureRise", "Δ°F")]
    // The parenthesised value is below absolute zero.
    [InlineData("0 K (-500 °F)", "estimated", "below absolute zero")]
    public void Parse_WhenTheEquivalentIsNotAValidReading_IsRefusedNamingIt(string limit, string quantity, string expected)
    {
        var e = Refused(limit, quantity);
        Assert.Contains(expected, e.Message, StringComparison.Ordinal);
        Assert.Contains($"In '{limit}'", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_WhenARatioLimitHasParentheses_IsRefused()
    {
        Assert.Equal(RuleFileErrorKind.WrongType, Refused("4.0 (4.0)", "pressureRatio").Kind);
    }

    [Fact]
    public void LayerDigest_WhenOnlyTheStatedEquivalentChanges_Changes()
    {
        var plain = RuleFileParser.Parse("default.yaml", File("150 °C"));
        var stated = RuleFileParser.Parse("default.yaml", File("150 °C (300 °F)"));
        var otherEquivalent = RuleFileParser.Parse("default.yaml", File("150 °C (302 °F)"));
        var respelled = RuleFileParser.Parse("default.yaml", File("150 degC (300 ℉)"));
        Assert.Equal(3, new[] { plain.Digest, stated.Digest, otherEquivalent.Digest }.Distinct().Count());
        Assert.Equal(stated.Digest, respelled.Digest);
    }

    [Fact]
    public void SiteOverride_WhenStatedInTwoUnits_IsCarriedToTheFinding()
    {
        // 145 °C = 293 °F exactly; a site tightening R-API618-GEN as its purchase specification states it.
        var site = Layer("sites/s.yaml", "schemaVersion: 1\nlayer:\n  kind: site\n  id: s\noverrides:\n  - rule: R-API618-GEN\n    limit: 145 °C (293 °F)\n");
        var set = LayerMerger.Merge([DefaultLayer, site]);
        var rule = set.RulesById["R-API618-GEN"];
        Assert.Equal("145 °C (293 °F)", rule.Chain[1].Limit);
        Assert.StartsWith("tightened the limit from 150 °C (300 °F) to 145 °C (293 °F)", rule.Chain[1].Change, StringComparison.Ordinal);
        var f = RuleEngine.EvaluateStage(set, Quiet() with { IsentropicInternal = C(146) }).Find("R-API618-GEN");
        Assert.Equal([new StatedValue(145, "°C"), new StatedValue(293, "°F")], f.LimitAsStated);
        Assert.Equal(Severity.Violation, f.Severity);
    }

    [Fact]
    public void SiteOverride_WhenEquivalentIsInTheSameSystem_IsRefusedAtTheSiteFilesLine()
    {
        var site = Layer("sites/s.yaml", "schemaVersion: 1\nlayer:\n  kind: site\n  id: s\noverrides:\n  - rule: R-API618-GEN\n    limit: 145 °C (418.15 K)\n");
        var ex = Assert.Throws<RuleFileException>(() => LayerMerger.Merge([DefaultLayer, site]));
        var e = Assert.Single(ex.Errors);
        Assert.Equal(("sites/s.yaml", 7L), (e.File, e.Line));
        Assert.Contains("both units are metric", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Finding_WhenShippedApi618Rules_CarryTheStandardsReadings()
    {
        // API 618 5th ed.: 150 °C (300 °F), hydrogen-rich 135 °C (275 °F) — from memory — verify ((c) high).
        var gen = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { IsentropicInternal = C(148) }).Find("R-API618-GEN");
        Assert.Equal([new StatedValue(150, "°C"), new StatedValue(300, "°F")], gen.LimitAsStated);
        AssertEx.Close(423.15, gen.Limit!.Value.SiValue, 1e-9, "verdict limit stays 150 °C in K");
        Assert.Equal(Severity.Warning, gen.Severity); // 148 °C is inside the 5 K band below the checked 150 °C.

        var h2 = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { IsentropicInternal = C(100), GasMolarMass = UnitsNet.MolarMass.FromGramsPerMole(8) }).Find("R-API618-H2");
        Assert.Equal([new StatedValue(135, "°C"), new StatedValue(275, "°F")], h2.LimitAsStated);
        Assert.Equal("150 °C (300 °F)", LimitText.Of(Repo.Defaults.RulesById["R-API618-GEN"]));
    }

    [Fact]
    public void Finding_WhenShippedBlochAndHoefnerLimit_ShowsFahrenheitAndChecksIt()
    {
        // Bloch & Hoefner (1996) p.382: 350 °F = 176.67 °C. 176.7 °C is beyond it (it was inside the old 177 °C).
        var f = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { Estimated = C(176.7), DeclaredServiceClasses = ["air"] }).Find("R-AIR-RECIP");
        Assert.Equal([new StatedValue(350, "°F")], f.LimitAsStated);
        AssertEx.Close(449.816666666667, f.Limit!.Value.SiValue, 1e-9, "350 °F in K");
        Assert.Equal(Severity.Violation, f.Severity);
        Assert.Equal([new StatedValue(350, "°F")], Repo.Defaults.RulesById["R-FIELD-HC"].Limit!.AsStated);
    }

    [Fact]
    public void Finding_WhenLimitIsDerivedOrARatio_HasNoStatedReadings()
    {
        var result = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { LubricantId = "mineral-vdl", ValveMaterialId = "peek" });
        // Derived from the lubricant's class rating and the valve material's catalogue limit; R-RATIO is a plain ratio.
        Assert.Empty(result.Find("R-LUBE-CLASS").LimitAsStated);
        Assert.Empty(result.Find("R-VALVE-MAT").LimitAsStated);
        Assert.Empty(result.Find("R-RATIO").LimitAsStated);
        Assert.NotNull(result.Find("R-RATIO").Limit);
    }

    [Fact]
    public void ShippedDefaults_EveryAbsoluteTemperatureLimit_HasItsStatedReadings()
    {
        // Every absolute limit in the shipped file carries what was written; the first reading is the checked value.
        var absolute = Repo.Defaults.Rules.Where(r => r.Limit is { Source: LimitSource.Absolute } && r.Quantities[0].Dimension() != QuantityDimension.Ratio).ToList();
        Assert.NotEmpty(absolute);
        foreach (var r in absolute)
        {
            Assert.NotEmpty(r.Limit!.AsStated);
            var first = r.Limit.AsStated[0];
            var si = first.Unit switch
            {
                "°C" => first.Value + 273.15,
                "°F" => (first.Value - 32) / 1.8 + 273.15,
                "Δ°F" => first.Value / 1.8,
                _ => first.Value, // K, for an absolute temperature or a difference
            };
            AssertEx.Close(si, r.Limit.Absolute!.Value, 1e-9, r.Id);
        }
    }
}
