using Microsoft.Data.Sqlite;

namespace DischargeGuard.Audit.Tests;

public sealed class StoreFullTests : IAsyncLifetime
{
    private const int SqliteFull = 13;
    private readonly TempAuditFolder _folder = new();

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    [Fact]
    public async Task Append_WhenDatabaseCannotGrow_ThrowsUnavailableAndRecoversOnceLimitIsRaised()
    {
        var store = await _folder.OpenAsync();
        var first = Sample.Record();
        await store.AppendAsync(first, CancellationToken.None);
        var pages = await store.SetMaxPageCountForTestingAsync(1);
        Assert.True(pages > 1, $"page count {pages}");

        var big = Sample.Record(at: Sample.Start.AddMinutes(1), responsePadding: 256 * 1024);
        var e = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.AppendAsync(big, CancellationToken.None).AsTask());

        Assert.Equal(SqliteFull, Assert.IsType<SqliteException>(e.InnerException).SqliteErrorCode);
        Assert.Equal(1, _folder.CountEvaluations());
        Assert.Null(await store.GetAsync(big.Id, CancellationToken.None));
        Assert.Equal(1, store.Statistics.FailedBatches);

        await store.SetMaxPageCountForTestingAsync(null);
        await store.AppendAsync(big, CancellationToken.None);

        Assert.Equal(big.Response, (await store.GetAsync(big.Id, CancellationToken.None))?.Response);
        Assert.Equal(2, _folder.CountEvaluations());
    }

    [Fact]
    public async Task Append_WhenOneRecordOfBatchDoesNotFit_RollsBackWholeBatch()
    {
        var store = await _folder.OpenAsync();
        await store.AppendAsync(Sample.Record(), CancellationToken.None);
        await store.SetMaxPageCountForTestingAsync(1);
        var release = new TaskCompletionSource();
        await store.HoldWriterForTestingAsync(release.Task);

        // Small records that fit in free space on their own, queued with one that cannot fit: one batch.
        var batch = new[]
        {
            Sample.Record(at: Sample.Start.AddSeconds(1), asset: "K-101B"),
            Sample.Record(at: Sample.Start.AddSeconds(2), asset: "K-101C", responsePadding: 256 * 1024),
            Sample.Record(at: Sample.Start.AddSeconds(3), asset: "K-101D"),
        };
        var appends = batch.Select(r => store.AppendAsync(r, CancellationToken.None).AsTask()).ToArray();
        release.SetResult();

        foreach (var append in appends)
        {
            await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => append);
        }

        Assert.Equal(1, _folder.CountEvaluations());
        Assert.Equal(1, store.Statistics.FailedBatches);
        Assert.Equal(1, store.Statistics.Batches);

        // Still capped: alone, the small record fits, so it was the rollback that kept it out before.
        await store.AppendAsync(batch[0], CancellationToken.None);
        Assert.Equal(2, _folder.CountEvaluations());
    }
}
