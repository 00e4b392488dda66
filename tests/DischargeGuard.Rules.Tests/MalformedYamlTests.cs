using System.Text;
using CsCheck;
using DischargeGuard.Rules.Loading;

namespace DischargeGuard.Rules.Tests;

/// <summary>Malformed YAML that stops the YAML reader itself (not with a YAML error): still a syntax error with a place.</summary>
public class MalformedYamlTests
{
    [Fact]
    public void Parse_WhenAPieceOfTheDefaultFileIsRepeatedInsideAFlowList_IsASyntaxErrorWithALine()
    {
        // Found by the API's generated rule-file test: 146 bytes of default.yaml repeated from inside a flow sequence.
        // Located by content (R-AIT's title), so edits elsewhere in the file do not move the case.
        var original = File.ReadAllBytes(Path.Combine(Repo.Root, "rules", "default.yaml"));
        var at = original.AsSpan().IndexOf("oignition temperature, derated for pressure\n    appliesTo:\n      notCompressorTypes: ["u8);
        Assert.True(at > 0, "R-AIT's title is no longer in default.yaml; update the case");
        var length = Math.Min(146, original.Length - at);
        var yaml = Encoding.UTF8.GetString([.. original[..(at + length)], .. original[at..]]);

        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("default.yaml", yaml));

        var error = Assert.Single(ex.Errors);
        Assert.Equal(RuleFileErrorKind.Syntax, error.Kind);
        Assert.True(error.Line >= 1);
        Assert.Contains("default.yaml", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_WhenAMappingKeyIsEmptyAndTheKeyRepeats_IsASyntaxErrorNotACrash()
    {
        // Found by the API's generated rule-file test (61 bytes of default.yaml repeated inside R-VALVE-MAT): the YAML
        // reader stopped with an ArgumentException ("the current event is of an unsupported type"), which answered 500.
        const string yaml = """
            schemaVersion: 1
            rules:
              - id: R-VALVE-MAT
                appliesTo:
                  : Valve plate material continuous limit
                appliesTo:
                  compressorTypes: [recip-lubricated]
            """;

        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("default.yaml", yaml));

        var error = Assert.Single(ex.Errors);
        Assert.Equal(RuleFileErrorKind.Syntax, error.Kind);
        Assert.True(error.Line >= 1);
    }

    [Theory]
    [InlineData("rules: [a, {b: [c, d}")]
    [InlineData("a: [\"x\n")]
    [InlineData("{{{{")]
    public void Parse_WhenFlowCollectionsAreBroken_IsASyntaxError(string yaml)
    {
        var ex = Assert.Throws<RuleFileException>(() => RuleFileParser.Parse("default.yaml", yaml));

        Assert.Contains(ex.Errors, e => e.Kind == RuleFileErrorKind.Syntax);
    }
}

/// <summary>
/// Generated mutations of the shipped default file straight into the loader (CsCheck): whatever the bytes, the loader
/// answers a layer or a <see cref="RuleFileException"/> with located errors, never another exception.
/// </summary>
public class LoaderRobustnessTests
{
    private static readonly string Original = File.ReadAllText(Path.Combine(Repo.Root, "rules", "default.yaml"));

    [Fact]
    public void Parse_WhenTheDefaultFileIsMutated_OnlyEverThrowsRuleFileException()
    {
        Gen.Select(Gen.Int[0, 3], Gen.Int[0, Original.Length - 1], Gen.Int[1, 200], Gen.Char['\u0009', '\u00ff'])
            .Sample((kind, at, length, c) =>
            {
                var n = Math.Min(length, Original.Length - at);
                var yaml = kind switch
                {
                    0 => Original[..at] + c + Original[(at + 1)..],
                    1 => Original[..at] + "\t" + Original[at..],
                    2 => Original[..(at + n)] + Original[at..],
                    _ => Original[..at] + Original[(at + n)..],
                };
                try
                {
                    RuleFileParser.Parse("default.yaml", yaml);
                }
                catch (RuleFileException ex)
                {
                    Assert.All(ex.Errors, e => Assert.True(e.Line >= 1 && e.Message.Length > 0));
                }
            }, iter: 1500, threads: 1, print: t => $"kind {t.Item1} at {t.Item2} length {t.Item3} char U+{(int)t.Item4:X4}");
    }
}
