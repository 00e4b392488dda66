using System.Net.Http.Json;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Testing;

namespace DischargeGuard.Cli.Tests;

/// <summary>The service with an admin key, for <c>POST /v1/rules/check</c>.</summary>
public sealed class AdminService : IAsyncLifetime
{
    internal ServiceHost Host { get; private set; } = null!;

    internal string AdminKey { get; } = Convert.ToBase64String(RandomNumberGenerator.GetBytes(32)).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    public async Task InitializeAsync() => Host = await ServiceHost.StartAsync(new Dictionary<string, string>
    {
        ["Auth:Keys:2:id"] = "tarnbrook-rules-admin",
        ["Auth:Keys:2:sha256"] = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(AdminKey))),
        ["Auth:Keys:2:roles:0"] = "admin",
    });

    public async Task DisposeAsync() => await Host.DisposeAsync();
}

/// <summary>
/// One rule check, one verdict: a corpus of candidate rule files goes through the directory loader, the service's
/// <c>POST /v1/rules/check</c> (merged over the active rules) and <c>dischargeguard rules check --rules</c>, and all three
/// must give the same verdict and the same located errors (file, line, column, key, message, kind). The candidates are
/// invented layers for the invented sites marlow-fen and kestrel-ridge.
/// </summary>
public sealed partial class OneRuleCheckTests(AdminService service) : IClassFixture<AdminService>
{
    private static string Shipped(string place) => File.ReadAllText(Path.Combine(Repo.Rules, place));

    private static string KestrelSite(string body) => $"""
        schemaVersion: 1
        layer:
          kind: site
          id: kestrel-ridge
        {body}
        """;

    private static string Asset(string id, string site) => $"""
        schemaVersion: 1
        layer:
          kind: asset
          id: {id}
          site: {site}
        overrides:
          - rule: R-API618-GEN
            limit: 140 °C
        """;

    /// <summary>Name, place in the rules directory, text, expected verdict.</summary>
    public static TheoryData<string, string, bool> Corpus() => new()
    {
        { "valid-default", "default.yaml", true },
        { "valid-site", "sites/kestrel-ridge.yaml", true },
        { "site-loosens-without-reason", "sites/marlow-fen.yaml", false },
        { "unknown-rule-id", "sites/kestrel-ridge.yaml", false },
        { "bad-units", "sites/kestrel-ridge.yaml", false },
        { "duplicate-ids", "sites/kestrel-ridge.yaml", false },
        { "asset-for-unknown-site", "assets/K-101A.yaml", true },
        { "asset-for-near-miss-site", "assets/K-101A.yaml", false },
        { "valid-asset", "assets/C-204B.yaml", true },
    };

    private static string Text(string name) => name switch
    {
        // The shipped default with a comment added: a default override that changes nothing but the file.
        "valid-default" => "# candidate default, re-reviewed\n" + Shipped("default.yaml"),
        "valid-site" => KestrelRidgeLayers.Site,
        // The shipped marlow-fen tightening of R-API618-GEN (145 °C) turned into a loosening (160 °C) with no reason.
        "site-loosens-without-reason" => Shipped("sites/marlow-fen.yaml").Replace("limit: 145 °C", "limit: 160 °C", StringComparison.Ordinal),
        "unknown-rule-id" => KestrelSite("overrides:\n  - rule: R-NOT-A-RULE\n    limit: 140 °C"),
        "bad-units" => KestrelSite("overrides:\n  - rule: R-API618-GEN\n    limit: 140 psi\n  - rule: R-FIELD-HC\n    warningBand: 15 °C"),
        "duplicate-ids" => KestrelSite("""
            lubricants:
              - id: kr-pao-68
                title: one
                baseStock: pao
                basis: "invented for the test"
              - id: kr-pao-68
                title: two
                baseStock: pao
                basis: "invented for the test"
              - id: mineral-vdl
                title: a shipped id redefined
                baseStock: mineral
                basis: "invented for the test"
            """),
        "asset-for-unknown-site" => Asset("K-101A", "nowhere-moor"),
        "asset-for-near-miss-site" => Asset("K-101A", "marlowfen"),
        "valid-asset" => Shipped("assets/C-204B.yaml").Replace("limit: 170 °C", "limit: 168 °C", StringComparison.Ordinal),
        _ => throw new ArgumentOutOfRangeException(nameof(name)),
    };

    private sealed record Located(string File, long Line, long Column, string Key, string Message, string Kind)
    {
        public override string ToString() => $"{File}:{Line}:{Column}: {Key}: {Message} [{Kind}]";
    }

    private static string Listing(IEnumerable<Located> errors) => string.Join("\n", errors.Select(e => "  " + e));

