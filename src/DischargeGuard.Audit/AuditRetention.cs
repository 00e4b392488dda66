namespace DischargeGuard.Audit;

/// <summary>
/// An explicit decision to delete old records: everything evaluated before <see cref="DeleteBefore"/>. The store keeps
/// the grant itself for ever (grants are append-only), so the store records every retention run and who made it.
/// </summary>
/// <param name="DeleteBefore">Records evaluated strictly before this instant are deleted.</param>
/// <param name="GrantedBy">Who decided (the admin key id).</param>
/// <param name="Reason">Why (the retention policy or the change reference), stored with the grant.</param>
/// <param name="GrantedAt">When the grant was made.</param>
public sealed record RetentionGrant(DateTimeOffset DeleteBefore, string GrantedBy, string Reason, DateTimeOffset GrantedAt)
{
    /// <summary>Longest reason stored, characters.</summary>
    public const int MaxReasonLength = 1000;

    internal void Validate()
    {
        if (string.IsNullOrWhiteSpace(GrantedBy))
        {
            throw new ArgumentException("A retention grant names who made it.", nameof(GrantedBy));
        }

        if (string.IsNullOrWhiteSpace(Reason) || Reason.Length > MaxReasonLength)
        {
            throw new ArgumentException($"A retention grant gives a reason of 1 to {MaxReasonLength} characters.", nameof(Reason));
        }

        if (DeleteBefore > GrantedAt)
        {
            throw new ArgumentException("A retention grant cannot delete records from the future.", nameof(DeleteBefore));
        }
    }
}

/// <summary>What a retention run did.</summary>
/// <param name="GrantId">The stored grant's id.</param>
/// <param name="Deleted">Records deleted.</param>
public sealed record RetentionResult(long GrantId, long Deleted);
