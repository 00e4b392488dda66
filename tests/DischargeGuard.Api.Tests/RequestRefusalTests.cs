using System.Net;
using System.Text.Json.Nodes;

namespace DischargeGuard.Api.Tests;

public sealed class RequestRefusalTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    [Theory]
    [InlineData("1.2 bar")]
    [InlineData("17 psi")]
    [InlineData("120 kPa")]
    [InlineData("0.12 MPa")]
    public async Task Evaluate_WhenStatePressureHasNoBasis_Refuses400AskingForTheBasis(string pressure)
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal(suctionPressure: pressure));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "stages[0].suction.pressure");
        Assert.Contains("basis", message, StringComparison.Ordinal);
        Assert.Contains("bara", message, StringComparison.Ordinal);
        Assert.Contains("barg", message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenDischargeIsGaugeWithoutSiteData_Refuses400NamingTheSiteFields()
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal(dischargePressure: "5 barg"));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "stages[0].discharge.pressure");
        Assert.Contains("site.barometricPressure", message, StringComparison.Ordinal);
        Assert.Contains("site.elevation", message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenNumberUsesADecimalComma_Refuses400()
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal(suctionPressure: "14,7 psia"));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("comma", AssertEx.Error(problem, "stages[0].suction.pressure"), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenUnitIsUnknown_Refuses400ListingAcceptedUnits()
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal(suctionTemperature: "35 C"));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "stages[0].suction.temperature");
        Assert.Contains("Accepted units", message, StringComparison.Ordinal);
        Assert.Contains("°C", message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenApproachIsWrittenInDegreesCelsius_Refuses400AskingForADifference()
    {
        var request = Requests.Minimal();
        ((JsonArray)request["stages"]!).Add(new JsonObject
        {
            ["intercooler"] = new JsonObject { ["approach"] = "10 °C", ["coolantTemperature"] = "30 °C" },
            ["discharge"] = new JsonObject { ["pressure"] = "8 bara" },
            ["efficiency"] = new JsonObject { ["isentropic"] = 0.8 },
        });

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "stages[1].intercooler.approach");
        Assert.Contains("difference", message, StringComparison.Ordinal);
        Assert.Contains("Δ°C", message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenSpeciesIsUnknown_Refuses400ListingSupportedSpecies()
    {
        var request = Requests.Minimal();
        request["gas"] = new JsonObject { ["composition"] = new JsonObject { ["N2"] = 0.5, ["Unobtainium"] = 0.5 } };

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "gas.composition.Unobtainium");
        foreach (var species in new[] { "N2", "CH4", "n-C4H10", "H2S", "SO2", "Kr" })
        {
            Assert.Contains(species, message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task Evaluate_WhenFractionsDoNotSumToOne_Refuses400StatingTheSum()
    {
        var request = Requests.Minimal();
        request["gas"] = new JsonObject { ["composition"] = new JsonObject { ["N2"] = 0.5, ["O2"] = 0.4 } };

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "gas.composition");
        Assert.Contains("sum to 0.9", message, StringComparison.Ordinal);
        Assert.DoesNotContain("(Parameter", message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenBodyHasAnUnknownField_Refuses400NamingIt()
    {
        var request = Requests.Minimal();
        request.Stage(0)["suction"]!["temprature"] = "35 °C";

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var errors = problem.At("errors").EnumerateObject().ToArray();
        var error = Assert.Single(errors);
        Assert.StartsWith("stages[0].suction", error.Name, StringComparison.Ordinal);
        Assert.Contains("Unknown field", error.Value[0].GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenTopLevelFieldIsUnknown_Refuses400()
    {
        var request = Requests.Minimal();
        request["colour"] = "red";

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("Unknown field", Assert.Single(problem.At("errors").EnumerateObject()).Value[0].GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenValueHasTheWrongJsonType_Refuses400NamingTheField()
    {
        var request = Requests.Minimal();
        request.Stage(0)["efficiency"]!["isentropic"] = "high";

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "stages[0].efficiency.isentropic");
        Assert.DoesNotContain("System.", message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenBodyIsNotJson_Refuses400Problem()
    {
        using var response = await factory.EvaluateRawAsync("{\"asset\": \"K-101A\",");

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.DoesNotContain("System.", problem.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenStagesAreMissing_Refuses400()
    {
        var request = Requests.Minimal();
        request.Remove("stages");

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("stage", AssertEx.Error(problem, "stages"), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenPresetIsUnknown_Refuses400ListingPresets()
    {
        var request = Requests.Minimal();
        request["gas"] = new JsonObject { ["preset"] = "moon-air" };

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "gas.preset");
        Assert.Contains("'dry-air'", message, StringComparison.Ordinal);
        Assert.Contains("'methane'", message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("compressorType", "recip-steam", "'recip-lubricated'")]
    [InlineData("lubricant", "whale-oil", "'mineral-vdl'")]
    [InlineData("valveMaterial", "cardboard", "'peek'")]
    [InlineData("sealMaterial", "cork", "'fkm'")]
    public async Task Evaluate_WhenCatalogueIdIsUnknown_Refuses400ListingAcceptedIds(string field, string value, string listed)
    {
        var request = Requests.Minimal();
        request.Stage(0)["equipment"] = new JsonObject { [field] = value };

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var message = AssertEx.Error(problem, "stages[0].equipment." + field);
        Assert.Contains(value, message, StringComparison.Ordinal);
        Assert.Contains(listed, message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("service", "nuclear", "'sour'")]
    [InlineData("method", "redlich-kwong", "'gerg-2008'")]
    [InlineData("outputUnits", "cgs", "'imperial'")]
    public async Task Evaluate_WhenEnumeratedFieldHasAnUnknownWord_Refuses400ListingAcceptedWords(string field, string value, string listed)
    {
        var request = Requests.Minimal();
        request[field] = value;

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains(listed, AssertEx.Error(problem, field), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenDischargeIsNotAboveSuction_Refuses422OnTheDischargePressure()
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal("3 bara", "35 °C", "2.3 bara"));

        var problem = await AssertEx.ProblemAsync(response, (HttpStatusCode)422, "out-of-range");
        Assert.Contains("greater than the suction", AssertEx.Error(problem, "stages[0].discharge.pressure"), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenDischargeEqualsSuction_Refuses422()
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal("3 bara", "35 °C", "300 kPa(a)"));

        var problem = await AssertEx.ProblemAsync(response, (HttpStatusCode)422, "out-of-range");
        AssertEx.Error(problem, "stages[0].discharge.pressure");
    }

    [Fact]
    public async Task Evaluate_WhenSuctionTemperatureIsBelowTheGasData_Refuses422WithTheRange()
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal(suctionTemperature: "100 K"));

        var problem = await AssertEx.ProblemAsync(response, (HttpStatusCode)422, "out-of-range");
        // 200 K: the lower end of the NASA TM-4513 fits used for N2, O2, Ar and CO2 (README, validity range).
        Assert.Contains("200", AssertEx.Error(problem, "stages[0].suction.temperature"), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenGasHoldsSulfurDioxideBelow300K_Refuses422WithTheNarrowerRange()
    {
        var request = Requests.Minimal(suctionTemperature: "250 K");
        request["gas"] = new JsonObject { ["composition"] = new JsonObject { ["N2"] = 0.9, ["SO2"] = 0.1 } };

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, (HttpStatusCode)422, "out-of-range");
        // SO2's fit starts at 300 K (README, validity range: no published fit reaching 200 K was available).
        Assert.Contains("300", AssertEx.Error(problem, "stages[0].suction.temperature"), StringComparison.Ordinal);
    }
}

public sealed class RequestSizeTests(SmallBodyServiceFactory factory) : IClassFixture<SmallBodyServiceFactory>
{
    [Fact]
    public async Task Evaluate_WhenBodyExceedsTheConfiguredLimit_Refuses413Problem()
    {
        var request = Requests.Minimal();
        request["asset"] = "K-101A " + new string('x', SmallBodyServiceFactory.Limit);

        using var response = await factory.EvaluateAsync(request);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.RequestEntityTooLarge, "payload-too-large");
        Assert.False(problem.Has("errors") && problem.At("errors").EnumerateObject().Any(), "a size refusal names no field");
    }

    [Fact]
    public async Task Evaluate_WhenBodyIsUnderTheLimit_Answers()
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal());

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
    }
}
