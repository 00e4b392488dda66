namespace DischargeGuard.Cli.Tests;

public class InputErrorTests
{
    private static async Task<GateRun> CheckAsync(TempFolder temp, string name, string content)
    {
        var file = temp.Write(name, content);
        return await Gate.RunAsync("check", "--local", "--audit-file", temp.File("audit.db"), file);
    }

    [Fact]
    public async Task UnknownField_NamesFileLineColumnAndFieldPath_AndWhatIsAccepted()
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "typo.yaml", """
            asset: C-204B
            site: {id: marlow-fen, elevation: 4 m}
            cases:
              - name: design
                gas: {preset: methane}
                stages:
                  - suction: {pressure: 2.5 barg, temperature: 25 °C}
                    dischage: {pressure: 8.2 barg}
            """);
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("typo.yaml:8:9: cases[0].stages[0].dischage: Unknown field 'dischage'. Did you mean 'discharge'? Accepted here: calibration, discharge, efficiency,", run.Stderr, StringComparison.Ordinal);
        Assert.Empty(AuditFile.Records(temp.File("audit.db")));
    }

    [Fact]
    public async Task WrongType_NamesTheFieldAndTheExpectedType()
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "type.yaml", """
            asset: C-204B
            site: {id: marlow-fen, elevation: 4 m}
            gas: {preset: methane}
            stages:
              - suction: {pressure: 2.5 barg, temperature: 25 °C}
                discharge: {pressure: 8.2 barg}
                efficiency: {isentropic: "0.84"}
            """);
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("type.yaml:7:18: stages[0].efficiency.isentropic: Expected a number here, found the string '0.84'.", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ValidatorAndPipelineErrors_AreLocatedInTheCaseThatCausedThem()
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "values.yaml", """
            asset: C-204B
            site: {id: marlow-fen}
            cases:
              - name: design
                gas: {preset: methane}
                stages:
                  - suction: {pressure: 2.5 barg, temperature: 25 °C}
                    discharge: {pressure: 8.2 barg}
                    efficiency: {isentropic: 0.84}
              - name: gauge-without-barometer
                gas: {preset: methane}
                stages:
                  - suction: {pressure: 2.5 barg, temperature: 25 °C}
                    discharge: {pressure: 8.2 bara}
                    efficiency: {isentropic: 1.5}
            """);
        Assert.Equal(64, run.ExitCode);
        // No elevation or barometer: both cases' gauge pressures are refused, each at its own line.
        Assert.Contains("values.yaml:7:19: cases[0].stages[0].suction.pressure:", run.Stderr, StringComparison.Ordinal);
        Assert.Contains("values.yaml:13:19: cases[1].stages[0].suction.pressure:", run.Stderr, StringComparison.Ordinal);
        Assert.Contains("values.yaml:15:22: cases[1].stages[0].efficiency.isentropic: An efficiency is a fraction", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task YamlSyntaxError_NamesLineAndColumn()
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "broken.yaml", "asset: C-204B\ngas: {preset: methane\nstages: []\n");
        Assert.Equal(64, run.ExitCode);
        Assert.Matches(@"broken\.yaml:2:\d+: Not valid YAML", run.Stderr);
    }

    [Fact]
    public async Task JsonSyntaxError_NamesLineAndColumn()
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "broken.json", "{\n  \"asset\": \"C-204B\",\n  \"gas\": {\"preset\": \"methane\",}\n}\n");
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("broken.json:3:", run.Stderr, StringComparison.Ordinal);
        Assert.Contains("Not valid JSON", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task JsonProposal_ErrorsNameJsonLines()
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "c-204b.json", """
            {
              "asset": "C-204B",
              "site": {"id": "marlow-fen", "elevation": "4 m"},
              "cases": [
                {"name": "design", "gas": {"preset": "methane"},
                 "stages": [{"suction": {"pressure": "2.5 barg", "temperature": "25 °C"},
                             "discharge": {"pressure": "8.2 barg"}, "efficency": {"isentropic": 0.84}}]}
              ]
            }
            """);
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("c-204b.json:7:57: cases[0].stages[0].efficency: Unknown field 'efficency'. Did you mean 'efficiency'?", run.Stderr, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("cases: []\n", "cases", "'cases' is a list of at least one case")]
    [InlineData("asset: C-204B\nsite: {id: marlow-fen}\ncases:\n  - gas: {preset: methane}\n", "cases[0].name", "Each case has a name")]
    [InlineData("asset: C-204B\ncases:\n  - name: a\n    asset: K-1\n", "cases[0].asset", "given once, at the top of the proposal")]
    [InlineData("asset: C-204B\ngas: &g {preset: methane}\n", "gas", "YAML anchors")]
    [InlineData("asset: C-204B\nasset: C-204A\n", "asset", "given twice")]
    [InlineData("- 1\n- 2\n", "", "A proposal is an object")]
    [InlineData("asset: C-204B\nstage: []\n", "stage", "Did you mean 'stages'?")]
    public async Task ProposalShapeErrors_AreInvalidInput(string yaml, string field, string message)
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "shape.yaml", yaml);
        Assert.Equal(64, run.ExitCode);
        Assert.Contains(message, run.Stderr, StringComparison.Ordinal);
        if (field.Length > 0)
        {
            Assert.Contains(": " + field + ": ", run.Stderr, StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task DuplicateCaseNames_AreRefused()
    {
        using var temp = new TempFolder();
        var run = await CheckAsync(temp, "dup.yaml", """
            asset: C-204B
            site: {id: marlow-fen, elevation: 4 m}
            cases:
              - name: design
                gas: {preset: methane}
                stages:
                  - suction: {pressure: 2.5 barg, temperature: 25 °C}
                    discharge: {pressure: 8.2 barg}
                    efficiency: {isentropic: 0.84}
                    equipment: {compressorType: recip-packaged-lubricated, lubricant: pao-dab}
              - name: design
                gas: {preset: methane}
                stages:
                  - suction: {pressure: 2.5 barg, temperature: 25 °C}
                    discharge: {pressure: 8.2 barg}
                    efficiency: {isentropic: 0.84}
            """);
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("dup.yaml:11:5: cases[1].name: The case name 'design' is also used by cases[0]", run.Stderr, StringComparison.Ordinal);
        Assert.Single(AuditFile.Records(temp.File("audit.db")));
    }

    // 40 000 nested '[' (80 KB with the closing ones): read by recursion, this depth overflows the stack, which kills
    // the process instead of failing the file.
    private const int Deep = 40_000;

    [Theory]
    [InlineData("deep.yaml", "asset: C-204B\ngas: ")]
    [InlineData("deep.json", "{\"asset\": \"C-204B\", \"gas\": ")]
    public async Task DeeplyNestedProposal_Exits64NamingFileLineAndColumn(string name, string prefix)
    {
        using var temp = new TempFolder();
        var json = name.EndsWith(".json", StringComparison.Ordinal);
        var run = await CheckAsync(temp, name, prefix + new string('[', Deep) + new string(']', Deep) + (json ? "}" : "\n"));
        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Matches(name.Replace(".", @"\.", StringComparison.Ordinal) + (json ? ":1:" : ":2:") + @"\d+: ", run.Stderr);
        Assert.Matches("(?i)deeper|depth", run.Stderr);
        Assert.Empty(AuditFile.Records(temp.File("audit.db")));
    }

    [Fact]
    public async Task DeeplyNestedRuleFile_RulesCheckExits64NamingFileLineAndColumn()
    {
        using var temp = new TempFolder();
        var rules = temp.File("rules");
        Repo.CopyDirectory(Repo.Rules, rules);
        File.WriteAllText(Path.Combine(rules, "sites", "marlow-fen.yaml"), new string('[', Deep) + new string(']', Deep) + "\n");

        var run = await Gate.RunAsync("rules", "check", rules);

        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Contains("sites/marlow-fen.yaml:1:33: ", run.Stderr, StringComparison.Ordinal);
        Assert.Contains("nests deeper than 32", run.Stderr, StringComparison.Ordinal);
    }
}
