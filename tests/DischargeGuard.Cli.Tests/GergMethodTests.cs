using System.Text.Json;

namespace DischargeGuard.Cli.Tests;

/// <summary>The proposal's <c>method</c> reaches the evaluation and the report names the model that decided and why.</summary>
public class GergMethodTests
{
    private const string Proposal = """
        asset: C-204B
        site: {id: marlow-fen, elevation: 4 m}
        cases:
          - name: gerg
            method: gerg-2008
            gas: {preset: methane}
            stages:
              - suction: {pressure: 25 bara, temperature: 30 °C}
                discharge: {pressure: 60 bara}
                efficiency: {isentropic: 0.84}
                equipment: {compressorType: recip-packaged-lubricated, lubricant: pao-dab}
          - name: peng-robinson
            method: real-gas
            gas: {preset: methane}
            stages:
              - suction: {pressure: 25 bara, temperature: 30 °C}
                discharge: {pressure: 60 bara}
                efficiency: {isentropic: 0.84}
                equipment: {compressorType: recip-packaged-lubricated, lubricant: pao-dab}
        """;

    [Fact]
    public async Task Check_WhenAProposalNamesTheMethod_EachCaseUsesItAndTheTextSaysWhich()
    {
        using var temp = new TempFolder();
        var file = temp.Write("c-204b-methods.yaml", Proposal);

        var json = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("audit.db"), "--format", "json", file);
        using var doc = JsonDocument.Parse(json.Stdout);
        var methods = doc.RootElement.GetProperty("cases").EnumerateArray()
            .Select(c => c.GetProperty("response").GetProperty("stages")[0].GetProperty("method").GetString()).ToList();
        Assert.Equal(["gerg-2008", "peng-robinson"], methods);

        var text = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("audit2.db"), file);
        Assert.Contains("model: gerg-2008", text.Stdout, StringComparison.Ordinal);
        Assert.Contains("GERG-2008 was requested", text.Stdout, StringComparison.Ordinal);
        Assert.Contains("model: peng-robinson", text.Stdout, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_WhenTheMethodIsUnknown_IsAnInputErrorNamingTheField()
    {
        using var temp = new TempFolder();
        var file = temp.Write("c-204b-bad-method.yaml", Proposal.Replace("method: gerg-2008", "method: gerg", StringComparison.Ordinal));

        var run = await Gate.RunAsync("check", "--local", "--audit-file", temp.File("audit.db"), file);
        Assert.NotEqual(0, run.ExitCode);
        Assert.Contains("method", run.ToString(), StringComparison.Ordinal);
    }
}
