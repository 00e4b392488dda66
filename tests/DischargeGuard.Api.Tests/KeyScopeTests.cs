using System.Net;
using System.Text;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// What a key reads follows from the sites (and assets) it is bound to, never from what it has posted: list, get,
/// verify, the trend history an evaluation draws on, and the export. Each test uses asset tags of its own.
/// </summary>
public sealed class KeyScopeTests(KeyedServiceFactory factory) : IClassFixture<KeyedServiceFactory>
{
    private string Key(string id) => factory.KeyOf[id];

    private async Task<Guid[]> ListAsync(string key, string query)
    {
        using var client = factory.ClientWith(key);
        using var response = await client.GetAsync(new Uri("/v1/evaluations?" + query, UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        return [.. (await Json.ReadAsync(response)).At("evaluations").EnumerateArray().Select(e => e.At("id").GetGuid())];
    }

    private async Task<HttpStatusCode> GetStatusAsync(string key, string path)
    {
        using var client = factory.ClientWith(key);
        using var response = await client.GetAsync(new Uri(path, UriKind.Relative));
        return response.StatusCode;
    }

    [Fact]
    public async Task List_WhenUnboundTechnicianPostsUnderAGuessedAssetAtAnotherSite_SeesOnlyItsOwnRecords()
    {
        // Another technician's records of K-340A at marlow-fen; then tablet-07 posts one evaluation of the same tag.
        var others = new[]
        {
            await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "K-340A", "marlow-fen"),
            await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "K-340A", "marlow-fen"),
        };
        var own = await factory.EvaluateAsAsync(factory.KeyFor(Roles.Technician), "K-340A", "kestrel-ridge");
        var technician = factory.KeyFor(Roles.Technician);

        Assert.Equal([own], await ListAsync(technician, "asset=K-340A"));
        Assert.Empty(await ListAsync(technician, "asset=K-340A&site=marlow-fen"));
        foreach (var id in others)
        {
            Assert.Equal(HttpStatusCode.NotFound, await GetStatusAsync(technician, $"/v1/evaluations/{id}"));
            Assert.Equal(HttpStatusCode.NotFound, await GetStatusAsync(technician, $"/v1/evaluations/{id}/verify"));
        }

        Assert.Equal(HttpStatusCode.OK, await GetStatusAsync(technician, $"/v1/evaluations/{own}"));
    }

