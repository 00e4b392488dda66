using System.Text.Json;
using System.Text.RegularExpressions;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Testing;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>The README's evaluation example, read from the README itself, gives what the README says about it.</summary>
public sealed partial class ReadmeExampleTests
{
    [GeneratedRegex(@"curl -s http://127\.0\.0\.1:5080/v1/evaluations -H 'Content-Type: application/json' -d '(\{.*?\n\})'", RegexOptions.Singleline)]
    private static partial Regex ExampleBody();

    private static EvaluationRequest Example()
    {
        var readme = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "README.md"));
        var match = ExampleBody().Match(readme);
        Assert.True(match.Success, "The README's curl example was not found.");
        return JsonSerializer.Deserialize<EvaluationRequest>(match.Groups[1].Value, EvaluationJson.Options)!;
    }

    [Fact]
    public void ReadmeExample_CalibratedCooledStage_UsesTheApparentExponentAndDoesNotFailOnTheDefault()
    {
        var response = Evaluate(Example());
        var stage = response.Stages[0];

        Assert.Equal("calibration", stage.Efficiency.Source);
        var cal = stage.Efficiency.Calibration!;
        Assert.Equal("apparent-exponent", cal.Kind);
        // README: the isentropic prediction at the measured duty is about 149 °C (ideal gas with cp(T); 149.2 °C in the
        // answer before the calibration existed), above the measured 141 °C.
        AssertEx.Within(149.2, cal.IsentropicAtMeasuredDuty.Value, 0.5);
        // Hand calculation (marked as such): at 350 m the ISO 2533 barometer is 97.19 kPa; r_cal = 357.19/117.19 = 3.0479,
        // (n−1)/n = ln(414.15/308.15)/ln 3.0479 = 0.26528; r = 377.19/117.19 = 3.2186 gives T2 = 308.15·3.2186^0.26528 = 420.2 K = 147.0 °C.
        AssertEx.Within(147.0, stage.DischargeTemperature!.Estimated.Value, 0.5);
        // The calibrated estimate clears every limit on the estimated temperature; the design-standard check on the
        // predicted (η = 1) temperature does not depend on the measurement and still governs at this ratio.
        Assert.DoesNotContain(stage.Findings, f => f.Severity == "violation" && f.Quantity is "estimated" or "measured");
        Assert.Equal("fail", response.Verdict);
        Assert.StartsWith("R-API618-GEN", stage.Governing!.RuleId, StringComparison.Ordinal);
        Assert.Contains(response.Cautions, c => c.Contains("manufacturer", StringComparison.OrdinalIgnoreCase));
    }

    [Fact]
    public void ReadmeExample_WithTheDefaultEfficiencyInstead_IsPredictedNear186AndFailsOnTheEstimate()
    {
        // The README's contrast: without the calibration the recip default ηs 0.80 gives about 186 °C at 2.8 barg, above the 177 °C air fire-prevention limit (R-AIR-RECIP, Bloch & Hoefner p.382).
        var request = Example();
        var stage = request.Stages![0] with { Calibration = null };
        var response = Evaluate(request with { Stages = [stage] });

        Assert.Equal("rule-default", response.Stages[0].Efficiency.Source);
        AssertEx.Within(186, response.Stages[0].DischargeTemperature!.Estimated.Value, 2);
        Assert.Contains(response.Stages[0].Findings, f => f.RuleId == "R-AIR-RECIP" && f.Severity == "violation");
        Assert.Equal("fail", response.Verdict);
    }
}
