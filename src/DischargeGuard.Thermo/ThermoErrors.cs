namespace DischargeGuard.Thermo;

/// <summary>
/// An input outside its allowed range. <see cref="Member"/> names the input's member (<c>DischargePressure</c>),
/// <see cref="StageIndex"/> the train stage it belongs to (null outside a train), and
/// <see cref="ArgumentOutOfRangeException.ActualValue"/> the offending value (SI, or null when the input is missing), so
/// callers map it to the field the user typed without parsing text. <see cref="ArgumentException.ParamName"/> spells
/// both together (<c>stages[1].DischargePressure</c>) for logs; <see cref="Reason"/> is the sentence without the
/// framework's decorations.
/// </summary>
public sealed class ThermoInputException : ArgumentOutOfRangeException
{
    /// <summary>Creates the exception.</summary>
    /// <param name="member">The input's member (<c>DischargePressure</c>, <c>Intercooler.PressureDrop</c>).</param>
    /// <param name="actualValue">The offending value (SI), or null when the input is missing.</param>
    /// <param name="reason">What is wrong and what is allowed, in one sentence.</param>
    public ThermoInputException(string member, object? actualValue, string reason)
        : base(member, actualValue, reason)
    {
        Reason = reason;
        Member = member;
    }

    /// <summary>Creates the exception for an input of train stage <paramref name="stageIndex"/> (0-based).</summary>
    /// <param name="stageIndex">The stage the input belongs to (0-based).</param>
    /// <param name="member">The input's member within the stage, or null for the stage as a whole.</param>
    /// <param name="actualValue">The offending value (SI), or null when the input is missing.</param>
    /// <param name="reason">What is wrong and what is allowed, in one sentence.</param>
    public ThermoInputException(int stageIndex, string? member, object? actualValue, string reason)
        : base(StagePath(stageIndex, member), actualValue, reason)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(stageIndex);
        Reason = reason;
        StageIndex = stageIndex;
        Member = member;
    }

    /// <summary>Creates the exception.</summary>
    public ThermoInputException()
    {
        Reason = Message;
    }

    /// <summary>Creates the exception.</summary>
    public ThermoInputException(string message, Exception innerException)
        : base(message, innerException)
    {
        Reason = message;
    }

    /// <summary>Creates the exception.</summary>
    public ThermoInputException(string member)
        : base(member)
    {
        Reason = Message;
        Member = member;
    }

    /// <summary>What is wrong and what is allowed, in one sentence.</summary>
    public string Reason { get; }

    /// <summary>The train stage (0-based) whose input this is; null for an input outside a train.</summary>
    public int? StageIndex { get; }

    /// <summary>The input's member without the stage (<c>DischargePressure</c>); null when the error is about the stage as a whole.</summary>
    public string? Member { get; }

    /// <summary>The same error as an input of train stage <paramref name="stageIndex"/> (keeps the member, the value and the reason).</summary>
    /// <param name="stageIndex">The stage (0-based).</param>
    public ThermoInputException ForStage(int stageIndex) => new(stageIndex, Member, ActualValue, Reason);

    // Built only on the error path, so a successful solve allocates no strings.
    private static string StagePath(int stageIndex, string? member) =>
        member is null
            ? string.Create(System.Globalization.CultureInfo.InvariantCulture, $"stages[{stageIndex}]")
            : string.Create(System.Globalization.CultureInfo.InvariantCulture, $"stages[{stageIndex}].{member}");
}

internal static class ThermoErrors
{
    public static ThermoInputException OutOfRange(string member, object? actualValue, string message) =>
        new(member, actualValue, message);

    public static ThermoInputException OutOfRange(int stageIndex, string? member, object? actualValue, string message) =>
        new(stageIndex, member, actualValue, message);
}
