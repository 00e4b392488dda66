using System.Text;
using System.Text.Json;
using System.Xml.Linq;

namespace DischargeGuard.Cli.Tests;

public class LocalCheckTests
{
    [Fact]
    public async Task Local_WritesOneAuditRecordPerCase_WithTheReportedIdsAndTheCaseRequest()
    {
        using var temp = new TempFolder();
        var audit = temp.File("gate-audit.db");
        var run = await Gate.RunAsync("check", "--local", "--audit-file", audit, "--caller", "ci:marlow-fen-ec", "--format", "json", Repo.Example("c-204b-rerate.yaml"));
        Assert.True(run.ExitCode == 2, run.ToString());

        using var doc = JsonDocument.Parse(run.Stdout);
        var cases = doc.RootElement.GetProperty("cases").EnumerateArray().ToList();
        Assert.Equal(["design", "hot-day", "recycle"], cases.Select(c => c.GetProperty("case").GetString()));
        var reported = cases.Select(c => c.GetProperty("response").GetProperty("id").GetGuid()).ToList();

        var records = AuditFile.Records(audit);
        Assert.Equal(3, records.Count);
        Assert.Equal(reported, records.Select(r => r.Id));
        Assert.All(records, r => Assert.Equal("C-204B", r.Asset));
        Assert.All(records, r => Assert.Equal("ci:marlow-fen-ec", r.Caller));
        Assert.Equal(["pass", "review", "fail"], records.Select(r => r.Verdict));

        // The stored request is the case's own request document: asset and site inherited, no case name.
        using var request = JsonDocument.Parse(records[1].Request);
        Assert.Equal("C-204B", request.RootElement.GetProperty("asset").GetString());
        Assert.Equal("marlow-fen", request.RootElement.GetProperty("site").GetProperty("id").GetString());
        Assert.False(request.RootElement.TryGetProperty("name", out _));
        Assert.Equal("38 °C", request.RootElement.GetProperty("stages")[0].GetProperty("suction").GetProperty("temperature").GetString());

        // A second run appends.
        var again = await Gate.RunAsync("check", "--local", "--audit-file", audit, Repo.Example("c-204b-design.json"));
        Assert.Equal(0, again.ExitCode);
        Assert.Equal(4, AuditFile.Records(audit).Count);
    }

    [Fact]
    public async Task Local_InvalidCase_IsNotRecorded_TheOthersAre()
    {
        using var temp = new TempFolder();
        var audit = temp.File("audit.db");
        var file = temp.Write("c-204b-mixed.yaml", """
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
              - name: no-basis
                gas: {preset: methane}
                stages:
                  - suction: {pressure: 2.5 bar, temperature: 25 °C}
                    discharge: {pressure: 8.2 barg}
                    efficiency: {isentropic: 0.84}
            """);
        var run = await Gate.RunAsync("check", "--local", "--audit-file", audit, file);
        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Contains("c-204b-mixed.yaml:14:19: cases[1].stages[0].suction.pressure: '2.5 bar'", run.Stderr, StringComparison.Ordinal);
        Assert.Single(AuditFile.Records(audit));
    }

    [Fact]
    public async Task Local_AuditFileThatCannotBeWritten_Exits69_WithNoVerdict()
    {
        using var temp = new TempFolder();
        var notADirectory = temp.Write("not-a-directory", "a file");
        var run = await Gate.RunAsync("check", "--local", "--audit-file", Path.Combine(notADirectory, "audit.db"), "--format", "json", Repo.Example("c-204b-design.json"));
        Assert.True(run.ExitCode == 69, run.ToString());
        Assert.Contains("could not record the evaluation, so no result is reported", run.Stderr, StringComparison.Ordinal);
        using var doc = JsonDocument.Parse(run.Stdout);
        Assert.False(doc.RootElement.GetProperty("cases")[0].TryGetProperty("response", out _));
    }

    [Fact]
    public async Task Text_PrintsTheTablePerCaseAndStage_FindingsWithBasis_Ids_Digest_AndCautions()
    {
        using var temp = new TempFolder();
        var run = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("a.db"), Repo.Example("c-204b-rerate.yaml"));
        Assert.Equal(2, run.ExitCode);
        var o = run.Stdout;
        foreach (var expected in new[]
        {
            "Case 'design' — C-204B at marlow-fen — verdict PASS",
            "Case 'hot-day' — C-204B at marlow-fen — verdict REVIEW",
            "Case 'recycle' — C-204B at marlow-fen — verdict FAIL",
            "isentropic T2s", "estimated T2 (band)", "governing limit", "margin", "verdict",
            // A packaged field unit: the process standard's R-API618-GEN does not apply (R-FIELD-HC does); the recycle
            // case fails on the HNBR seal's 150 °C (seal supplier table).
            "violation    R-ELASTOMER",
            // C-204B sets R-FIELD-HC to 170 °C: the basis shown is the asset's, not the default's 177 °C one.
            "basis: asset:C-204B: cylinder manufacturer's stated maximum discharge temperature",
            "layers applied: default ← site:marlow-fen ← asset:C-204B",
            "not checked  R-DEVIATION",
            "Stage 1 model: ",
            "Peng-Robinson",
            "Result: fail (exit 2)",
            "Cautions:",
            DischargeGuard.Evaluation.Pipeline.Cautions.DeferToCodes,
            DischargeGuard.Evaluation.Pipeline.Cautions.KeepProtection,
        })
        {
            Assert.Contains(expected, o, StringComparison.Ordinal);
        }

