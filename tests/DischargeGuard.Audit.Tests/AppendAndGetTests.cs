using System.Security.Cryptography;
using System.Text;

namespace DischargeGuard.Audit.Tests;

public sealed class AppendAndGetTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    [Fact]
    public async Task Get_WhenRecordWasAppended_ReturnsIdenticalBytesAndTheirSha256()
    {
        var store = await _folder.OpenAsync();
        var record = Sample.Record() with
        {
            // Bytes a re-serialisation would change: odd spacing, key order, escaped and raw non-ASCII.
            Response = Encoding.UTF8.GetBytes("{ \"verdict\" :\"review\",\"note\":\"marge \\u00e9troite\", \"t\":\"151.0 °C\"  }\n"),
        };

        await store.AppendAsync(record, CancellationToken.None);
        var read = await store.GetAsync(record.Id, CancellationToken.None);

        Assert.NotNull(read);
        Assert.Equal(record.Request, read.Request);
        Assert.Equal(record.Response, read.Response);
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(record.Request)), read.RequestSha256);
        Assert.Equal(AuditDigest.Sha256Hex(record.Response), read.ResponseSha256);
        Assert.Equal(record.Id, read.Id);
        Assert.Equal(record.EvaluatedAt, read.EvaluatedAt);
        Assert.Equal(TimeSpan.Zero, read.EvaluatedAt.Offset);
        Assert.Equal(record.Caller, read.Caller);
        Assert.Equal(record.Asset, read.Asset);
        Assert.Equal(record.SiteId, read.SiteId);
        Assert.Equal(record.Verdict, read.Verdict);
        Assert.Equal(record.RuleDigest, read.RuleDigest);
        Assert.Equal(record.EngineVersion, read.EngineVersion);
        Assert.Null(read.ReplayOf);
    }

    [Fact]
    public async Task Append_WhenItCompletes_RowIsVisibleToAnotherConnectionWithStoredHashes()
    {
        var store = await _folder.OpenAsync();
        var record = Sample.Record();

        await store.AppendAsync(record, CancellationToken.None);

        using var raw = _folder.OpenRaw();
        using var command = raw.CreateCommand();
        command.CommandText = "SELECT request_sha256, response_sha256, evaluated_at FROM evaluations WHERE id = $id;";
        command.Parameters.AddWithValue("$id", record.Id.ToString());
        using var reader = command.ExecuteReader();
        Assert.True(reader.Read());
        Assert.Equal(AuditDigest.Sha256Hex(record.Request), reader.GetString(0));
        Assert.Equal(AuditDigest.Sha256Hex(record.Response), reader.GetString(1));
        Assert.Equal("2026-03-14T09:26:53.0000000Z", reader.GetString(2));
    }

    [Fact]
    public async Task Get_WhenStoreWasReopened_ReturnsRecordCommittedBefore()
    {
        var record = Sample.Record(at: Sample.Start.AddTicks(1234567)) with { ReplayOf = Guid.CreateVersion7(Sample.Start) };
        await using (var first = await SqliteAuditStoreOpen())
        {
            await first.AppendAsync(record, CancellationToken.None);
        }

        var second = await _folder.OpenAsync();
        var read = await second.GetAsync(record.Id, CancellationToken.None);

        Assert.NotNull(read);
        Assert.Equal(record.Response, read.Response);
        Assert.Equal(record.EvaluatedAt.UtcTicks, read.EvaluatedAt.UtcTicks);
        Assert.Equal(record.ReplayOf, read.ReplayOf);
    }

    [Fact]
    public async Task Get_WhenIdUnknown_ReturnsNull()
    {
        var store = await _folder.OpenAsync();
        await store.AppendAsync(Sample.Record(), CancellationToken.None);

        Assert.Null(await store.GetAsync(Guid.CreateVersion7(), CancellationToken.None));
    }

    [Fact]
    public async Task Append_WhenTimeHasOffset_StoresSameInstantInUtc()
    {
        var store = await _folder.OpenAsync();
        var local = new DateTimeOffset(2026, 3, 14, 11, 26, 53, TimeSpan.FromHours(2));
        var record = Sample.Record(at: local);

        await store.AppendAsync(record, CancellationToken.None);
        var read = await store.GetAsync(record.Id, CancellationToken.None);

        Assert.NotNull(read);
        Assert.Equal(Sample.Start, read.EvaluatedAt);
        Assert.Equal(TimeSpan.Zero, read.EvaluatedAt.Offset);
    }

    [Fact]
    public async Task Append_WhenIdIsNotVersion7_ThrowsArgumentExceptionAndStoresNothing()
    {
        var store = await _folder.OpenAsync();

        await Assert.ThrowsAsync<ArgumentException>(() => store.AppendAsync(Sample.Record() with { Id = Guid.NewGuid() }, CancellationToken.None).AsTask());

        Assert.Equal(0, _folder.CountEvaluations());
    }

    [Theory]
    [InlineData("PASS")]
    [InlineData("ok")]
    [InlineData("")]
    public async Task Append_WhenVerdictUnknown_ThrowsArgumentOutOfRange(string verdict)
    {
        var store = await _folder.OpenAsync();

        var e = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => store.AppendAsync(Sample.Record() with { Verdict = verdict }, CancellationToken.None).AsTask());

        Assert.Equal("record", e.ParamName);
    }

    [Fact]
    public async Task Append_WhenSuppliedHashDoesNotMatchBytes_ThrowsArgumentException()
    {
        var store = await _folder.OpenAsync();
        var record = Sample.Record();

        await Assert.ThrowsAsync<ArgumentException>(() => store.AppendAsync(record with { ResponseSha256 = AuditDigest.Sha256Hex(record.Request) }, CancellationToken.None).AsTask());
        await store.AppendAsync(record with { ResponseSha256 = AuditDigest.Sha256Hex(record.Response) }, CancellationToken.None);

        Assert.Equal(1, _folder.CountEvaluations());
    }

    [Fact]
    public async Task Append_WhenRuleDigestIsNotLowerHex_ThrowsArgumentException()
    {
        var store = await _folder.OpenAsync();

        await Assert.ThrowsAsync<ArgumentException>(() => store.AppendAsync(Sample.Record() with { RuleDigest = Sample.Digest.ToUpperInvariant() }, CancellationToken.None).AsTask());
    }

    [Fact]
    public async Task Append_WhenTokenAlreadyCancelled_ThrowsAndStoresNothing()
    {
        var store = await _folder.OpenAsync();

        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => store.AppendAsync(Sample.Record(), new CancellationToken(canceled: true)).AsTask());

        Assert.Equal(0, _folder.CountEvaluations());
    }

    [Fact]
    public async Task Append_WhenStoreDisposed_ThrowsAuditStoreUnavailable()
    {
        var store = await _folder.OpenAsync();
        await store.DisposeAsync();

        await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.AppendAsync(Sample.Record(), CancellationToken.None).AsTask());
        await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.GetAsync(Guid.CreateVersion7(), CancellationToken.None));
    }

    [Fact]
    public async Task Dispose_WhenAppendsAreQueued_FaultsThemAndStoresNone()
    {
        var store = await _folder.OpenAsync();
        var release = new TaskCompletionSource();
        await store.HoldWriterForTestingAsync(release.Task);
        var queued = Enumerable.Range(0, 3).Select(i => store.AppendAsync(Sample.Record(asset: $"K-10{i}B"), CancellationToken.None).AsTask()).ToArray();

        var disposing = store.DisposeAsync();
        release.SetResult();
        await disposing;

        foreach (var append in queued)
        {
            await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => append);
        }

        Assert.Equal(0, _folder.CountEvaluations());
    }

    private Task<Sqlite.SqliteAuditStore> SqliteAuditStoreOpen() =>
        Sqlite.SqliteAuditStore.OpenAsync(_folder.Options(), CancellationToken.None);
}
