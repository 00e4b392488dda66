using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;

namespace DischargeGuard.Rules.Tests;

public class LoaderErrorTests
{
    // Lines are counted from 1; each case puts its fault at a known line.
    private const string Head = """
        schemaVersion: 1
        layer:
          kind: default
          id: default
        rules:
          - id: R-T1
            title: Test rule
            quantity: isentropic
            severity: violation
            basis: "test"
            message: "test"

        """;

    private static RuleFileError Fails(string yaml, RuleFileErrorKind kind, string file = "default.yaml")
    {
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse(file, yaml));
        var error = ex.Errors.FirstOrDefault(e => e.Kind == kind);
        Assert.True(error is not null, $"Expected a {kind} error, got: {ex.Message}");
        Assert.Contains(file, ex.Message, StringComparison.Ordinal);
        return error!;
    }

    [Fact]
    public void Parse_WhenValid_HasNoErrors()
    {
        var layer = RuleFileParser.Parse("default.yaml", Head.Replace("severity: violation", "severity: info", StringComparison.Ordinal));
        Assert.Single(layer.Rules);
        Assert.Equal(64, layer.Digest.Length);
    }

    [Fact]
    public void Parse_WhenUnknownKey_NamesFileLineColumnAndKey()
    {
        var e = Fails(Head + "    limt: 150 °C\n", RuleFileErrorKind.UnknownKey);
        Assert.Equal(12, e.Line);
        Assert.Equal(5, e.Column);
        Assert.Equal("rules[0].limt", e.Key);
        Assert.Contains("default.yaml:12:5: rules[0].limt", e.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_WhenMissingUnit_IsBadUnitAtTheValue()
    {
        var e = Fails(Head + "    limit: 150\n", RuleFileErrorKind.BadUnit);
        Assert.Equal(12, e.Line);
        Assert.Equal("rules[0].limit", e.Key);
        Assert.Contains("unit is missing", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_WhenDifferenceWrittenInCelsius_IsBadUnit()
    {
        var e = Fails(Head + "    limit: 150 °C\n    warningBand: 10 °C\n", RuleFileErrorKind.BadUnit);
        Assert.Equal(13, e.Line);
        Assert.Equal("rules[0].warningBand", e.Key);
        Assert.Contains("Δ°C", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_WhenTrendRuleHasItsWindow_ReadsIt()
    {
        var yaml = Head.Replace("quantity: isentropic", "quantity: measuredMinusPredictedRise", StringComparison.Ordinal)
            .Replace("severity: violation", "severity: warning", StringComparison.Ordinal)
            + "    limit: 5 K\n    trend:\n      evaluations: 6\n      steadyPressureWithin: 4 %\n";

        var rule = Assert.Single(RuleFileParser.Parse("default.yaml", yaml).Rules);

        Assert.Equal(new TrendSpec(6, 0.04), rule.Trend);
    }

    [Fact]
    public void Parse_WhenTrendRuleHasNoWindow_IsMissingKey()
    {
        var yaml = Head.Replace("quantity: isentropic", "quantity: measuredMinusPredictedRise", StringComparison.Ordinal)
            .Replace("severity: violation", "severity: warning", StringComparison.Ordinal) + "    limit: 5 K\n";

        var e = Fails(yaml, RuleFileErrorKind.MissingKey);

        Assert.Equal("rules[0].trend", e.Key);
    }

    [Theory]
    [InlineData("2", "4 %", "rules[0].trend.evaluations")]
    [InlineData("4.5", "4 %", "rules[0].trend.evaluations")]
    [InlineData("5", "80 %", "rules[0].trend.steadyPressureWithin")]
    public void Parse_WhenTrendWindowIsOutOfRange_NamesTheKey(string evaluations, string steady, string key)
    {
        var yaml = Head.Replace("quantity: isentropic", "quantity: measuredMinusPredictedRise", StringComparison.Ordinal)
            .Replace("severity: violation", "severity: warning", StringComparison.Ordinal)
            + $"    limit: 5 K\n    trend:\n      evaluations: {evaluations}\n      steadyPressureWithin: {steady}\n";

        var e = Fails(yaml, RuleFileErrorKind.BadValue);

        Assert.Equal(key, e.Key);
    }

    [Fact]
    public void Parse_WhenTrendIsGivenForAnotherQuantity_IsBadValue()
    {
        var e = Fails(Head + "    limit: 150 °C\n    trend:\n      evaluations: 5\n      steadyPressureWithin: 5 %\n", RuleFileErrorKind.BadValue);

        Assert.Equal("rules[0].trend", e.Key);
    }

    [Fact]
    public void Parse_WhenWrongType_NamesKey()
    {
        var e = Fails(Head.Replace("title: Test rule", "title: [a, b]", StringComparison.Ordinal), RuleFileErrorKind.WrongType);
        Assert.Equal(7, e.Line);
        Assert.Equal("rules[0].title", e.Key);
    }

    [Fact]
    public void Parse_WhenRequiredKeyMissing_NamesKey()
    {
        var e = Fails(Head.Replace("    basis: \"test\"\n", "", StringComparison.Ordinal), RuleFileErrorKind.MissingKey);
        Assert.Equal(6, e.Line);
        Assert.Equal("rules[0].basis", e.Key);
    }

    [Fact]
    public void Parse_WhenDuplicateId_NamesSecondOccurrence()
    {
        var yaml = Head + """
              - id: R-T1
                title: Again
                quantity: isentropic
                severity: info
                basis: "test"
                message: "test"

            """;
        var e = Fails(yaml.Replace("severity: violation", "severity: info", StringComparison.Ordinal), RuleFileErrorKind.DuplicateId);
        Assert.Equal(12, e.Line);
        Assert.Equal("rules[1].id", e.Key);
        Assert.Contains("rules[0]", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_WhenDuplicateMappingKey_IsSyntaxErrorWithLine()
    {
        var e = Fails(Head + "    title: Twice\n", RuleFileErrorKind.Syntax);
        Assert.Equal(12, e.Line);
        Assert.Contains("Duplicate key", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_WhenBadEnumValue_IsBadValue()
    {
        var e = Fails(Head.Replace("severity: violation", "severity: fatal", StringComparison.Ordinal), RuleFileErrorKind.BadValue);
        Assert.Equal(9, e.Line);
        Assert.Equal("rules[0].severity", e.Key);
    }

    [Fact]
    public void Parse_WhenUnknownQuantity_ListsQuantities()
    {
        var e = Fails(Head.Replace("quantity: isentropic", "quantity: adiabatic", StringComparison.Ordinal), RuleFileErrorKind.BadValue);
        Assert.Equal(8, e.Line);
        Assert.Contains("estimatedUpperBound", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Merge_WhenUnknownReference_NamesRuleAndKey()
    {
        var layer = RuleFileParser.Parse("default.yaml", Head.Replace("severity: violation", "severity: info", StringComparison.Ordinal)
            .Replace("    quantity:", "    appliesTo:\n      compressorTypes: [no-such-type]\n    quantity:", StringComparison.Ordinal));
        var ex = Assert.Throws<RuleFileException>(() => LayerMerger.Merge([layer]));
        var e = Assert.Single(ex.Errors);
        Assert.Equal(RuleFileErrorKind.UnknownReference, e.Kind);
        Assert.Equal("default.yaml", e.File);
        Assert.Equal(6, e.Line);
        Assert.Equal("rules[R-T1].appliesTo.compressorTypes", e.Key);
    }

    [Fact]
    public void Parse_WhenLayerKindDiffersFromPlace_IsBadValue()
    {
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("sites/x.yaml", Head, LayerKind.Site));
        var e = ex.Errors.First(e => e.Key == "layer.kind");
        Assert.Equal(3, e.Line);
        Assert.Equal("sites/x.yaml", e.File);
    }

    [Fact]
    public void Parse_WhenSeveralErrors_ReportsAll()
    {
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("default.yaml", Head + "    limt: 1\n    warningBand: 5 °F\n"));
        Assert.True(ex.Errors.Count >= 2, ex.Message);
    }

    [Fact]
    public void Parse_WhenCommentsAndLayoutChange_DigestUnchanged()
    {
        var a = RuleFileParser.Parse("default.yaml", Head.Replace("severity: violation", "severity: info", StringComparison.Ordinal));
        var b = RuleFileParser.Parse("default.yaml", "# a comment\n" + Head.Replace("severity: violation", "severity:   info   # note", StringComparison.Ordinal));
        Assert.Equal(a.Digest, b.Digest);
        var c = RuleFileParser.Parse("default.yaml", Head.Replace("severity: violation", "severity: info", StringComparison.Ordinal).Replace("Test rule", "Test rule 2", StringComparison.Ordinal));
        Assert.NotEqual(a.Digest, c.Digest);
    }
}
