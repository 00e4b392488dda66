using System.Net;
using Microsoft.Data.Sqlite;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The chain through the service: the head and the whole-chain verification for admins, the per-record verification that
/// now covers every column, and readiness on a file whose guard triggers were dropped. Each test has a host of its own.
/// </summary>
public sealed class AuditChainEndpointTests
{
    private static void Raw(ServiceFactory factory, string sql)
    {
        using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = factory.DatabasePath, Pooling = false }.ToString());
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    private static async Task<Guid[]> EvaluateAsync(ServiceFactory factory, int count)
    {
        var ids = new Guid[count];
        for (var i = 0; i < count; i++)
        {
            using var response = await factory.EvaluateAsync(Requests.PassingStage());
            ids[i] = (await Json.ReadAsync(response)).At("id").GetGuid();
        }

        return ids;
    }

    [Fact]
    public async Task VerifyAndHead_WhenNothingWasTouched_AreIntactAndAgree()
    {
        await using var factory = new ServiceFactory();
        var ids = await EvaluateAsync(factory, 3);

        var (headResponse, head) = await factory.GetJsonAsync("/v1/admin/audit/head");
        var (verifyResponse, verify) = await factory.GetJsonAsync("/v1/admin/audit/verify");
        var (_, record) = await factory.GetJsonAsync($"/v1/evaluations/{ids[2]}/verify");

        Assert.Equal(HttpStatusCode.OK, headResponse.StatusCode);
        Assert.Equal(3, head.At("sequence").GetInt64());
        Assert.Equal(ids[2], head.At("recordId").GetGuid());
        Assert.Equal(HttpStatusCode.OK, verifyResponse.StatusCode);
        Assert.True(verify.At("intact").GetBoolean(), verify.ToString());
        Assert.Equal(3, verify.At("records").GetInt64());
        Assert.Equal(head.At("hash").GetString(), verify.At("head.hash").GetString());
        Assert.True(record.At("intact").GetBoolean());
        Assert.Equal(head.At("hash").GetString(), record.At("storedRecordSha256").GetString());
    }

    [Fact]
    public async Task Verify_WhenAVerdictIsChangedBehindTheDroppedTrigger_ReportsItAndReadinessIsUnhealthy()
    {
        await using var factory = new ServiceFactory();
        var ids = await EvaluateAsync(factory, 3);

        Raw(factory, $"DROP TRIGGER evaluations_no_update; UPDATE evaluations SET verdict = 'fail' WHERE id = '{ids[1]}';");
        var (_, record) = await factory.GetJsonAsync($"/v1/evaluations/{ids[1]}/verify");
        var (_, chain) = await factory.GetJsonAsync("/v1/admin/audit/verify");
        var (ready, readiness) = await factory.GetJsonAsync("/health/ready");

        // The body hashes still match: only the record hash shows the change.
        Assert.False(record.At("intact").GetBoolean());
        Assert.Equal(record.At("responseSha256").GetString(), record.At("storedResponseSha256").GetString());
        Assert.NotEqual(record.At("recordSha256").GetString(), record.At("storedRecordSha256").GetString());
        Assert.False(chain.At("intact").GetBoolean());
        Assert.Equal(2, chain.At("firstBreak.sequence").GetInt64());
        Assert.Equal(ids[1], chain.At("firstBreak.recordId").GetGuid());
        Assert.Equal(HttpStatusCode.ServiceUnavailable, ready.StatusCode);
        Assert.Equal("Unhealthy", readiness.At("checks.audit.status").GetString());
        Assert.Contains("evaluations_no_update", readiness.At("checks.audit.description").GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Verify_WhenARowIsDeletedBehindTheDroppedTrigger_ReportsTheGap()
    {
        await using var factory = new ServiceFactory();
        var ids = await EvaluateAsync(factory, 3);

        Raw(factory, $"DROP TRIGGER evaluations_no_delete; DELETE FROM evaluations WHERE id = '{ids[0]}';");
        var (_, chain) = await factory.GetJsonAsync("/v1/admin/audit/verify");

        Assert.False(chain.At("intact").GetBoolean());
        Assert.Equal(1, chain.At("firstBreak.sequence").GetInt64());
        Assert.Contains("missing", chain.At("firstBreak.reason").GetString(), StringComparison.Ordinal);
    }
}
