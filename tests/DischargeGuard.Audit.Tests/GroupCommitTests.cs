namespace DischargeGuard.Audit.Tests;

public sealed class GroupCommitTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    [Fact]
    public async Task Append_When500RunConcurrently_AllLandInFewerTransactions()
    {
        var store = await _folder.OpenAsync();
        var records = Enumerable.Range(0, 500)
            .Select(i => Sample.Record(at: Sample.Start.AddMilliseconds(i), asset: $"K-{100 + (i % 7)}A"))
            .ToArray();

        await Task.WhenAll(records.Select(r => Task.Run(() => store.AppendAsync(r, CancellationToken.None).AsTask())));

        var stats = store.Statistics;
        Assert.Equal(500, stats.Records);
        Assert.InRange(stats.Batches, 1, 499);
        Assert.True(stats.LargestBatchSize > 1, $"largest batch was {stats.LargestBatchSize}");
        Assert.Equal(0, stats.FailedBatches);
        Assert.Equal(500, _folder.CountEvaluations());
        foreach (var record in records.Where((_, i) => i % 50 == 0))
        {
            Assert.Equal(record.Response, (await store.GetAsync(record.Id, CancellationToken.None))?.Response);
        }
    }

    [Fact]
    public async Task Append_WhenQueuedBehindBusyWriter_CommitsInBatchesOfAtMostMaxBatchSize()
    {
        var store = await _folder.OpenAsync(_folder.Options(maxBatchSize: 16));
        var release = new TaskCompletionSource();
        await store.HoldWriterForTestingAsync(release.Task);
        var appends = Enumerable.Range(0, 40)
            .Select(i => store.AppendAsync(Sample.Record(at: Sample.Start.AddSeconds(i)), CancellationToken.None).AsTask())
            .ToArray();

        release.SetResult();
        await Task.WhenAll(appends);

        var stats = store.Statistics;
        Assert.Equal(3, stats.Batches); // 16 + 16 + 8
        Assert.Equal(16, stats.LargestBatchSize);
        Assert.Equal(8, stats.LastBatchSize);
        Assert.Equal(40, stats.Records);
        Assert.Equal(40, _folder.CountEvaluations());
    }
}
