using System.Threading.Channels;

namespace DischargeGuard.Audit;

/// <summary>An append waiting for a store's writer loop, or a piece of work the writer must do between batches (shared by the SQLite and PostgreSQL stores).</summary>
internal sealed class AuditWorkItem
{
    private AuditWorkItem(AuditRecord? record, Func<Task>? control, CancellationToken cancellationToken)
    {
        Record = record;
        Control = control;
        CancellationToken = cancellationToken;
    }

    public AuditRecord? Record { get; }

    public Func<Task>? Control { get; }

    public CancellationToken CancellationToken { get; }

    // Continuations run off the writer, so a batch's callers do not run on (and stall) the writer loop.
    public TaskCompletionSource Completion { get; } = new(TaskCreationOptions.RunContinuationsAsynchronously);

    public static AuditWorkItem ForAppend(AuditRecord record, CancellationToken cancellationToken) => new(record, null, cancellationToken);

    public static AuditWorkItem ForControl(Func<Task> control, CancellationToken cancellationToken) => new(null, control, cancellationToken);

    /// <summary>The error of an append or control made after the store closed its queue.</summary>
    public static AuditStoreUnavailableException Closed(Exception? inner) =>
        new("The audit store is closed; the evaluation was not stored.", inner);

    /// <summary>Queues this item for the writer loop and waits until the writer has done it (or failed it).</summary>
    /// <exception cref="AuditStoreUnavailableException">The queue is closed, or the writer failed the item.</exception>
    public async Task EnqueueAndWaitAsync(ChannelWriter<AuditWorkItem> queue, CancellationToken cancellationToken)
    {
        try
        {
            await queue.WriteAsync(this, cancellationToken).ConfigureAwait(false);
        }
        catch (ChannelClosedException e)
        {
            throw Closed(e);
        }

        await Completion.Task.WaitAsync(cancellationToken).ConfigureAwait(false);
    }
}
