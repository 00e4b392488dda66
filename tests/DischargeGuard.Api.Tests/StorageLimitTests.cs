using System.Globalization;
using System.Net;
using System.Text;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>Keys whose technician quota is 40 000 bytes a day (two or three ordinary records).</summary>
public sealed class SmallQuotaServiceFactory() : KeyedServiceFactory(new Dictionary<string, string?>
{
    ["RateLimits:PermitsPerSecond"] = "100000",
    ["RateLimits:Burst"] = "100000",
    ["Quotas:BytesPerDay:technician"] = "40000",
});

/// <summary>A service whose audit volume must keep more free bytes than any disk has.</summary>
public sealed class FullVolumeServiceFactory() : ServiceFactory(new Dictionary<string, string?> { ["Audit:MinFreeBytes"] = long.MaxValue.ToString(CultureInfo.InvariantCulture) });

/// <summary>A service whose records may hold at most <paramref name="cap"/> bytes.</summary>
public sealed class SmallRecordServiceFactory(long cap) : ServiceFactory(new Dictionary<string, string?> { ["Quotas:MaxRecordBytes"] = cap.ToString(CultureInfo.InvariantCulture) });

/// <summary>
/// One key cannot fill the disk: a daily storage quota per key (429 with the reason and Retry-After), a cap on what one
/// record stores (413 before anything is recorded), and a free-space threshold (readiness Unhealthy, evaluations 503).
/// </summary>
public sealed class StorageLimitTests
{
    private static async Task<HttpResponseMessage> PostAsync(HttpClient client, string query = "")
    {
        using var content = new StringContent(Requests.PassingStage().ToJsonString(), Encoding.UTF8, "application/json");
        return await client.PostAsync(new Uri("/v1/evaluations" + query, UriKind.Relative), content);
    }

    [Fact]
    public async Task Evaluate_WhenTheKeysDailyQuotaIsSpent_Answers429WithReasonAndRetryAfterAndStoresNothing()
    {
        await using var factory = new SmallQuotaServiceFactory();
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        var store = factory.Services.GetRequiredService<IAuditStore>();
        var accepted = 0;
        HttpResponseMessage? refused = null;
        for (var i = 0; i < 20 && refused is null; i++)
        {
            var response = await PostAsync(technician);
            if (response.StatusCode == HttpStatusCode.OK)
            {
                accepted++;
                response.Dispose();
            }
            else
            {
                refused = response;
            }
        }

        Assert.NotNull(refused);
        using (refused)
        {
            var problem = await AssertEx.ProblemAsync(refused, HttpStatusCode.TooManyRequests, "storage-quota-exceeded");
            Assert.Contains("40000 bytes", problem.At("detail").GetString(), StringComparison.Ordinal);
            var retryAfter = int.Parse(Assert.Single(refused.Headers.GetValues("Retry-After")), CultureInfo.InvariantCulture);
            Assert.InRange(retryAfter, 1, 86_400);
        }

        Assert.InRange(accepted, 1, 19);
        Assert.Equal(accepted, store.Statistics.Records);

        // Another key's quota is its own, and a gate key has the gate role's default.
        using var other = factory.ClientWith(factory.KeyOf[KeyedServiceFactory.OtherTechnicianId]);
        using var otherResponse = await PostAsync(other);
        Assert.Equal(HttpStatusCode.OK, otherResponse.StatusCode);
        using var gate = factory.ClientWith(factory.KeyFor(Roles.Gate));
        using var gateResponse = await PostAsync(gate);
        Assert.Equal(HttpStatusCode.OK, gateResponse.StatusCode);
    }

    [Fact]
    public async Task Evaluate_WhenTheRecordWouldExceedTheCap_Answers413BeforeAnythingIsRecorded()
    {
        // What the same request stores without and with the curve, on a service with the default cap.
        long smallBytes, largeBytes;
        await using (var measuring = new ServiceFactory())
        {
            using var client = measuring.CreateClient();
            var store = measuring.Services.GetRequiredService<IAuditStore>();
            async Task<long> SizeAsync(string query)
            {
                using var response = await PostAsync(client, query);
                var record = await store.GetAsync((await Json.ReadAsync(response)).At("id").GetGuid(), CancellationToken.None);
                return record!.Request.Length + record.Response.Length;
            }

            smallBytes = await SizeAsync(string.Empty);
            largeBytes = await SizeAsync("?curve=true");
        }

        Assert.True(largeBytes > smallBytes + 1000, $"{smallBytes} and {largeBytes}");
        var cap = (smallBytes + largeBytes) / 2;
        await using var factory = new SmallRecordServiceFactory(cap);
        using var client2 = factory.CreateClient();

        using var small = await PostAsync(client2);
        using var large = await PostAsync(client2, "?curve=true");

        Assert.Equal(HttpStatusCode.OK, small.StatusCode);
        var problem = await AssertEx.ProblemAsync(large, HttpStatusCode.RequestEntityTooLarge, "record-too-large");
        Assert.Contains(cap.ToString(CultureInfo.InvariantCulture), problem.At("detail").GetString(), StringComparison.Ordinal);
        Assert.Equal(1, factory.Services.GetRequiredService<IAuditStore>().Statistics.Records);
    }

    [Fact]
    public async Task Readiness_WhenTheAuditVolumeIsBelowTheFreeSpaceThreshold_IsUnhealthyAndEvaluationsAre503()
    {
        await using var factory = new FullVolumeServiceFactory();
        var store = factory.Services.GetRequiredService<IAuditStore>();

        var (ready, readiness) = await factory.GetJsonAsync("/health/ready");
        using var refused = await factory.EvaluateAsync(Requests.PassingStage());

        Assert.Equal(HttpStatusCode.ServiceUnavailable, ready.StatusCode);
        Assert.Equal("Unhealthy", readiness.At("checks.audit.status").GetString());
        Assert.Contains("free on the audit volume", readiness.At("checks.audit.description").GetString(), StringComparison.Ordinal);
        await AssertEx.ProblemAsync(refused, HttpStatusCode.ServiceUnavailable, "audit-storage-low");
        Assert.Equal("5", Assert.Single(refused.Headers.GetValues("Retry-After")));
        Assert.Equal(0, store.Statistics.Records);
    }

    [Theory]
    [InlineData(10_000_000_000L, 1_000_000_000L, 0L, 0L, "Ok")]
    [InlineData(1_500_000_000L, 1_000_000_000L, 0L, 0L, "Low")]
    [InlineData(48L * 1024, 1_000_000_000L, 0L, 0L, "Full")] // 48 KiB left: the case the service used to call Healthy
    [InlineData(null, 1_000_000_000L, 5_000_000_000L, 6_000_000_000L, "Full")] // PostgreSQL at its cap
    [InlineData(null, 1_000_000_000L, 5_000_000_000L, 4_600_000_000L, "Low")]
    [InlineData(null, 1_000_000_000L, 0L, 9_000_000_000L, "Ok")] // no PostgreSQL cap configured
    public void Assess_WhenRoomIsAtAGivenLevel_ReportsIt(long? free, long minFree, long maxDatabase, long used, string expected)
    {
        var state = StorageGuard.Assess(new AuditStorage(free, used), new AuditSettings { MinFreeBytes = minFree, MaxDatabaseBytes = maxDatabase }, DateTimeOffset.UnixEpoch);

        Assert.Equal(expected, state.Level.ToString());
    }
}
