using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;

namespace DischargeGuard.Api.Tests;

public sealed class CatalogueAndHealthTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    // The 29 species of the gas data (README, Data).
    private static readonly string[] Species =
    [
        "N2", "O2", "Ar", "CO2", "H2O", "CO", "H2", "He", "CH4", "C2H6", "C3H8", "n-C4H10", "i-C4H10", "n-C5H12", "i-C5H12",
        "n-C6H14", "n-C7H16", "n-C8H18", "n-C9H20", "n-C10H22", "C2H4", "C3H6", "H2S", "NH3", "SO2", "Ne", "Kr", "Cl2", "C2H2",
    ];

    [Fact]
    public async Task GetRules_WhenNoSiteIsGiven_ListsTheDefaultLayerCataloguesAndRules()
    {
        var (response, body) = await factory.GetJsonAsync("/v1/rules");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Matches("^[0-9a-f]{64}$", body.At("digest").GetString());
        var layer = Assert.Single(body.At("layers").EnumerateArray());
        Assert.Equal("default", layer.At("name").GetString());
        Assert.Equal("default.yaml", layer.At("file").GetString());
        Assert.Empty(body.At("lastReloadErrors").EnumerateArray());
        Assert.Contains(Ids(body, "catalogues.lubricants"), id => id == "mineral-vdl");
        Assert.Contains(Ids(body, "catalogues.valveMaterials"), id => id == "peek");
        Assert.Contains(Ids(body, "catalogues.sealMaterials"), id => id == "fkm");
        Assert.Contains(Ids(body, "catalogues.compressorTypes"), id => id == "recip-lubricated");
        Assert.Contains(Ids(body, "catalogues.compressorTypes"), id => id == "screw-oil-flooded");
        Assert.Contains(Ids(body, "catalogues.serviceClasses"), id => id == "hydrogen-rich");
        var peek = body.At("catalogues.valveMaterials").EnumerateArray().Single(m => m.At("id").GetString() == "peek");
        // PEEK valve plates 204 °C continuous, as rules/default.yaml carries it (Bloch & Hoefner p.148, per its basis).
        Assert.Equal(204, AssertEx.Quantity(peek.At("continuousLimit"), "°C"));
        var rules = body.At("rules").EnumerateArray().ToArray();
        Assert.Contains(rules, r => r.At("id").GetString() == "R-AIT" && r.At("severity").GetString() == "violation");
        Assert.All(rules, r => Assert.False(string.IsNullOrEmpty(r.At("basis").GetString())));
    }

    [Fact]
    public async Task GetRules_WhenSiteHasALayer_MergesItAndListsItsDisabledRules()
    {
        var (_, body) = await factory.GetJsonAsync("/v1/rules?site=marlow-fen");

        Assert.Equal(["default", "site:marlow-fen"], body.At("layers").EnumerateArray().Select(l => l.At("name").GetString()));
        Assert.Contains(Ids(body, "catalogues.lubricants"), id => id == "tarnbrook-pao-150");
        var disabled = Assert.Single(body.At("disabled").EnumerateArray());
        Assert.Equal("R-FLASH-SOFT", disabled.At("ruleId").GetString());
        Assert.False(string.IsNullOrEmpty(disabled.At("reason").GetString()));
        Assert.Equal("site:marlow-fen", body.At("rules").EnumerateArray().Single(r => r.At("id").GetString() == "R-API618-GEN").At("limitLayer").GetString());
    }

    [Fact]
    public async Task CheckRuleFile_WhenFileIsValid_AnswersItsLayerAndDigestWithoutActivatingIt()
    {
        var (_, before) = await factory.GetJsonAsync("/v1/rules?site=marlow-fen");
        var yaml = await File.ReadAllTextAsync(Path.Combine(RepoPaths.Root, "rules", "sites", "marlow-fen.yaml"));
        var edited = yaml.Replace("limit: 145 °C", "limit: 140 °C", StringComparison.Ordinal);

        var (response, body) = await CheckAsync(edited, "sites/marlow-fen.yaml");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.True(body.At("valid").GetBoolean());
        Assert.Equal("site:marlow-fen", body.At("layer").GetString());
        Assert.Matches("^[0-9a-f]{64}$", body.At("digest").GetString());
        Assert.Empty(body.At("errors").EnumerateArray());
        var siteLayer = before.At("layers").EnumerateArray().Single(l => l.At("name").GetString() == "site:marlow-fen");
        Assert.NotEqual(siteLayer.At("digest").GetString(), body.At("digest").GetString());
        var (_, after) = await factory.GetJsonAsync("/v1/rules?site=marlow-fen");
        Assert.Equal(before.At("digest").GetString(), after.At("digest").GetString());
    }

    [Fact]
    public async Task CheckRuleFile_WhenFileHasAnUnknownKey_AnswersTheErrorWithFileLineColumnAndKey()
    {
        var (_, before) = await factory.GetJsonAsync("/v1/rules");
        const string yaml = "schemaVersion: 1\nlayer:\n  kind: site\n  id: kestrel-ridge\n  titel: Kestrel Ridge\n";

        var (response, body) = await CheckAsync(yaml, "sites/kestrel-ridge.yaml");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.False(body.At("valid").GetBoolean());
        Assert.False(body.Has("layer"));
        var error = Assert.Single(body.At("errors").EnumerateArray());
        Assert.Equal("UnknownKey", error.At("kind").GetString());
        // Named by its place in the rules directory, as the directory loader and the gate's rules check name it.
        Assert.Equal("sites/kestrel-ridge.yaml", error.At("file").GetString());
        Assert.Equal(5, error.At("line").GetInt64());
        Assert.Equal(3, error.At("column").GetInt64());
        Assert.Equal("layer.titel", error.At("key").GetString());
        Assert.Contains("title", error.At("message").GetString(), StringComparison.Ordinal);
        var (_, after) = await factory.GetJsonAsync("/v1/rules");
        Assert.Equal(before.At("digest").GetString(), after.At("digest").GetString());
    }

    [Fact]
    public async Task GetGases_WhenAsked_ListsThe23SpeciesThePresetsAndTheReferences()
    {
        var (response, body) = await factory.GetJsonAsync("/v1/gases");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var species = body.At("species").EnumerateArray().ToArray();
        Assert.Equal(Species.Order(StringComparer.Ordinal), species.Select(s => s.At("id").GetString()!).Order(StringComparer.Ordinal));
        var so2 = species.Single(s => s.At("id").GetString() == "SO2");
        // SO2 300–5000 K and molar mass 64.064 g/mol (README validity range; CIAAW 2017 atomic weights — from memory — verify).
        Assert.Equal(300, AssertEx.Quantity(so2.At("minimumTemperature"), "K"));
        Assert.Equal(5000, AssertEx.Quantity(so2.At("maximumTemperature"), "K"));
        AssertEx.Near(64.064, AssertEx.Quantity(so2.At("molarMass"), "g/mol"), 0.01, "SO2 molar mass");
        Assert.All(species, s => Assert.False(string.IsNullOrEmpty(s.At("source").GetString())));
        Assert.Equal(["carbon-dioxide", "dry-air", "hydrogen", "methane", "nitrogen"], Ids(body, "presets").Order(StringComparer.Ordinal));
        var air = body.At("presets").EnumerateArray().Single(p => p.At("id").GetString() == "dry-air");
        // Gordon 1982 dry air: N2 78.084 mol % (README, Data).
        AssertEx.Near(0.78084, air.At("composition.N2").GetDouble(), 1e-9, "N2 in dry air");
        Assert.Contains(Ids(body, "serviceClasses"), id => id == "oxygen-rich");
        Assert.Equal(3, body.At("standardReferences").GetArrayLength());
    }

    [Fact]
    public async Task HealthLive_WhenRunning_Answers200()
    {
        var (response, body) = await factory.GetJsonAsync("/health/live");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("Healthy", body.At("status").GetString());
    }

    [Fact]
    public async Task HealthReady_WhenRulesAndStoreAreFine_AnswersHealthyForBoth()
    {
        var (response, body) = await factory.GetJsonAsync("/health/ready");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("Healthy", body.At("status").GetString());
        Assert.Equal("Healthy", body.At("checks.rules.status").GetString());
        Assert.Equal("Healthy", body.At("checks.audit.status").GetString());
        Assert.Matches("^[0-9a-f]{64}$", body.At("checks.rules.data.digest").GetString());
    }

    [Fact]
    public async Task Swagger_WhenAsked_ServesTheOpenApiDocument()
    {
        var (response, body) = await factory.GetJsonAsync("/swagger/v1/swagger.json");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.True(body.At("paths").Has("/v1/evaluations"));
        Assert.True(body.At("paths").Has("/v1/evaluations/{id}"));
    }

    private static IEnumerable<string> Ids(JsonElement body, string path) => body.At(path).EnumerateArray().Select(e => e.At("id").GetString()!);

    private async Task<(HttpResponseMessage Response, JsonElement Body)> CheckAsync(string yaml, string name)
    {
        using var client = factory.CreateClient();
        using var content = new StringContent(yaml, Encoding.UTF8);
        content.Headers.ContentType = new MediaTypeHeaderValue("application/yaml");
        var response = await client.PostAsync(new Uri("/v1/rules/check?name=" + Uri.EscapeDataString(name), UriKind.Relative), content);
        return (response, await Json.ReadAsync(response));
    }
}