    [Fact]
    public async Task Read_WhenTechnicianIsBoundToASite_SeesEveryCallersRecordsThereAndNoneElsewhere()
    {
        var otherHere = await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "K-341A", "kestrel-ridge");
        var otherThere = await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "K-341A", "marlow-fen");
        var bound = Key("tablet-kr");

        Assert.Equal([otherHere], await ListAsync(bound, "asset=K-341A"));
        Assert.Equal(HttpStatusCode.OK, await GetStatusAsync(bound, $"/v1/evaluations/{otherHere}"));
        Assert.Equal(HttpStatusCode.NotFound, await GetStatusAsync(bound, $"/v1/evaluations/{otherThere}"));
        Assert.Equal(HttpStatusCode.NotFound, await GetStatusAsync(bound, $"/v1/evaluations/{otherThere}/verify"));

        // Sites ["*"] restores the reach of every site.
        Assert.Equal([otherThere, otherHere], await ListAsync(Key("tablet-any"), "asset=K-341A"));
    }

    [Fact]
    public async Task Read_WhenTechnicianIsBoundToAnAsset_SeesOnlyThatAssetOfItsSite()
    {
        var bound = await factory.EvaluateAsAsync(Key("tablet-mf-c204b"), "C-204B", "marlow-fen");
        var sameSiteOtherAsset = await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "C-205A", "marlow-fen");

        var visible = await ListAsync(Key("tablet-mf-c204b"), "site=marlow-fen&limit=1000");

        Assert.Contains(bound, visible);
        Assert.DoesNotContain(sameSiteOtherAsset, visible);
        Assert.Equal(HttpStatusCode.NotFound, await GetStatusAsync(Key("tablet-mf-c204b"), $"/v1/evaluations/{sameSiteOtherAsset}"));
    }

    [Theory]
    [InlineData("tablet-kr", "K-342A", "marlow-fen")]
    [InlineData("tablet-mf-c204b", "C-204A", "marlow-fen")]
    [InlineData("tablet-mf-c204b", "C-204B", "kestrel-ridge")]
    [InlineData("tablet-kr", "K-342A", null)]
    public async Task Evaluate_WhenBoundKeyPostsOutsideItsScope_Answers403ProblemAndStoresNothing(string keyId, string asset, string? site)
    {
        var request = Requests.PassingStage();
        request["asset"] = asset;
        if (site is null)
        {
            request.Remove("site");
        }
        else
        {
            request["site"]!["id"] = site;
        }

        var store = factory.Services.GetRequiredService<IAuditStore>();
        var before = store.Statistics.Records;
        using var client = factory.ClientWith(Key(keyId));
        using var content = new StringContent(request.ToJsonString(), Encoding.UTF8, "application/json");
        using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.Forbidden, "forbidden");
        Assert.Contains("bound", problem.At("detail").GetString(), StringComparison.Ordinal);
        Assert.Equal(before, store.Statistics.Records);
    }

    [Fact]
    public async Task Trend_WhenUnboundTechnicianEvaluatesAnAssetOthersMeasured_DrawsOnlyOnItsOwnRecords()
    {
        // Five evaluations with a measurement by another key would give R-DEVIATION-TREND its window of 5 (rules/default.yaml).
        for (var i = 0; i < 5; i++)
        {
            await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "K-343A");
        }

        using var client = factory.ClientWith(factory.KeyFor(Roles.Technician));
        var request = Requests.PassingStage();
        request["asset"] = "K-343A";
        using var content = new StringContent(request.ToJsonString(), Encoding.UTF8, "application/json");
        using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);
        var body = await Json.ReadAsync(response);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.DoesNotContain(body.At("stages[0].findings").EnumerateArray(), f => f.At("ruleId").GetString() == "R-DEVIATION-TREND");
        Assert.Contains(body.At("stages[0].notChecked").EnumerateArray(), n => n.At("ruleId").GetString() == "R-DEVIATION-TREND");

        // A key bound to the site draws on the site's history, whoever made it.
        using var bound = factory.ClientWith(Key("tablet-kr"));
        using var boundContent = new StringContent(request.ToJsonString(), Encoding.UTF8, "application/json");
        using var boundResponse = await bound.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), boundContent);
        var boundBody = await Json.ReadAsync(boundResponse);
        Assert.Contains(boundBody.At("stages[0].findings").EnumerateArray(), f => f.At("ruleId").GetString() == "R-DEVIATION-TREND");
    }

    [Fact]
    public async Task Export_WhenPlannerIsBoundToASite_ExportsOnlyThatSitesRecords()
    {
        var here = await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "K-344A", "marlow-fen");
        var there = await factory.EvaluateAsAsync(Key(KeyedServiceFactory.OtherTechnicianId), "K-344A", "kestrel-ridge");

        using var bound = factory.ClientWith(Key("planner-mf"));
        var boundCsv = await bound.GetStringAsync(new Uri("/v1/evaluations/export?asset=K-344A", UriKind.Relative));
        using var unbound = factory.ClientWith(factory.KeyFor(Roles.Planner));
        var unboundCsv = await unbound.GetStringAsync(new Uri("/v1/evaluations/export?asset=K-344A", UriKind.Relative));

        Assert.Contains(here.ToString(), boundCsv, StringComparison.Ordinal);
        Assert.DoesNotContain(there.ToString(), boundCsv, StringComparison.Ordinal);
        Assert.Contains(there.ToString(), unboundCsv, StringComparison.Ordinal);
        Assert.Equal(HttpStatusCode.NotFound, await GetStatusAsync(Key("planner-mf"), $"/v1/evaluations/{there}"));
    }
}