    [Theory]
    [MemberData(nameof(Corpus))]
    public async Task Check_WhenCandidateGoesThroughLoaderServiceAndGate_AllThreeAgree(string name, string place, bool expectValid)
    {
        var text = Text(name);
        using var temp = new TempFolder();

        // 1. The directory loader, with the candidate written at its place in a copy of the active rules.
        var rules = temp.File("rules");
        Repo.CopyDirectory(Repo.Rules, rules);
        File.WriteAllText(Path.Combine(rules, place), text);
        List<Located> loader;
        try
        {
            FileRuleSetProvider.LoadDirectory(rules, DateTimeOffset.UnixEpoch);
            loader = [];
        }
        catch (RuleFileException ex)
        {
            loader = ex.Errors.Select(e => new Located(e.File, e.Line, e.Column, e.Key, e.Message, e.Kind.ToString())).ToList();
        }

        // 2. The service, merging the candidate over its active rules (a copy of the shipped ones).
        using var http = new HttpClient { BaseAddress = new Uri(service.Host.Url) };
        http.DefaultRequestHeaders.Add("X-Api-Key", service.AdminKey);
        using var content = new StringContent(text, Encoding.UTF8, "application/yaml");
        using var response = await http.PostAsync(new Uri("/v1/rules/check?name=" + Uri.EscapeDataString(place), UriKind.Relative), content);
        var body = await response.Content.ReadFromJsonAsync<JsonElement>();
        Assert.True(response.IsSuccessStatusCode, body.ToString());
        var api = body.GetProperty("errors").EnumerateArray()
            .Select(e => new Located(e.GetProperty("file").GetString()!, e.GetProperty("line").GetInt64(), e.GetProperty("column").GetInt64(),
                e.GetProperty("key").GetString()!, e.GetProperty("message").GetString()!, e.GetProperty("kind").GetString()!))
            .ToList();

        // 3. The gate, with the candidate outside any rules directory, merged over the same rules.
        var candidate = Path.Combine(temp.File("candidate"), place);
        Directory.CreateDirectory(Path.GetDirectoryName(candidate)!);
        File.WriteAllText(candidate, text);
        var run = await Gate.RunAsync("rules", "check", candidate, "--rules", Repo.Rules);
        var gate = run.Stderr.Split('\n').Select(l => ErrorLine().Match(l.TrimEnd('\r'))).Where(m => m.Success)
            .Select(m => new Located(
                m.Groups[1].Value == candidate ? place : Path.GetRelativePath(Repo.Rules, m.Groups[1].Value).Replace('\\', '/'),
                long.Parse(m.Groups[2].Value, System.Globalization.CultureInfo.InvariantCulture),
                long.Parse(m.Groups[3].Value, System.Globalization.CultureInfo.InvariantCulture),
                m.Groups[4].Value, m.Groups[5].Value, m.Groups[6].Value))
            .ToList();

        Assert.True(expectValid == (loader.Count == 0), $"loader, {name}: expected valid={expectValid}\n{Listing(loader)}");
        Assert.True(expectValid == body.GetProperty("valid").GetBoolean(), $"service, {name}: expected valid={expectValid}\n{Listing(api)}");
        Assert.True(expectValid == (run.ExitCode == 0), $"gate, {name}: expected valid={expectValid}\n{run}");

        var expected = loader.Distinct().Order(Comparer<Located>.Create((a, b) => string.CompareOrdinal(a.ToString(), b.ToString()))).ToList();
        List<Located> Sorted(List<Located> l) => l.Distinct().Order(Comparer<Located>.Create((a, b) => string.CompareOrdinal(a.ToString(), b.ToString()))).ToList();
        Assert.True(expected.SequenceEqual(Sorted(api)), $"{name}: loader and service differ\nloader:\n{Listing(expected)}\nservice:\n{Listing(Sorted(api))}");
        Assert.True(expected.SequenceEqual(Sorted(gate)), $"{name}: loader and gate differ\nloader:\n{Listing(expected)}\ngate:\n{Listing(Sorted(gate))}\n{run}");
        Assert.All(expected, e => Assert.True(e.Line > 0 || e.Key == "layer.id", $"{name}: an error without a line: {e}"));
        if (expectValid)
        {
            // The digest the gate prints is the candidate's merge the service reports.
            Assert.Equal(body.GetProperty("mergedDigest").GetString(), RulesCheckTests.DigestLine(run));
        }
    }

    [GeneratedRegex(@"^(.*):(\d+):(\d+): (.*?): (.*) \[(\w+)\]$")]
    private static partial Regex ErrorLine();
}
