using System.Diagnostics;
using System.Diagnostics.Metrics;

namespace DischargeGuard.Audit;

/// <summary>
/// The audit writer's instruments: how long each group commit took and how many records it held, tagged with the
/// store and the outcome. Created from the host's <see cref="IMeterFactory"/>, so each host (and each test host) has
/// its own meter; without a factory nothing is measured.
/// </summary>
public sealed class AuditMetrics
{
    /// <summary>The meter's name, for an exporter's allow-list.</summary>
    public const string MeterName = "DischargeGuard.Audit";

    /// <summary>Duration of one commit, in seconds (the instrument's unit).</summary>
    public const string CommitDuration = "dischargeguard.audit.commit.duration";

    /// <summary>Records in one commit.</summary>
    public const string CommitBatchSize = "dischargeguard.audit.commit.batch_size";

    private static readonly double[] DurationBuckets = [0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5];
    private static readonly int[] SizeBuckets = [1, 2, 4, 8, 16, 32, 64, 128, 256, 512, 1024];

    private readonly Histogram<double>? _duration;
    private readonly Histogram<int>? _batchSize;
    private readonly KeyValuePair<string, object?> _store;

    /// <summary>Instruments for one store.</summary>
    /// <param name="meterFactory">The host's meter factory, or null to measure nothing.</param>
    /// <param name="store">The store kind for the <c>dischargeguard.audit.store</c> tag: sqlite or postgresql.</param>
    public AuditMetrics(IMeterFactory? meterFactory, string store)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(store);
        _store = new("dischargeguard.audit.store", store);
        if (meterFactory is null)
        {
            return;
        }

        var meter = meterFactory.Create(MeterName);
        _duration = meter.CreateHistogram(
            CommitDuration,
            unit: "s",
            description: "Time from the start of an audit transaction to its durable commit or its rollback.",
            advice: new InstrumentAdvice<double> { HistogramBucketBoundaries = DurationBuckets });
        _batchSize = meter.CreateHistogram(
            CommitBatchSize,
            unit: "{record}",
            description: "Evaluation records written in one audit transaction (group commit).",
            advice: new InstrumentAdvice<int> { HistogramBucketBoundaries = SizeBuckets });
    }

    /// <summary>Records one commit or rollback.</summary>
    /// <param name="records">Records in the transaction.</param>
    /// <param name="startedAt">Its start, from <see cref="Stopwatch.GetTimestamp"/>.</param>
    /// <param name="committed">Whether it committed (otherwise it was rolled back and its callers told so).</param>
    internal void Record(int records, long startedAt, bool committed)
    {
        if (_duration is null || _batchSize is null)
        {
            return;
        }

        var outcome = new KeyValuePair<string, object?>("dischargeguard.audit.outcome", committed ? "committed" : "rolled_back");
        _duration.Record(Stopwatch.GetElapsedTime(startedAt).TotalSeconds, _store, outcome);
        _batchSize.Record(records, _store, outcome);
    }
}
