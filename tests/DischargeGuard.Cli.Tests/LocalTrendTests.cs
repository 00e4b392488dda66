using System.Globalization;
using System.Text.Json;

namespace DischargeGuard.Cli.Tests;

/// <summary>
/// The gate's local mode evaluates through the same evaluation service as the server and reads the asset's history
/// from its own audit file's per-stage summaries, so the trend rule answers there as it does in the service (before,
/// local mode read no history and R-DEVIATION-TREND was never checked).
/// </summary>
public class LocalTrendTests
{
    [Fact]
    public async Task Local_WhenTheDeviationRisesOverRecordedRuns_TheTrendRuleWarnsAsInTheService()
    {
        using var temp = new TempFolder();
        var audit = temp.File("gate-audit.db");

        // The estimate without a measurement first, then deviations 1, 3, 5, 7, 9 K at the same pressures: a straight line
        // whose fitted rise over five evaluations is 8 K, above R-DEVIATION-TREND's 5 K (the rule file's limit).
        var estimated = Estimated(await RunAsync(temp, audit, measured: null));
        JsonElement last = default;
        foreach (var deviation in new[] { 1.0, 3.0, 5.0, 7.0, 9.0 })
        {
            last = await RunAsync(temp, audit, estimated + deviation);
        }

        var stage = last.GetProperty("stages")[0];
        var trend = stage.GetProperty("findings").EnumerateArray().Single(f => f.GetProperty("ruleId").GetString() == "R-DEVIATION-TREND");
        Assert.Equal("warning", trend.GetProperty("severity").GetString());
        Assert.Equal(8.0, trend.GetProperty("value").GetProperty("value").GetDouble(), 1);
        Assert.DoesNotContain(stage.GetProperty("notChecked").EnumerateArray(), n => n.GetProperty("ruleId").GetString() == "R-DEVIATION-TREND");
    }

    private static double Estimated(JsonElement response) =>
        response.GetProperty("stages")[0].GetProperty("dischargeTemperature").GetProperty("estimated").GetProperty("value").GetDouble();

    private static async Task<JsonElement> RunAsync(TempFolder temp, string audit, double? measured)
    {
        var measuredLine = measured is { } m
            ? string.Create(CultureInfo.InvariantCulture, $"\n        measured: {{dischargeTemperature: {m:0.###} °C}}")
            : string.Empty;
        var file = temp.Write("k-101a-trend.yaml", $$"""
            asset: K-101A
            site: {id: kestrel-ridge, elevation: 350 m}
            cases:
              - name: running
                gas: {preset: dry-air}
                stages:
                  - suction: {pressure: 1 bara, temperature: 35 °C}
                    discharge: {pressure: 2.3 bara}
                    efficiency: {isentropic: 0.8}
                    equipment: {compressorType: recip-lubricated, lubricant: mineral-vdl, valveMaterial: peek, sealMaterial: fkm, designTemperature: 175 °C}{{measuredLine}}
            """);
        var run = await Gate.RunAsync("check", "--local", "--audit-file", audit, "--format", "json", file);
        Assert.True(run.Stdout.TrimStart().StartsWith('{'), run.ToString());
        using var doc = JsonDocument.Parse(run.Stdout);
        var cases = doc.RootElement.GetProperty("cases");
        Assert.True(cases.GetArrayLength() == 1, run.ToString());
        return cases[0].GetProperty("response").Clone();
    }
}
