using System.Globalization;
using System.Net;

namespace DischargeGuard.Api.Tests;

public sealed class PressureUnitTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    // Exact conversion factors: 1 bar = 100 kPa (SI Brochure, 9th ed., Table 8); 1 atm = 101.325 kPa (CGPM 1954,
    // SI Brochure Table 8 note); 1 psi = 6.894757293168 kPa (NIST SP 811, Appendix B.8, from the international pound
    // 0.45359237 kg, inch 0.0254 m and standard gravity 9.80665 m/s²).
    private const double KilopascalsPerPsi = 6.894757293168;
    private const double KilopascalsPerAtm = 101.325;

    // The same suction, 120 kPa absolute, in every absolute unit (barometer 100 kPa for the gauge forms below).
    public static TheoryData<string> AbsoluteForms => new()
    {
        "1.2 bara",
        Text(120 / KilopascalsPerPsi, "psia"),
        "120 kPa(a)",
        "0.12 MPa(a)",
        Text(120 / KilopascalsPerAtm, "atm"),
        "120000 Pa",
        "1.2e5 Pa",
    };

    // 20 kPa gauge over a 100 kPa barometer: 120 kPa absolute.
    public static TheoryData<string> GaugeForms => new()
    {
        "0.2 barg",
        Text(20 / KilopascalsPerPsi, "psig"),
        "20 kPa(g)",
        "0.02 MPa(g)",
    };

    [Theory]
    [MemberData(nameof(AbsoluteForms))]
    public async Task Evaluate_WhenSuctionIsAbsoluteInAnyAcceptedUnit_GivesTheSameAbsolutePressure(string suction)
    {
        using var response = await factory.EvaluateAsync(Requests.Minimal(suction, "35 °C", "300 kPa(a)"));
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        // Output is rounded to 0.001 kPa; the inputs above are written with 17 significant digits.
        AssertEx.Near(120, AssertEx.Quantity(body.At("stages[0].suction.pressureAbsolute"), "kPa"), 0.001, suction);
        AssertEx.Near(2.5, body.At("stages[0].pressureRatio").GetDouble(), 1e-5, suction);
    }

    [Theory]
    [MemberData(nameof(GaugeForms))]
    public async Task Evaluate_WhenSuctionIsGaugeWithBarometricPressure_AddsTheBarometer(string suction)
    {
        var request = Requests.Minimal(suction, "35 °C", "300 kPa(a)");
        request["site"] = new System.Text.Json.Nodes.JsonObject { ["id"] = "kestrel-ridge", ["barometricPressure"] = "100 kPa" };

        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        AssertEx.Near(120, AssertEx.Quantity(body.At("stages[0].suction.pressureAbsolute"), "kPa"), 0.001, suction);
    }

    [Theory]
    [InlineData("1000 hPa")]
    [InlineData("1000 mbar")]
    [InlineData("1 bar")]
    [InlineData("100 kPa")]
    public async Task Evaluate_WhenBarometerIsInAPlainUnit_AcceptsIt(string barometer)
    {
        var request = Requests.Minimal("0.2 barg", "35 °C", "300 kPa(a)");
        request["site"] = new System.Text.Json.Nodes.JsonObject { ["id"] = "kestrel-ridge", ["barometricPressure"] = barometer };

        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        AssertEx.Near(120, AssertEx.Quantity(body.At("stages[0].suction.pressureAbsolute"), "kPa"), 0.001, barometer);
    }

    [Theory]
    [InlineData("350 m", 350.0)]
    [InlineData("1148.29396325459 ft", 350.0)]
    [InlineData("0 m", 0.0)]
    public async Task Evaluate_WhenGaugeIsGivenWithElevation_UsesTheIso2533Atmosphere(string elevation, double metres)
    {
        var request = Requests.Minimal("0.2 barg", "35 °C", "6 barg");
        request["site"] = new System.Text.Json.Nodes.JsonObject { ["id"] = "kestrel-ridge", ["elevation"] = elevation };

        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        // ISO 2533:1975 standard atmosphere, troposphere: p = 101.325 kPa·(1 − 2.25577e-5·h)^5.25588; 1 ft = 0.3048 m exactly.
        var barometer = KilopascalsPerAtm * Math.Pow(1 - (2.25577e-5 * metres), 5.25588);
        AssertEx.Near(20 + barometer, AssertEx.Quantity(body.At("stages[0].suction.pressureAbsolute"), "kPa"), 0.002, "suction " + elevation);
        AssertEx.Near(600 + barometer, AssertEx.Quantity(body.At("stages[0].discharge.pressureAbsolute"), "kPa"), 0.002, "discharge " + elevation);
    }

    private static string Text(double value, string unit) => value.ToString("R", CultureInfo.InvariantCulture) + " " + unit;
}
