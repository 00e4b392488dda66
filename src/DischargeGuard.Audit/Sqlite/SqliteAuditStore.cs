namespace DischargeGuard.Audit.Sqlite;

/// <summary>
/// The audit store on one SQLite file: <see cref="AuditStore"/>'s writer over <see cref="SqliteAuditBackend"/> (WAL journal,
/// <c>synchronous=FULL</c>, append-only triggers, a schema brought up to date on open).
/// </summary>
/// <remarks>
/// Reads use pooled connections of their own and, thanks to WAL, neither wait for nor delay the writer. The writer's
/// connection is not pooled: it lives as long as the store, and a connection dropped after a failure must really close
/// rather than return to a pool with its state.
/// </remarks>
public sealed class SqliteAuditStore : AuditStore
{
    private readonly SqliteAuditBackend _sqlite;

    private SqliteAuditStore(AuditStoreOptions options, SqliteAuditBackend backend)
        : base(backend, options.MaxBatchSize, options.QueueCapacity, options.MeterFactory)
    {
        _sqlite = backend;
    }

    /// <summary>The full path of the database file.</summary>
    public string DatabasePath => _sqlite.DatabasePath;

    /// <summary>
    /// Opens (creating when missing) the database at <see cref="AuditStoreOptions.SqlitePath"/>, applies every
    /// pending migration, and starts the writer.
    /// </summary>
    /// <param name="options">Where the file is and how the writer batches.</param>
    /// <param name="cancellationToken">Cancels the open.</param>
    /// <returns>The open store; dispose it to stop the writer and close the file.</returns>
    /// <exception cref="ArgumentException">An option is out of range.</exception>
    /// <exception cref="AuditStoreUnavailableException">The file could not be created, opened or migrated, or its schema is newer than this build.</exception>
    public static async Task<SqliteAuditStore> OpenAsync(AuditStoreOptions options, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        var store = new SqliteAuditStore(options, new SqliteAuditBackend(Path.GetFullPath(options.SqlitePath), options.BusyTimeout));
        await store.StartAsync(cancellationToken).ConfigureAwait(false);
        return store;
    }

    /// <summary>
    /// Caps the writer connection's <c>max_page_count</c> (tests simulate a full disk with it);
    /// <see langword="null"/> restores SQLite's default. The cap is re-applied when the writer reconnects.
    /// </summary>
    /// <param name="maxPages">The cap, or null to lift it.</param>
    /// <returns>The database's page count when the cap was applied.</returns>
    internal async Task<long> SetMaxPageCountForTestingAsync(long? maxPages)
    {
        long pageCount = 0;
        await RunOnWriterAsync(() =>
        {
            pageCount = _sqlite.SetMaxPageCount(maxPages);
            return Task.CompletedTask;
        }).ConfigureAwait(false);
        return pageCount;
    }
}