        var ids = AuditFile.Records(temp.File("a.db")).Select(r => r.Id.ToString()).ToList();
        Assert.Equal(3, ids.Count);
        Assert.All(ids, id => Assert.Contains("evaluation " + id, o, StringComparison.Ordinal));
        Assert.Contains("rules " + AuditFile.Records(temp.File("a.db"))[0].Digest, o, StringComparison.Ordinal);
        Assert.Equal(string.Empty, run.Stderr);
    }

    [Fact]
    public async Task Text_WhenNothingIsEvaluated_StillPrintsTheCautions()
    {
        using var temp = new TempFolder();
        var run = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("a.db"), temp.File("missing.yaml"));
        Assert.Equal(64, run.ExitCode);
        Assert.Contains(DischargeGuard.Evaluation.Pipeline.Cautions.DeferToCodes, run.Stdout, StringComparison.Ordinal);
        Assert.Contains("missing.yaml: No such file.", run.Stderr, StringComparison.Ordinal);
        Assert.False(File.Exists(temp.File("a.db")));
    }

    [Fact]
    public async Task Json_CarriesTheResponseDocumentsAsRecorded()
    {
        using var temp = new TempFolder();
        var run = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("a.db"), "--format", "json", Repo.Example("c-204b-design.json"));
        Assert.Equal(0, run.ExitCode);
        using var doc = JsonDocument.Parse(run.Stdout);
        Assert.Equal(0, doc.RootElement.GetProperty("exitCode").GetInt32());
        var response = doc.RootElement.GetProperty("cases")[0].GetProperty("response");
        Assert.Equal("pass", response.GetProperty("verdict").GetString());
        Assert.Equal(2, response.GetProperty("stages").GetArrayLength());
        Assert.NotEmpty(response.GetProperty("cautions").EnumerateArray());
        Assert.NotEmpty(doc.RootElement.GetProperty("cautions").EnumerateArray());
    }

    [Fact]
    public async Task JUnit_HasOneTestCasePerCaseStageAndRule_ViolationsFail_WarningsAndUncheckedSkip()
    {
        using var temp = new TempFolder();
        var junitFile = temp.File("gate.junit.xml");
        var run = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("a.db"), "--format", "junit", "--junit-file", junitFile, "--", Repo.Example("c-204b-rerate.yaml"));
        Assert.Equal(2, run.ExitCode);
        var xml = XDocument.Parse(run.Stdout);
        Assert.Equal(File.ReadAllText(junitFile, Encoding.UTF8).Trim(), run.Stdout.Trim());

        var json = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("b.db"), "--format", "json", Repo.Example("c-204b-rerate.yaml"));
        using var doc = JsonDocument.Parse(json.Stdout);
        var responses = doc.RootElement.GetProperty("cases").EnumerateArray().Select(c => c.GetProperty("response")).ToList();
        var stages = responses.SelectMany(r => r.GetProperty("stages").EnumerateArray()).ToList();
        // One per finding and rule not checked, plus each case's "rule layers" test case.
        var expectedCases = stages.Sum(s => s.GetProperty("findings").GetArrayLength() + s.GetProperty("notChecked").GetArrayLength()) + responses.Count;
        var violations = stages.Sum(s => s.GetProperty("findings").EnumerateArray().Count(f => f.GetProperty("severity").GetString() == "violation"));

        var testcases = xml.Descendants("testcase").ToList();
        Assert.Equal(expectedCases, testcases.Count);
        Assert.Equal(3, xml.Root!.Elements("testsuite").Count());
        Assert.Equal(violations, testcases.Count(t => t.Element("failure") is not null));
        Assert.Equal(violations.ToString(System.Globalization.CultureInfo.InvariantCulture), xml.Root.Attribute("failures")!.Value);
        Assert.Contains(testcases, t => t.Attribute("classname")!.Value.Contains("recycle.stage", StringComparison.Ordinal) && t.Attribute("name")!.Value == "R-ELASTOMER" && t.Element("failure") is not null);
        Assert.Contains(testcases, t => t.Element("skipped")?.Attribute("message")?.Value.StartsWith("Review needed", StringComparison.Ordinal) == true);
        Assert.Contains(testcases, t => t.Element("skipped")?.Attribute("message")?.Value.StartsWith("Not checked", StringComparison.Ordinal) == true);
        Assert.Contains(DischargeGuard.Evaluation.Pipeline.Cautions.DeferToCodes, run.Stdout, StringComparison.Ordinal);

        // Words match the verdict: a passing test case never says "exceeds" (it said "exceeds the design limit" before).
        foreach (var passing in testcases.Where(t => t.Element("failure") is null && t.Element("skipped") is null && t.Element("error") is null))
        {
            var output = passing.Element("system-out")?.Value ?? string.Empty;
            Assert.DoesNotContain("exceeds", output, StringComparison.Ordinal);
        }

        Assert.Contains(testcases, t => (t.Element("system-out")?.Value ?? string.Empty).StartsWith("pass:", StringComparison.Ordinal)
            && t.Element("system-out")!.Value.Contains("Passes:", StringComparison.Ordinal));
    }

    [Fact]
    public async Task JUnit_AnUnreadableFileAndAnInvalidCase_AreErrorTestCases()
    {
        using var temp = new TempFolder();
        var broken = temp.Write("broken.yaml", "asset: C-204B\nstages: [\n");
        var run = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("a.db"), "--format", "junit", broken, temp.Path);
        Assert.Equal(64, run.ExitCode);
        var xml = XDocument.Parse(run.Stdout);
        Assert.Equal(2, xml.Descendants("testcase").Count(t => t.Element("error") is not null));
        Assert.Contains("This is a directory", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Envelope_PrintsTheEnvelopePerCaseAndStage()
    {
        using var temp = new TempFolder();
        var run = await Gate.RunAsync("envelope", "--local", "--audit-file", temp.File("a.db"), Repo.Example("c-204b-design.json"));
        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Contains("Stage 1:", run.Stdout, StringComparison.Ordinal);
        Assert.Contains("Stage 2:", run.Stdout, StringComparison.Ordinal);
        Assert.Matches("governing rule R-[A-Z0-9-]+: highest discharge pressure", run.Stdout);
        // Natural gas carries no oxidant: the oil-autoignition rule no longer governs it.
        Assert.DoesNotContain("governing rule R-AIT", run.Stdout, StringComparison.Ordinal);
        Assert.Contains("max P2/P1", run.Stdout, StringComparison.Ordinal);
        Assert.Contains(DischargeGuard.Evaluation.Pipeline.Cautions.KeepProtection, run.Stdout, StringComparison.Ordinal);
        Assert.Single(AuditFile.Records(temp.File("a.db")));

        var json = await Gate.RunAsync("envelope", "--local", "--audit-file", temp.File("a.db"), "--format", "json", Repo.Example("c-204b-design.json"));
        using var doc = JsonDocument.Parse(json.Stdout);
        var envelope = doc.RootElement.GetProperty("cases")[0].GetProperty("stages")[0].GetProperty("envelope");
        Assert.StartsWith("R-", envelope.GetProperty("governingRule").GetString(), StringComparison.Ordinal);
        Assert.NotEqual("R-AIT", envelope.GetProperty("governingRule").GetString());
        Assert.Equal("kPa", envelope.GetProperty("maxDischargePressure").GetProperty("unit").GetString());
    }

    [Fact]
    public async Task ExpectRulesDigest_MatchingTheActiveRules_Passes_AnotherFailsWith64AndRecordsNothing()
    {
        using var temp = new TempFolder();
        var rules = await Gate.RunAsync("rules", "check", Repo.Rules, "--site", "marlow-fen", "--asset", "C-204B");
        var digest = rules.Stdout.Split('\n').Single(l => l.StartsWith("digest: ", StringComparison.Ordinal))["digest: ".Length..].Split(' ')[0].Trim();

        var approved = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("a.db"), "--expect-rules-digest", digest, Repo.Example("c-204b-design.json"));
        Assert.True(approved.ExitCode == 0, approved.ToString());

        var other = new string('0', 64);
        var refused = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("b.db"), "--expect-rules-digest", other, Repo.Example("c-204b-design.json"));
        Assert.True(refused.ExitCode == 64, refused.ToString());
        Assert.Contains($"have digest {digest}, which is not the approved set ({other})", refused.Stderr, StringComparison.Ordinal);
        Assert.Empty(AuditFile.Records(temp.File("b.db")));
    }

    [Fact]
    public async Task GivenRulesDirectory_IsUsed_AndABrokenOneIsInvalidInputNamingFileAndLine()
    {
        using var temp = new TempFolder();
        var rules = temp.File("rules");
        Repo.CopyDirectory(Repo.Rules, rules);
        var ok = await Gate.RunAsync("check", "--local", "--rules", rules, "--audit-file", temp.File("a.db"), Repo.Example("c-204b-design.json"));
        Assert.True(ok.ExitCode == 0, ok.ToString());
        Assert.Contains("rules " + rules, ok.Stdout, StringComparison.Ordinal);

        File.AppendAllText(Path.Combine(rules, "sites", "marlow-fen.yaml"), "\n  - rule: R-API618-GEN\n    limit: 160 °C\n");
        var broken = await Gate.RunAsync("check", "--local", "--rules", rules, "--audit-file", temp.File("a.db"), Repo.Example("c-204b-design.json"));
        Assert.True(broken.ExitCode == 64, broken.ToString());
        Assert.Contains("sites/marlow-fen.yaml:", broken.Stderr, StringComparison.Ordinal);
        Assert.Single(AuditFile.Records(temp.File("a.db")));
    }
}
