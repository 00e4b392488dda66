using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>Outcome of an envelope search (named apart from Thermo's EnvelopeStatus so an adapter can use both).</summary>
public enum EnvelopeBoundStatus
{
    /// <summary>The bound was found.</summary>
    Found,
    /// <summary>The limit is already exceeded at the current conditions.</summary>
    AlreadyExceeded,
    /// <summary>The limit is not reached anywhere in the searched range.</summary>
    NotReachableInRange,
    /// <summary>The governing quantity cannot be predicted from pressures and temperatures (e.g. measured).</summary>
    NotComputableForQuantity,
}

/// <summary>One bound of the envelope.</summary>
/// <typeparam name="T">Pressure or Temperature.</typeparam>
/// <param name="Status">Outcome.</param>
/// <param name="Value">The bound when <see cref="EnvelopeBoundStatus.Found"/>.</param>
/// <param name="Note">A plain sentence explaining the status (e.g. the solver's note), optional.</param>
public sealed record EnvelopeBound<T>(EnvelopeBoundStatus Status, T? Value, string? Note = null)
    where T : struct;

/// <summary>The highest discharge pressure and suction temperature before the governing limit is reached, other stages held fixed.</summary>
/// <param name="RuleId">The governing rule.</param>
/// <param name="Quantity">Its quantity.</param>
/// <param name="Limit">Its violation limit.</param>
/// <param name="MaxDischargePressure">Highest absolute discharge pressure.</param>
/// <param name="MaxSuctionTemperature">Highest suction temperature.</param>
public sealed record EnvelopeEstimate(string RuleId, CheckedQuantity Quantity, Reading Limit, EnvelopeBound<Pressure> MaxDischargePressure, EnvelopeBound<Temperature> MaxSuctionTemperature);

/// <summary>
/// Computes the envelope for a stage given its governing quantity and limit. Implemented against the Thermo
/// envelope solver by the evaluation pipeline; the engine calls it only for isentropic, estimated,
/// estimatedUpperBound and pressureRatio.
/// </summary>
public interface IEnvelopeCalculator
{
    /// <summary>The highest discharge pressure and suction temperature before <paramref name="limit"/> is reached.</summary>
    /// <param name="stage">The stage.</param>
    /// <param name="quantity">The governing quantity.</param>
    /// <param name="limit">The governing violation limit (absolute temperature, or ratio).</param>
    /// <returns>Both bounds.</returns>
    (EnvelopeBound<Pressure> MaxDischargePressure, EnvelopeBound<Temperature> MaxSuctionTemperature) Compute(StageFacts stage, CheckedQuantity quantity, Reading limit);
}
