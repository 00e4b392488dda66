using DischargeGuard.Audit.Sqlite;

namespace DischargeGuard.Audit.Tests;

public sealed class QueryTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();
    private SqliteAuditStore _store = null!;
    private List<AuditRecord> _records = null!;

    public async Task InitializeAsync()
    {
        _store = await _folder.OpenAsync();
        string[] verdicts = [AuditVerdict.Pass, AuditVerdict.Review, AuditVerdict.Fail];

        // 25 records; every three share a timestamp, so the id tie-break decides their order.
        _records = Enumerable.Range(0, 25)
            .Select(i => Sample.Record(
                at: Sample.Start.AddMinutes(i / 3),
                asset: i % 2 == 0 ? "K-101A" : "K-102B",
                site: i % 5 == 0 ? "osprey-flats" : Sample.Site,
                verdict: verdicts[i % 3],
                caller: i % 4 == 0 ? AuditRecord.AnonymousCaller : "key-field-07"))
            .ToList();

        // Appended out of order, so the result order comes from the query, not insertion.
        foreach (var record in _records.OrderBy(r => r.Id.ToString()[^4..], StringComparer.Ordinal))
        {
            await _store.AppendAsync(record, CancellationToken.None);
        }
    }

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    private static IEnumerable<AuditRecord> NewestFirst(IEnumerable<AuditRecord> records) => records
        .OrderByDescending(r => r.EvaluatedAt)
        .ThenByDescending(r => r.Id.ToString(), StringComparer.Ordinal);

    [Fact]
    public void Cursor_WhenRoundTripped_KeepsTicksAndId()
    {
        var record = _records[7] with { EvaluatedAt = Sample.Start.AddTicks(9_876_543) };
        var token = AuditCursor.After(record).ToString();

        Assert.True(AuditCursor.TryParse(token, out var parsed));
        Assert.Equal(record.EvaluatedAt.UtcTicks, parsed.EvaluatedAt.UtcTicks);
        Assert.Equal(record.Id, parsed.Id);
        Assert.Equal(34, token.Length);
        Assert.DoesNotContain('=', token);
        Assert.False(AuditCursor.TryParse("B" + token[1..], out _)); // unknown format byte
    }

    [Theory]
    [InlineData("K-101A", null, "ix_evaluations_asset")]
    [InlineData(null, AuditVerdict.Review, "ix_evaluations_verdict")]
    [InlineData(null, null, "ix_evaluations_time")]
    public void QueryPlan_WhenFilteredAndPaged_ScansIndexWithoutSorting(string? asset, string? verdict, string index)
    {
        var plan = SqliteAuditBackend.QueryPlan.Build(new AuditQuery
        {
            Asset = asset,
            Verdict = verdict,
            Cursor = AuditCursor.After(_records[12]).ToString(),
            Limit = 11,
        });
        using var raw = _folder.OpenRaw();
        using var command = raw.CreateCommand();
        plan.Apply(command);
        command.CommandText = "EXPLAIN QUERY PLAN " + command.CommandText;
        using var reader = command.ExecuteReader();
        var details = new List<string>();
        while (reader.Read())
        {
            details.Add(reader.GetString(3));
        }

        var text = string.Join(" | ", details);
        Assert.Contains(index, text, StringComparison.Ordinal);
        Assert.DoesNotContain("TEMP B-TREE", text, StringComparison.Ordinal);
    }
}
