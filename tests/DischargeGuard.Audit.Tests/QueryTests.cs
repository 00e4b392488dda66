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
    public async Task QueryPage_When25RecordsInPagesOf10_Returns3PagesNewestFirstWithoutGapsOrDuplicates()
    {
        var pages = new List<AuditPage>();
        string? cursor = null;
        do
        {
            var page = await _store.QueryPageAsync(new AuditQuery { Limit = 10, Cursor = cursor }, CancellationToken.None);
            pages.Add(page);
            cursor = page.NextCursor;
        }
        while (cursor is not null && pages.Count < 10);

        Assert.Equal([10, 10, 5], pages.Select(p => p.Records.Count));
        Assert.Null(pages[^1].NextCursor);
        Assert.Equal(NewestFirst(_records).Select(r => r.Id), pages.SelectMany(p => p.Records).Select(r => r.Id));
    }

    [Fact]
    public async Task QueryPage_WhenExactlyOnePageMatches_HasNoNextCursor()
    {
        var page = await _store.QueryPageAsync(new AuditQuery { Limit = 25 }, CancellationToken.None);

        Assert.Equal(25, page.Records.Count);
        Assert.Null(page.NextCursor);
    }

    [Fact]
    public async Task Query_WhenFilteredByAssetAndVerdict_ReturnsOnlyMatchesNewestFirst()
    {
        var found = await ToListAsync(_store.QueryAsync(new AuditQuery { Asset = "K-101A", Verdict = AuditVerdict.Fail }, CancellationToken.None));

        var expected = NewestFirst(_records.Where(r => r.Asset == "K-101A" && r.Verdict == AuditVerdict.Fail)).Select(r => r.Id).ToList();
        Assert.NotEmpty(expected);
        Assert.Equal(expected, found.Select(r => r.Id));
    }

    [Fact]
    public async Task Query_WhenFilteredBySiteAndCaller_ReturnsOnlyMatches()
    {
        var found = await ToListAsync(_store.QueryAsync(new AuditQuery { SiteId = "osprey-flats", Caller = AuditRecord.AnonymousCaller }, CancellationToken.None));

        var expected = NewestFirst(_records.Where(r => r.SiteId == "osprey-flats" && r.Caller == AuditRecord.AnonymousCaller)).Select(r => r.Id).ToList();
        Assert.NotEmpty(expected);
        Assert.Equal(expected, found.Select(r => r.Id));
    }

    [Fact]
    public async Task Query_WhenTimeWindowGiven_IncludesFromAndExcludesTo()
    {
        var from = Sample.Start.AddMinutes(2);
        var to = Sample.Start.AddMinutes(5);

        var found = await ToListAsync(_store.QueryAsync(new AuditQuery { From = from, To = to }, CancellationToken.None));

        Assert.Equal(9, found.Count); // minutes 2, 3 and 4, three records each
        Assert.Contains(found, r => r.EvaluatedAt == from);
        Assert.DoesNotContain(found, r => r.EvaluatedAt >= to);
        Assert.Equal(NewestFirst(_records.Where(r => r.EvaluatedAt >= from && r.EvaluatedAt < to)).Select(r => r.Id), found.Select(r => r.Id));
    }

    [Fact]
    public async Task QueryPage_WhenFilteredAndPaged_PagesCoverExactlyTheFilteredSet()
    {
        var query = new AuditQuery { Asset = "K-102B", Limit = 5 };
        var ids = new List<Guid>();
        string? cursor = null;
        var pages = 0;
        do
        {
            var page = await _store.QueryPageAsync(query with { Cursor = cursor }, CancellationToken.None);
            ids.AddRange(page.Records.Select(r => r.Id));
            cursor = page.NextCursor;
            pages++;
        }
        while (cursor is not null && pages < 10);

        Assert.Equal(NewestFirst(_records.Where(r => r.Asset == "K-102B")).Select(r => r.Id), ids);
        Assert.Equal(3, pages); // 12 records in pages of 5
    }

    [Fact]
    public async Task Query_WhenLimitSetOnStream_StopsAfterLimit()
    {
        var found = await ToListAsync(_store.QueryAsync(new AuditQuery { Limit = 4 }, CancellationToken.None));

        Assert.Equal(NewestFirst(_records).Take(4).Select(r => r.Id), found.Select(r => r.Id));
    }

    [Theory]
    [InlineData("not-a-cursor")]
    [InlineData("")]
    [InlineData("AQAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA==")] // padded: not the canonical spelling
    [InlineData("AgAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA")] // format byte 2 is unknown
    public void Query_WhenCursorIsNotAToken_ThrowsArgumentExceptionAtCall(string cursor)
    {
        Assert.Throws<ArgumentException>(() => _store.QueryAsync(new AuditQuery { Cursor = cursor }, CancellationToken.None));
    }

    [Fact]
    public async Task Query_WhenCursorIsOlderThanEveryRecord_ReturnsNothing()
    {
        // Format 1, tick 0, the zero id: well formed, and before every record.
        var found = await ToListAsync(_store.QueryAsync(new AuditQuery { Cursor = "AQAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA" }, CancellationToken.None));

        Assert.Empty(found);
    }

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

    [Fact]
    public async Task QueryPage_WhenLimitOutOfRange_ThrowsArgumentOutOfRange()
    {
        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => _store.QueryPageAsync(new AuditQuery { Limit = 0 }, CancellationToken.None));
        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => _store.QueryPageAsync(new AuditQuery { Limit = AuditQuery.MaxPageSize + 1 }, CancellationToken.None));
    }

    [Theory]
    [InlineData("K-101A", null, "ix_evaluations_asset")]
    [InlineData(null, AuditVerdict.Review, "ix_evaluations_verdict")]
    [InlineData(null, null, "ix_evaluations_time")]
    public void QueryPlan_WhenFilteredAndPaged_ScansIndexWithoutSorting(string? asset, string? verdict, string index)
    {
        var plan = SqliteAuditStore.QueryPlan.Build(new AuditQuery
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

    private static async Task<List<AuditRecord>> ToListAsync(IAsyncEnumerable<AuditRecord> source)
    {
        var list = new List<AuditRecord>();
        await foreach (var item in source)
        {
            list.Add(item);
        }

        return list;
    }
}
