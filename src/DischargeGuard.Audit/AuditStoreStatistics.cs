namespace DischargeGuard.Audit;

/// <summary>Counters of the store's writer since it opened, for metrics.</summary>
/// <param name="Batches">Transactions of appends committed.</param>
/// <param name="Records">Records committed, over all batches.</param>
/// <param name="LastBatchSize">Records in the most recently committed batch (0 before the first).</param>
/// <param name="LargestBatchSize">Most records committed in one batch.</param>
/// <param name="FailedBatches">Batches rolled back, every record of which was reported as not stored.</param>
public readonly record struct AuditStoreStatistics(
    long Batches,
    long Records,
    int LastBatchSize,
    int LargestBatchSize,
    long FailedBatches);
