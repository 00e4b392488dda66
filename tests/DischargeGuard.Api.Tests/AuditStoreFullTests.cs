using System.Net;
using DischargeGuard.Audit;
using DischargeGuard.Audit.Sqlite;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>A full store (SQLite max_page_count capped: CI runs as root, so file permissions would not stop a write).</summary>
public sealed class AuditStoreFullTests
{
    [Fact]
    public async Task Evaluate_WhenAuditStoreIsFull_Answers503WithRetryAfterStoresNothingAndRecoversWithoutRestart()
    {
        await using var factory = new ServiceFactory();
        using var first = await factory.EvaluateAsync(Requests.PassingStage());
        Assert.Equal(HttpStatusCode.OK, first.StatusCode);
        var store = Assert.IsType<SqliteAuditStore>(factory.Services.GetRequiredService<IAuditStore>());
        var before = store.Statistics;
        var storedBefore = await CountAsync(store);

        var pages = await store.SetMaxPageCountForTestingAsync(1);
        Assert.True(pages > 1, $"page count {pages}");
        // The curve makes the answer span several pages, so it cannot fit in the file's free space.
        using var refused = await factory.EvaluateAsync(Requests.PassingStage(), "?curve=true");

        var problem = await AssertEx.ProblemAsync(refused, HttpStatusCode.ServiceUnavailable, "audit-unavailable");
        Assert.Contains("nothing was stored", problem.At("detail").GetString(), StringComparison.Ordinal);
        Assert.Equal("5", Assert.Single(refused.Headers.GetValues("Retry-After")));
        Assert.False(problem.Has("id"), "a refused evaluation gives no id");
        Assert.Equal(storedBefore, await CountAsync(store));
        Assert.Equal(before.Records, store.Statistics.Records);
        Assert.Equal(before.FailedBatches + 1, store.Statistics.FailedBatches);

        // The readiness probe allocates (and rolls back) new pages, so a full file is reported: not ready.
        var (ready, readiness) = await factory.GetJsonAsync("/health/ready");
        Assert.Equal(HttpStatusCode.ServiceUnavailable, ready.StatusCode);
        Assert.Equal("Unhealthy", readiness.At("checks.audit.status").GetString());

        await store.SetMaxPageCountForTestingAsync(null);
        var (readyAgain, readinessAgain) = await factory.GetJsonAsync("/health/ready");
        Assert.Equal(HttpStatusCode.OK, readyAgain.StatusCode);
        Assert.Equal("Healthy", readinessAgain.At("checks.audit.status").GetString());
        using var recovered = await factory.EvaluateAsync(Requests.PassingStage(), "?curve=true");
        var body = await Json.ReadAsync(recovered);

        Assert.Equal(HttpStatusCode.OK, recovered.StatusCode);
        var (get, _) = await factory.GetJsonAsync($"/v1/evaluations/{body.At("id").GetGuid()}");
        Assert.Equal(HttpStatusCode.OK, get.StatusCode);
        Assert.Equal(storedBefore + 1, await CountAsync(store));
    }

    private static async Task<int> CountAsync(SqliteAuditStore store)
    {
        var n = 0;
        await foreach (var _ in store.QueryAsync(new AuditQuery { Asset = "K-101A" }, CancellationToken.None))
        {
            n++;
        }

        return n;
    }
}
