using System.Globalization;

namespace DischargeGuard.Rules.Loading;

/// <summary>The kind of a rule-file error, so callers and tests can tell them apart.</summary>
public enum RuleFileErrorKind
{
    /// <summary>The YAML itself does not parse (including duplicate mapping keys).</summary>
    Syntax,
    /// <summary>A key the format does not know.</summary>
    UnknownKey,
    /// <summary>A required key is missing.</summary>
    MissingKey,
    /// <summary>A value of the wrong type (a list where a text is expected, a word where a number is).</summary>
    WrongType,
    /// <summary>A quantity without a unit, with a wrong unit, or a point temperature where a difference is needed.</summary>
    BadUnit,
    /// <summary>A value outside its allowed set or range.</summary>
    BadValue,
    /// <summary>An id defined twice (in one file or across layers).</summary>
    DuplicateId,
    /// <summary>A reference to an id that does not exist.</summary>
    UnknownReference,
    /// <summary>A layer loosens or disables a rule without a reason, or sets a special-service limit without sign-off.</summary>
    LayeringViolation,
    /// <summary>The file could not be read.</summary>
    Io,
}

/// <summary>One error in a rule file: file, line, column, key and what is wrong.</summary>
/// <param name="Kind">The kind.</param>
/// <param name="File">File name relative to the rules directory.</param>
/// <param name="Line">1-based line (0 when unknown).</param>
/// <param name="Column">1-based column (0 when unknown).</param>
/// <param name="Key">The key path, e.g. <c>rules[3].limit</c>.</param>
/// <param name="Message">What is wrong and what to write instead.</param>
public sealed record RuleFileError(RuleFileErrorKind Kind, string File, long Line, long Column, string Key, string Message)
{
    /// <inheritdoc />
    public override string ToString() =>
        string.Create(CultureInfo.InvariantCulture, $"{File}:{Line}:{Column}: {Key}: {Message} [{Kind}]");
}

/// <summary>Thrown by the loader when a rule file (or the merge of layers) is invalid; carries every error found.</summary>
public sealed class RuleFileException : Exception
{
    /// <summary>Creates the exception.</summary>
    /// <param name="errors">The errors, at least one.</param>
    public RuleFileException(IReadOnlyList<RuleFileError> errors)
        : base(Format(errors))
    {
        Errors = errors;
    }

    /// <summary>Creates an exception with a plain message (prefer the error-list constructor).</summary>
    public RuleFileException()
        : this([new RuleFileError(RuleFileErrorKind.Io, "?", 0, 0, "", "Unknown rule-file error.")])
    {
    }

    /// <summary>Creates an exception with a plain message.</summary>
    /// <param name="message">The message.</param>
    public RuleFileException(string message)
        : this([new RuleFileError(RuleFileErrorKind.Io, "?", 0, 0, "", message)])
    {
    }

    /// <summary>Creates an exception with a plain message and inner exception.</summary>
    /// <param name="message">The message.</param>
    /// <param name="innerException">The cause.</param>
    public RuleFileException(string message, Exception innerException)
        : base(message, innerException)
    {
        Errors = [new RuleFileError(RuleFileErrorKind.Io, "?", 0, 0, "", message)];
    }

    /// <summary>Every error found.</summary>
    public IReadOnlyList<RuleFileError> Errors { get; }

    private static string Format(IReadOnlyList<RuleFileError> errors)
    {
        ArgumentNullException.ThrowIfNull(errors);
        return errors.Count == 1
            ? "Invalid rule file: " + errors[0]
            : string.Create(CultureInfo.InvariantCulture, $"Invalid rule files ({errors.Count} errors):{Environment.NewLine}") + string.Join(Environment.NewLine, errors);
    }
}
