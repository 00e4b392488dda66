using System.Globalization;
using System.Text.Json;
using System.Text.Json.Serialization;

namespace DischargeGuard.Evaluation.Contract;

/// <summary>
/// A quantity as a caller writes it: either the string <c>"&lt;number&gt; &lt;unit&gt;"</c> (invariant decimal point,
/// e.g. <c>"1.5 barg"</c>) or the object <c>{"value": 1.5, "unit": "barg"}</c>. It is parsed once, through the one unit
/// vocabulary (<see cref="Parse"/>): the validator's parse is kept on the instance and the binder reuses it, so the
/// error can name the field and list the accepted units without the text being read twice.
/// </summary>
[JsonConverter(typeof(QuantityInputJsonConverter))]
public sealed record QuantityInput
{
    /// <summary>Creates a quantity from its text form.</summary>
    public QuantityInput(string text) => Text = text;

    /// <summary>The text form, e.g. <c>"35 °C"</c>. The object form is turned into <c>"value unit"</c> with the invariant culture.</summary>
    public string Text { get; }

    // The last parse: (vocabulary, kind, result, error), replaced whole so a reader never sees half of it.
    private ParseMemo? _memo;

    /// <summary>
    /// Parses the text as a quantity of <paramref name="kind"/> with <paramref name="units"/>, once: a second call with the
    /// same vocabulary and kind returns the first call's result.
    /// </summary>
    /// <param name="units">The unit vocabulary.</param>
    /// <param name="kind">The kind of quantity expected.</param>
    /// <param name="result">The parsed quantity.</param>
    /// <param name="error">What was wrong.</param>
    /// <returns>Whether the text reads as such a quantity.</returns>
    public bool Parse(Rules.Units.UnitVocabulary units, Rules.Units.QuantityKind kind, out Rules.Units.ParsedQuantity? result, out Rules.Units.UnitParseError? error)
    {
        ArgumentNullException.ThrowIfNull(units);
        if (_memo is { } m && ReferenceEquals(m.Units, units) && m.Kind == kind)
        {
            result = m.Result;
            error = m.Error;
            return m.Result is not null;
        }

        var ok = units.TryParse(Text, kind, out result, out error);
        _memo = new ParseMemo(units, kind, result, error);
        return ok;
    }

    /// <summary>Two quantities are equal when their text is (the parse kept on an instance is not part of its value).</summary>
    public bool Equals(QuantityInput? other) => other is not null && string.Equals(Text, other.Text, StringComparison.Ordinal);

    /// <inheritdoc/>
    public override int GetHashCode() => StringComparer.Ordinal.GetHashCode(Text);

    /// <summary>Creates a quantity from a number and a unit token.</summary>
    public static QuantityInput Of(double value, string unit) =>
        new(string.Create(CultureInfo.InvariantCulture, $"{value:R} {unit}"));

    /// <inheritdoc/>
    public override string ToString() => Text;
}

/// <summary>Reads both forms of <see cref="QuantityInput"/>; writes the string form.</summary>
public sealed class QuantityInputJsonConverter : JsonConverter<QuantityInput>
{
    /// <inheritdoc/>
    public override QuantityInput Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        switch (reader.TokenType)
        {
            case JsonTokenType.String:
                return new QuantityInput(reader.GetString()!);
            case JsonTokenType.StartObject:
                double? value = null;
                string? unit = null;
                while (reader.Read() && reader.TokenType != JsonTokenType.EndObject)
                {
                    if (reader.TokenType != JsonTokenType.PropertyName)
                    {
                        throw new JsonException("A quantity object has only the properties 'value' and 'unit'.");
                    }

                    var name = reader.GetString();
                    if ((name == "value" && value is not null) || (name == "unit" && unit is not null))
                    {
                        throw new JsonException($"Duplicate member '{name}': a quantity object names each of 'value' and 'unit' once.");
                    }

                    reader.Read();
                    switch (name)
                    {
                        case "value" when reader.TokenType == JsonTokenType.Number:
                            value = reader.GetDouble();
                            break;
                        case "unit" when reader.TokenType == JsonTokenType.String:
                            unit = reader.GetString();
                            break;
                        default:
                            throw new JsonException("A quantity object is {\"value\": <number>, \"unit\": \"<unit>\"}.");
                    }
                }

                if (value is null || unit is null)
                {
                    throw new JsonException("A quantity object needs both 'value' (a number) and 'unit' (a string).");
                }

                return QuantityInput.Of(value.Value, unit);
            default:
                throw new JsonException("A quantity is a string such as \"1.5 barg\" or an object {\"value\": 1.5, \"unit\": \"barg\"}.");
        }
    }

    /// <inheritdoc/>
    public override void Write(Utf8JsonWriter writer, QuantityInput value, JsonSerializerOptions options)
    {
        ArgumentNullException.ThrowIfNull(writer);
        ArgumentNullException.ThrowIfNull(value);
        writer.WriteStringValue(value.Text);
    }
}

internal sealed record ParseMemo(Rules.Units.UnitVocabulary Units, Rules.Units.QuantityKind Kind, Rules.Units.ParsedQuantity? Result, Rules.Units.UnitParseError? Error);
