namespace DischargeGuard.Audit.Tests;

/// <summary>SQLite-specific: the stored text form of a row. The shared expectations are in <see cref="AuditStoreContract"/>.</summary>
public sealed class AppendAndGetTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

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
}
