using System.Net;

namespace DischargeGuard.Api.Tests;

/// <summary>POST /v1/evaluations with <c>method: gerg-2008</c>: the stage names the model and why, keeps the ideal gas
/// and Peng-Robinson beside it, and a state outside GERG-2008's extended range (above 70 MPa; Kunz &amp; Wagner 2012) is a
/// 422 keyed <c>method</c>.</summary>
public sealed class GergMethodEndpointTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private static System.Text.Json.Nodes.JsonObject Methane(string suction, string discharge)
    {
        var request = Requests.PassingStage();
        request["asset"] = "K-101A-GERG";
        request["gas"] = System.Text.Json.Nodes.JsonNode.Parse("""{"preset": "methane"}""");
        request["method"] = "gerg-2008";
        request["stages"]![0]!["suction"]!["pressure"] = suction;
        request["stages"]![0]!["discharge"]!["pressure"] = discharge;
        return request;
    }

    [Fact]
    public async Task Evaluate_WhenMethodIsGerg2008_TheStageNamesTheModelWithBothOthersBeside()
    {
        using var response = await factory.EvaluateAsync(Methane("25 bara", "60 bara"), "?detail=full");
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("gerg-2008", body.At("method").GetString());
        var stage = body.At("stages[0]");
        Assert.Equal("gerg-2008", stage.At("method").GetString());
        Assert.Equal("gerg-2008", stage.At("realGas.model").GetString());
        Assert.Equal("GERG-2008 was requested.", stage.At("realGas.methodReason").GetString());
        var gerg = AssertEx.Quantity(stage.At("dischargeTemperature.estimated"), "°C");
        AssertEx.Near(gerg, AssertEx.Quantity(stage.At("realGas.realGasTemperatures.estimated"), "°C"), 1e-9, "the stage's T2 is GERG-2008's");
        Assert.True(stage.At("realGas.idealGas.estimated").ValueKind == System.Text.Json.JsonValueKind.Object);
        Assert.True(stage.At("realGas.pengRobinson.estimated").ValueKind == System.Text.Json.JsonValueKind.Object);
    }

    [Fact]
    public async Task Evaluate_WhenMethodIsGerg2008AboveItsExtendedRange_Is422OnMethod()
    {
        using var response = await factory.EvaluateAsync(Methane("40 MPa(a)", "80 MPa(a)"));
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.UnprocessableEntity, response.StatusCode);
        Assert.Contains("extended range", body.At("errors.method[0]").GetString(), StringComparison.Ordinal);
    }
}
