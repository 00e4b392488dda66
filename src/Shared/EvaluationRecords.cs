using System.Text.Json;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Evaluation;

/// <summary>
/// The audit record of an evaluation, the same in the service and the gate's local mode (one source file compiled into
/// both, so the two cannot drift): the answer's own id and time, the request as received, and the answer's bytes as
/// sent, serialised through the contract's source-generated metadata.
/// </summary>
internal static class EvaluationRecords
{
    /// <summary>The answer's bytes, exactly as they are stored and sent.</summary>
    public static byte[] ResponseBytes(EvaluationResponse response) =>
        JsonSerializer.SerializeToUtf8Bytes(response, EvaluationJson.Options.GetTypeInfo(typeof(EvaluationResponse)));

    /// <summary>The record to append before the answer is given.</summary>
    /// <param name="request">The validated request (asset and site are read from it).</param>
    /// <param name="requestBytes">The request as received.</param>
    /// <param name="response">The answer; its id and evaluation time are the record's.</param>
    /// <param name="responseBytes">The answer's bytes (<see cref="ResponseBytes"/>).</param>
    /// <param name="caller">The key id, or the gate's caller name.</param>
    /// <param name="replayOf">The evaluation this one replays.</param>
    public static AuditRecord Of(EvaluationRequest request, byte[] requestBytes, EvaluationResponse response, byte[] responseBytes, string caller, Guid? replayOf = null) => new()
    {
        Id = response.Id,
        EvaluatedAt = response.EvaluatedAt,
        Caller = caller,
        Asset = request.Asset!,
        SiteId = request.Site?.Id,
        Verdict = response.Verdict,
        RuleDigest = response.RuleSet.Digest,
        EngineVersion = response.EngineVersion,
        Request = requestBytes,
        Response = responseBytes,
        ReplayOf = replayOf,
    };
}
