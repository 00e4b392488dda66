using System.Net;
using System.Text;
using DischargeGuard.Api.Infrastructure.Security;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Every endpoint × role × {no key, wrong key, right key}. The table below is the one in docs/security.md: change both
/// together. One host for the whole matrix; evaluations are recorded by the technician, so reads see a real record.
/// </summary>
public sealed class AccessControlTests(KeyedServiceFactory factory) : IClassFixture<KeyedServiceFactory>
{
    private const string Anonymous = "anonymous";

    // Endpoint → the roles a right key passes with (Anonymous: no key needed at all).
    private static readonly (string Endpoint, string[] Allowed)[] Table =
    [
        ("POST /v1/evaluations", [Roles.Technician, Roles.Gate]),
        ("GET /v1/evaluations", [Roles.Technician, Roles.Planner, Roles.Admin]),
        ("GET /v1/evaluations/{id}", [Roles.Technician, Roles.Planner, Roles.Admin]),
        ("GET /v1/evaluations/{id}/verify", [Roles.Technician, Roles.Planner, Roles.Admin]),
        ("GET /v1/evaluations/{id}/report", [Roles.Technician, Roles.Planner, Roles.Admin]),
        ("POST /v1/evaluations/batch", [Roles.Planner]),
        ("GET /v1/evaluations/export", [Roles.Planner]),
        ("POST /v1/evaluations/{id}/replay", [Roles.Planner]),
        ("POST /v1/admin/retention", [Roles.Admin]),
        ("GET /v1/admin/audit/head", [Roles.Admin]),
        ("GET /v1/admin/audit/verify", [Roles.Admin]),
        ("GET /v1/rules", [Roles.Technician, Roles.Planner, Roles.Gate, Roles.Admin]),
        ("GET /v1/gases", [Roles.Technician, Roles.Planner, Roles.Gate, Roles.Admin]),
        ("POST /v1/rules/check", [Roles.Admin]),
        ("POST /v1/rules/reload", [Roles.Admin]),
        ("GET /health/live", [Anonymous]),
        ("GET /health/ready", [Anonymous]),
        ("GET /swagger/v1/swagger.json", [Anonymous]),
    ];

    public static TheoryData<string, string, string, HttpStatusCode> Matrix()
    {
        var data = new TheoryData<string, string, string, HttpStatusCode>();
        foreach (var (endpoint, allowed) in Table)
        {
            var open = allowed.Contains(Anonymous);
            foreach (var role in Roles.All)
            {
                data.Add(endpoint, role, "none", open ? HttpStatusCode.OK : HttpStatusCode.Unauthorized);
                data.Add(endpoint, role, "wrong", open ? HttpStatusCode.OK : HttpStatusCode.Unauthorized);
                data.Add(endpoint, role, "right", open || allowed.Contains(role) ? HttpStatusCode.OK : HttpStatusCode.Forbidden);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Matrix))]
    public async Task Endpoint_WhenCalledWithEachRoleAndKeyKind_AnswersThePolicyStatus(string endpoint, string role, string keyKind, HttpStatusCode expected)
    {
        var rightKey = factory.KeyFor(role);

        // Wrong: the role's own key with its last character changed, so a near miss is refused too.
        var key = keyKind switch
        {
            "none" => null,
            "wrong" => rightKey[..^1] + (rightKey[^1] == 'A' ? 'B' : 'A'),
            _ => rightKey,
        };
        using var client = factory.ClientWith(key);
        using var request = await RequestAsync(endpoint);
        using var response = await client.SendAsync(request);

        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == expected, $"{endpoint} as {role} with {keyKind} key: expected {(int)expected}, got {(int)response.StatusCode}: {text}");
        if (key is not null)
        {
            Assert.DoesNotContain(key, text, StringComparison.Ordinal);
        }

