namespace DischargeGuard.Audit.Postgres;

/// <summary>
/// The audit store on PostgreSQL: <see cref="AuditStore"/>'s writer over <see cref="PostgresAuditBackend"/> (binary COPY
/// per batch in one transaction, append-only triggers, a schema brought up to date on open under an advisory lock).
/// </summary>
/// <remarks>
/// Durability rests on the server's <c>synchronous_commit</c> (default <c>on</c>: COMMIT returns after the WAL is flushed)
/// and <c>fsync</c>. The writer refuses to connect to a server that reports either as <c>off</c>.
/// </remarks>
public sealed class PostgresAuditStore : AuditStore
{
    private PostgresAuditStore(PostgresAuditStoreOptions options)
        : base(new PostgresAuditBackend(options), options.MaxBatchSize, options.QueueCapacity, options.MeterFactory)
    {
    }

    /// <summary>Connects, applies every pending migration (under the advisory lock), and starts the writer.</summary>
    /// <param name="options">Where the server is and how the writer batches.</param>
    /// <param name="cancellationToken">Cancels the open.</param>
    /// <returns>The open store; dispose it to stop the writer and close its connections.</returns>
    /// <exception cref="ArgumentException">An option is out of range.</exception>
    /// <exception cref="AuditStoreUnavailableException">
    /// The server could not be reached or migrated, its schema is newer than this build, or it does not commit durably.
    /// </exception>
    public static async Task<PostgresAuditStore> OpenAsync(PostgresAuditStoreOptions options, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        var store = new PostgresAuditStore(options);
        await store.StartAsync(cancellationToken).ConfigureAwait(false);
        return store;
    }
}
