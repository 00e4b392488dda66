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

    [Theory]
    // The compact (default) answer says which model decided each stage and why, as the full one does.
    [InlineData("auto", "{\"preset\": \"methane\"}", "gerg-2008", "normal range")]
    [InlineData("auto", "{\"composition\": {\"NH3\": 1}}", "peng-robinson", "does not cover NH3")]
    [InlineData("gerg-2008", "{\"preset\": \"methane\"}", "gerg-2008", "was requested")]
    public async Task Evaluate_CompactAnswer_NamesTheDecidingModelAndWhy(string method, string gas, string model, string why)
    {
        var request = Methane("5 bara", "12 bara");
        request["method"] = method;
        request["gas"] = System.Text.Json.Nodes.JsonNode.Parse(gas);
        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("compact", body.At("detail").GetString());
        Assert.Equal(model, body.At("stages[0].method").GetString());
        Assert.Contains(why, body.At("stages[0].methodReason").GetString(), StringComparison.Ordinal);
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
