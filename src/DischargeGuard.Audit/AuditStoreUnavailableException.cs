namespace DischargeGuard.Audit;

/// <summary>
/// The audit store could not do what was asked: the disk is full or read-only, the database stayed locked
/// beyond the busy timeout, the file is damaged, or the store is closed. For an append it means the record
/// is not stored, and the request that produced it must fail (503), never be answered as if it were audited.
/// </summary>
public sealed class AuditStoreUnavailableException : Exception
{
    /// <summary>Creates the exception with a default message.</summary>
    public AuditStoreUnavailableException()
        : base("The audit store is unavailable.")
    {
    }

    /// <summary>Creates the exception with a message.</summary>
    /// <param name="message">What failed.</param>
    public AuditStoreUnavailableException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a message and the failure underneath.</summary>
    /// <param name="message">What failed.</param>
    /// <param name="innerException">The provider's exception.</param>
    public AuditStoreUnavailableException(string message, Exception? innerException)
        : base(message, innerException)
    {
    }
}