        if (expected == HttpStatusCode.Unauthorized)
        {
            var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.Unauthorized, "unauthorized");
            Assert.Equal("ApiKey", Assert.Single(response.Headers.WwwAuthenticate).Scheme);
            Assert.Contains("X-Api-Key", problem.At("detail").GetString(), StringComparison.Ordinal);
        }
        else if (expected == HttpStatusCode.Forbidden)
        {
            await AssertEx.ProblemAsync(response, HttpStatusCode.Forbidden, "forbidden");
            Assert.Empty(response.Headers.WwwAuthenticate);
        }
    }

    [Fact]
    public async Task GetEvaluation_WhenTechnicianReadsAnotherTechniciansRecordOfAnAssetItNeverEvaluated_AnswersNotFoundAsIfMissing()
    {
        var id = await factory.EvaluateAsAsync(factory.KeyOf[KeyedServiceFactory.OtherTechnicianId], asset: "K-330C");

        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        using var refused = await technician.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative));
        var problem = await AssertEx.ProblemAsync(refused, HttpStatusCode.NotFound, "not-found");

        Assert.Contains(id.ToString(), problem.At("detail").GetString(), StringComparison.Ordinal);
        using var planner = factory.ClientWith(factory.KeyFor(Roles.Planner));
        using var allowed = await planner.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, allowed.StatusCode);
        Assert.Equal(KeyedServiceFactory.OtherTechnicianId, (await Json.ReadAsync(allowed)).At("caller").GetString());
    }

    [Fact]
    public async Task History_WhenUnboundTechnicianHasEvaluatedTheAsset_StillSeesOnlyItsOwnRecordsOfIt()
    {
        // Posting an evaluation of an asset no longer opens its history: what a key reads follows from its binding alone.
        var own = await factory.EvaluateAsAsync(factory.KeyFor(Roles.Technician), asset: "K-101B");
        var other = await factory.EvaluateAsAsync(factory.KeyOf[KeyedServiceFactory.OtherTechnicianId], asset: "K-101B");
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));

        using var list = await technician.GetAsync(new Uri("/v1/evaluations?asset=K-101B", UriKind.Relative));
        var ids = (await Json.ReadAsync(list)).At("evaluations").EnumerateArray().Select(e => e.At("id").GetGuid()).ToArray();
        Assert.Equal([own], ids);

        using var read = await technician.GetAsync(new Uri($"/v1/evaluations/{other}", UriKind.Relative));
        Assert.Equal(HttpStatusCode.NotFound, read.StatusCode);
    }

    [Fact]
    public async Task Evaluate_WhenCalledByTheGate_RecordsTheKeyIdAsCallerAndNeverTheKey()
    {
        var gateKey = factory.KeyFor(Roles.Gate);
        var id = await factory.EvaluateAsAsync(gateKey);

        using var admin = factory.ClientWith(factory.KeyFor(Roles.Admin));
        using var response = await admin.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative));
        var text = await response.Content.ReadAsStringAsync();

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("permit-gate", (await Json.ReadAsync(response)).At("caller").GetString());
        Assert.DoesNotContain(gateKey, text, StringComparison.Ordinal);
    }

    private async Task<HttpRequestMessage> RequestAsync(string endpoint)
    {
        var (method, path) = (endpoint.Split(' ')[0], endpoint.Split(' ')[1]);
        if (path.Contains("{id}", StringComparison.Ordinal))
        {
            path = path.Replace("{id}", (await TechnicianRecordAsync()).ToString(), StringComparison.Ordinal);
        }

        var request = new HttpRequestMessage(new HttpMethod(method), new Uri(path, UriKind.Relative));
        request.Content = path switch
        {
            "/v1/evaluations" => new StringContent(Requests.PassingStage().ToJsonString(), Encoding.UTF8, "application/json"),
            "/v1/rules/check" => new StringContent("schemaVersion: 1\n", Encoding.UTF8, "application/yaml"),
            "/v1/evaluations/batch" => new StringContent("{\"evaluations\": [" + Requests.Minimal().ToJsonString() + "]}", Encoding.UTF8, "application/json"),
            "/v1/admin/retention" => new StringContent("""{"deleteBefore": "2000-01-01T00:00:00Z", "reason": "access matrix", "dryRun": true}""", Encoding.UTF8, "application/json"),
            _ => request.Content,
        };
        return request;
    }

    // One record by the technician tablet-07, made once per host.
    private Task<Guid> TechnicianRecordAsync() => RecordCache.GetOrAdd(factory, f => f.EvaluateAsAsync(f.KeyFor(Roles.Technician)));

    private static readonly System.Runtime.CompilerServices.ConditionalWeakTable<KeyedServiceFactory, Task<Guid>> RecordCache = [];
}
