namespace DischargeGuard.Audit.Tests;

public sealed class HealthTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    [Fact]
    public async Task CheckHealth_WhenAnotherProcessHoldsWriteLock_ReportsNotWritableThenRecovers()
    {
        var store = await _folder.OpenAsync(_folder.Options(busyTimeout: TimeSpan.FromMilliseconds(100)));
        using (var locker = _folder.OpenRaw())
        {
            using (var begin = locker.CreateCommand())
            {
                begin.CommandText = "BEGIN IMMEDIATE;";
                begin.ExecuteNonQuery();
            }

            var locked = await store.CheckHealthAsync(CancellationToken.None);
            var append = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.AppendAsync(Sample.Record(), CancellationToken.None).AsTask());

            Assert.True(locked.Reachable);
            Assert.False(locked.Writable);
            Assert.Contains("locked", locked.LastError, StringComparison.OrdinalIgnoreCase);
            Assert.NotNull(locked.LastErrorAt);
            Assert.Contains("locked", append.Message, StringComparison.OrdinalIgnoreCase);

            using var rollback = locker.CreateCommand();
            rollback.CommandText = "ROLLBACK;";
            rollback.ExecuteNonQuery();
        }

        var recovered = await store.CheckHealthAsync(CancellationToken.None);
        await store.AppendAsync(Sample.Record(), CancellationToken.None);

        Assert.True(recovered.Writable);
        Assert.Equal(1, _folder.CountEvaluations());
    }
}
