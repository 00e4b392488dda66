using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Validation;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>
/// The layers a request asks for are the layers it gets: a near miss of a layer id is refused, a different id is
/// accepted and the answer says which layers applied and which close layer did not. Uses the shipped layers of the
/// invented Marlow Fen station (site marlow-fen, asset C-204B, whose layer tightens R-FIELD-HC from 350 °F to 170 °C).
/// </summary>
public sealed class LayerSelectionTests
{
    private static EvaluationRequest MethaneRequest(string asset, string? site = "marlow-fen") => new()
    {
        Asset = asset,
        Site = site is null ? null : new SiteInput { Id = site, BarometricPressure = Q("101 kPa") },
        Gas = new GasInput { Preset = "methane" },
        Stages =
        [
            new StageInput
            {
                Suction = new SuctionInput { Pressure = Q("1000 kPa(a)"), Temperature = Q("30 °C") },
                Discharge = new DischargeInput { Pressure = Q("3000 kPa(a)") },
                Efficiency = new EfficiencyInput { Isentropic = 0.80 },
                Equipment = new EquipmentInput { CompressorType = "recip-packaged-lubricated" },
            },
        ],
    };

    private static double FieldLimitCelsius(EvaluationResponse response)
    {
        var f = Assert.Single(response.Stages[0].Findings, f => f.RuleId == "R-FIELD-HC");
        Assert.Equal("°C", f.Limit!.Unit);
        return f.Limit.Value;
    }

    [Fact]
    public void Evaluate_WhenAssetIsExactLayerId_AppliesItsTighterLimitAndSaysSo()
    {
        var response = Evaluate(MethaneRequest("C-204B"));

        // rules/assets/C-204B.yaml: 170 °C (the invented cylinder maker's limit); rules/default.yaml: 177 °C.
        Assert.Equal(170, FieldLimitCelsius(response), 3);
        Assert.Equal(["default", "site:marlow-fen", "asset:C-204B"], response.RuleSet.Layers.Select(l => l.Name));
        Assert.Equal("layers applied: default ← site:marlow-fen ← asset:C-204B", response.RuleSet.Applied);
        Assert.Null(response.RuleSet.Unmatched);
    }

    [Theory]
    [InlineData("c-204b")]
    [InlineData("C204B")]
    [InlineData("C_204B")]
    [InlineData("c 204 b")]
    public void Evaluate_WhenAssetNearMissesLayerId_RefusesAtAssetWithSuggestion(string asset)
    {
        var problem = Refuse(MethaneRequest(asset));
        Assert.Equal(ProblemKind.InvalidRequest, problem.Kind);
        var message = Assert.Single(Assert.Single(problem.Errors, e => e.Key == "asset").Value);
        Assert.Contains("did you mean C-204B", message, StringComparison.Ordinal);
    }

    [Fact]
    public void Evaluate_WhenSiteNearMissesLayerId_RefusesAtSiteIdWithSuggestion()
    {
        // "marlowfen" is a well-formed site id, so only the layer lookup can tell it is marlow-fen without its hyphen.
        var problem = Refuse(MethaneRequest("K-101A", site: "marlowfen"));
        var message = Assert.Single(Assert.Single(problem.Errors, e => e.Key == "site.id").Value);
        Assert.Contains("did you mean marlow-fen", message, StringComparison.Ordinal);
    }

    [Fact]
    public void Evaluate_WhenAssetIsOneCharacterFromLayer_AcceptsAndNamesLayerNotApplied()
    {
        var response = Evaluate(MethaneRequest("C-204A"));

        // Without the asset layer the default's 350 °F = 176.67 °C applies (rules/default.yaml; 177 °C until the file
        // stated the practice in °F).
        Assert.Equal((350 - 32) * 5.0 / 9, FieldLimitCelsius(response), 2);
        Assert.Equal(["default", "site:marlow-fen"], response.RuleSet.Layers.Select(l => l.Name));
        var unmatched = Assert.Single(response.RuleSet.Unmatched!);
        Assert.Equal("asset", unmatched.Field);
        Assert.Equal("asset:C-204B", unmatched.NearestLayer);
        Assert.Contains("no layer for asset C-204A: default and site rules only", response.RuleSet.Applied, StringComparison.Ordinal);
        Assert.Contains("asset:C-204B not applied", response.RuleSet.Applied, StringComparison.Ordinal);
    }

    [Fact]
    public void Evaluate_WhenNoLayerNear_AcceptsAndSaysDefaultRulesOnly()
    {
        var response = Evaluate(MethaneRequest("Q-9", site: "kestrel-ridge"));
        Assert.Equal(["default"], response.RuleSet.Layers.Select(l => l.Name));
        Assert.Equal(2, response.RuleSet.Unmatched!.Count);
        Assert.All(response.RuleSet.Unmatched!, u => Assert.Null(u.NearestLayer));
        Assert.Contains("no layer for site kestrel-ridge: default rules only", response.RuleSet.Applied, StringComparison.Ordinal);
        Assert.Contains("no layer for asset Q-9: default rules only", response.RuleSet.Applied, StringComparison.Ordinal);
    }

    [Fact]
    public void Evaluate_WhenSiteOneCharacterFromLayer_AcceptsAndNamesSiteLayerNotApplied()
    {
        var response = Evaluate(MethaneRequest("Q-9", site: "marlow-fern"));
        var unmatched = Assert.Single(response.RuleSet.Unmatched!, u => u.Field == "site.id");
        Assert.Equal("site:marlow-fen", unmatched.NearestLayer);
        Assert.DoesNotContain(response.RuleSet.Layers, l => l.Name == "site:marlow-fen");
    }

    [Theory]
    [InlineData("C-204B\n")]
    [InlineData("C-204B ")]
    [InlineData("C-204B.")]
    [InlineData("C-204B-")]
    [InlineData("C-204B\r\n")]
    public void Validate_WhenAssetHasTrailingBreakBlankOrPunctuation_Refuses(string asset)
    {
        var failures = new EvaluationRequestValidator().Validate(MethaneRequest(asset)).Errors;
        Assert.Contains(failures, f => f.PropertyName == "Asset" && f.ErrorMessage.Contains("ends with a letter or digit", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData("marlow-fen\n")]
    [InlineData("marlow-fen ")]
    [InlineData("marlow-fen-")]
    [InlineData("Marlow-Fen")]
    [InlineData("marlow_fen")]
    public void Validate_WhenSiteIdMisspeltOrTrailing_RefusesNamingTheIdItSpells(string site)
    {
        var failures = new EvaluationRequestValidator().Validate(MethaneRequest("C-204B", site)).Errors;
        Assert.Contains(failures, f => f.PropertyName == "Site.Id" && f.ErrorMessage.Contains("did you mean marlow-fen?", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData("C-204B")]
    [InlineData("K-101A")]
    [InlineData("PK 7/2")]
    [InlineData("7")]
    public void Validate_WhenAssetWellFormed_Accepts(string asset) =>
        Assert.DoesNotContain(new EvaluationRequestValidator().Validate(MethaneRequest(asset)).Errors, f => f.PropertyName == "Asset");
}
