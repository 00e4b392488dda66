namespace DischargeGuard.Audit;

/// <summary>How much room an audit store has.</summary>
/// <param name="AvailableBytes">Free bytes on the volume holding the store, when the store can see it (SQLite); null otherwise.</param>
/// <param name="UsedBytes">Bytes the store occupies: the SQLite file with its write-ahead log, or the PostgreSQL database's size.</param>
public sealed record AuditStorage(long? AvailableBytes, long UsedBytes);
