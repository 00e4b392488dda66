namespace DischargeGuard.Thermo;

/// <summary>
/// An input outside its allowed range. <see cref="ArgumentException.ParamName"/> names the input's member (for a train,
/// with its stage index, e.g. <c>stages[1].DischargePressure</c>) so callers can map it to the field the user typed;
/// <see cref="Reason"/> is the sentence without the framework's decorations.
/// </summary>
public sealed class ThermoInputException : ArgumentOutOfRangeException
{
    /// <summary>Creates the exception.</summary>
    public ThermoInputException(string member, object? actualValue, string reason)
        : base(member, actualValue, reason)
    {
        Reason = reason;
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
    }

    /// <summary>What is wrong and what is allowed, in one sentence.</summary>
    public string Reason { get; }

    /// <summary>The same error with <paramref name="prefix"/> before the member name.</summary>
    public ThermoInputException WithPrefix(string prefix) =>
        new(string.IsNullOrEmpty(ParamName) ? prefix : prefix + "." + ParamName, ActualValue, Reason);
}

internal static class ThermoErrors
{
    public static ThermoInputException OutOfRange(string member, object? actualValue, string message) =>
        new(member, actualValue, message);
}
