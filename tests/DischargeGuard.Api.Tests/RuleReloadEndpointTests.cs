using System.Net;
using System.Text.Json;
using DischargeGuard.Api.Infrastructure.Security;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Tests;

/// <summary><c>POST /v1/rules/reload</c> and the start-up check of the key list (own hosts: they edit rules or fail to start).</summary>
public sealed class RuleReloadEndpointTests
{
    // The kestrel-ridge site layer with a misspelt key on line 9 ("limt").
    private const string BrokenSite = """
        schemaVersion: 1
        layer:
          kind: site
          id: kestrel-ridge
          title: Kestrel Ridge compressor station (Harrow Basin Gas Co.)
          owner: Harrow Basin Gas Co. rotating equipment group
        overrides:
          - rule: R-API618-GEN
            limt: 130 °C
        """;

    [Fact]
    public async Task Reload_WhenTheRuleSetIsBroken_AnswersUnprocessableWithFileLineKeyAndKeepsTheLastGoodDigest()
    {
        await using var factory = new KeyedServiceFactory();
        using var admin = factory.ClientWith(factory.KeyFor(Roles.Admin));
        var reload = new Uri("/v1/rules/reload", UriKind.Relative);
        using var good = await admin.PostAsync(reload, content: null);
        Assert.Equal(HttpStatusCode.OK, good.StatusCode);
        var goodDigest = (await Json.ReadAsync(good)).At("digest").GetString();
        await File.WriteAllTextAsync(Path.Combine(factory.RulesDirectory, "sites", "kestrel-ridge.yaml"), BrokenSite);

        using var broken = await admin.PostAsync(reload, content: null);

        var problem = await AssertEx.ProblemAsync(broken, HttpStatusCode.UnprocessableEntity, "rules-invalid");
        Assert.Equal(goodDigest, problem.At("activeDigest").GetString());
        var error = Assert.Single(problem.At("errors").EnumerateArray());
        Assert.Equal("sites/kestrel-ridge.yaml", error.At("file").GetString());
        Assert.Equal(9, error.At("line").GetInt64());
        Assert.Contains("limt", error.At("key").GetString(), StringComparison.Ordinal);
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        using var rules = await technician.GetAsync(new Uri("/v1/rules", UriKind.Relative));
        Assert.Equal(goodDigest, (await Json.ReadAsync(rules)).At("digest").GetString());
    }

    [Fact]
    public async Task Readiness_AfterARefusedReload_ShowsTheErrorsToAnAdminKeyOnly()
    {
        await using var factory = new KeyedServiceFactory();
        using var admin = factory.ClientWith(factory.KeyFor(Roles.Admin));
        await File.WriteAllTextAsync(
            Path.Combine(factory.RulesDirectory, "sites", "kestrel-ridge.yaml"),
            BrokenSite.Replace("limt: 130 °C", "limt-quarry-lane-7: 130 °C", StringComparison.Ordinal));
        using (var broken = await admin.PostAsync(new Uri("/v1/rules/reload", UriKind.Relative), content: null))
        {
            Assert.Equal(HttpStatusCode.UnprocessableEntity, broken.StatusCode);
        }

        var ready = new Uri("/health/ready", UriKind.Relative);
        foreach (var key in new[] { null, "not-a-key", factory.KeyFor(Roles.Technician), factory.KeyFor(Roles.Planner), factory.KeyFor(Roles.Gate) })
        {
            using var client = factory.ClientWith(key);
            using var response = await client.GetAsync(ready);
            var text = await response.Content.ReadAsStringAsync();

            // The status, and that the rules are degraded; nothing of the file: no key, no value, no name, no digest.
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var body = JsonDocument.Parse(text).RootElement;
            Assert.Equal("Degraded", body.At("status").GetString());
            Assert.Equal("Degraded", body.At("checks.rules.status").GetString());
            Assert.False(body.At("checks.rules").Has("data"), text);
            Assert.DoesNotContain("quarry", text, StringComparison.Ordinal);
            Assert.DoesNotContain("kestrel-ridge", text, StringComparison.Ordinal);
            Assert.DoesNotContain("130", text, StringComparison.Ordinal);
        }

        using var asAdmin = await admin.GetAsync(ready);
        var detail = await Json.ReadAsync(asAdmin);
        var error = Assert.Single(detail.At("checks.rules.data.lastReloadErrors").EnumerateArray()).GetString();
        Assert.Contains("sites/kestrel-ridge.yaml", error, StringComparison.Ordinal);
        Assert.Contains("limt-quarry-lane-7", error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("sha256", "not-a-hash")]
    [InlineData("roles:0", "operator")]
    [InlineData("id", "tablet 07")]
    public void KeyList_WhenAnEntryIsInvalid_FailsValidationNamingTheEntryButNotItsHash(string field, string value)
    {
        // The options the host binds and validates on start (a host that fails to start cannot be disposed cleanly by the test factory).
        var hash = ApiKeyRegistry.HashOf(KeyedServiceFactory.NewKey());
        var configuration = new ConfigurationBuilder().AddInMemoryCollection(new Dictionary<string, string?>
        {
            ["Auth:Keys:0:id"] = "tablet-07",
            ["Auth:Keys:0:sha256"] = hash,
            ["Auth:Keys:0:roles:0"] = "technician",
            ["Auth:Keys:1:id"] = "planning-office",
            ["Auth:Keys:1:sha256"] = ApiKeyRegistry.HashOf(KeyedServiceFactory.NewKey()),
            ["Auth:Keys:1:roles:0"] = "planner",
            ["Auth:Keys:0:" + field] = value,
        }).Build();
        var options = configuration.GetSection(AuthOptions.SectionName).Get<AuthOptions>()!;
        Assert.Equal(2, options.Keys.Count);

        var result = new AuthOptionsValidator().Validate(null, options);

        Assert.True(result.Failed);
        var failure = Assert.Single(result.Failures!);
        Assert.StartsWith("Auth:Keys:0 ", failure, StringComparison.Ordinal);
        Assert.DoesNotContain(hash, result.FailureMessage, StringComparison.Ordinal);
    }

    [Fact]
    public void KeyList_WhenEntriesAreValid_PassesValidationAndFindsOnlyTheExactKey()
    {
        var key = KeyedServiceFactory.NewKey();
        var options = new AuthOptions();
        var entry = new ApiKeyEntry { Id = "tablet-07", Sha256 = ApiKeyRegistry.HashOf(key).ToUpperInvariant() };
        entry.Roles.Add("technician");
        options.Keys.Add(entry);

        Assert.True(new AuthOptionsValidator().Validate(null, options).Succeeded);
        var registry = new ApiKeyRegistry(Options.Create(options));
        Assert.Same(entry, registry.Find(key));
        Assert.Null(registry.Find(key[..^1]));
        Assert.Null(registry.Find(key + " "));
        Assert.Null(registry.Find(new string('A', ApiKeyRegistry.MaxKeyLength + 1)));
    }
}
