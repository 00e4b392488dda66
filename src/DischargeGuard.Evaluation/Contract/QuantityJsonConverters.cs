using System.Globalization;
using System.Text.Json;
using System.Text.Json.Serialization;
using DischargeGuard.Rules.Units;
using UnitsNet;

namespace DischargeGuard.Evaluation.Contract;

/// <summary>
/// System.Text.Json converters for UnitsNet quantities (which do not round-trip through System.Text.Json on their own).
/// They read both contract forms — <c>"35 °C"</c> and <c>{"value": 35, "unit": "°C"}</c> — through the one unit
/// vocabulary, and write <c>{"value", "unit"}</c> in a fixed unit so the text is unambiguous. Pressures are absolute:
/// a gauge or basis-less pressure is refused, since a converter has no barometer to make it absolute.
/// </summary>
public static class QuantityJsonConverters
{
    /// <summary>Converters for <see cref="Temperature"/> (°C), <see cref="TemperatureDelta"/> (K), absolute <see cref="Pressure"/> (kPa(a)),
    /// <see cref="MassFlow"/> (kg/s) and <see cref="Length"/> (m).</summary>
    public static IReadOnlyList<JsonConverter> All(UnitVocabulary? units = null)
    {
        var u = units ?? UnitVocabulary.Default;
        return
        [
            new QuantityConverter<Temperature>(u, QuantityKind.Temperature, "°C", t => t.DegreesCelsius),
            new QuantityConverter<TemperatureDelta>(u, QuantityKind.TemperatureDifference, "K", d => d.Kelvins),
            new QuantityConverter<Pressure>(u, QuantityKind.Pressure, "kPa(a)", p => p.Kilopascals, absoluteOnly: true),
            new QuantityConverter<MassFlow>(u, QuantityKind.MassFlow, "kg/s", m => m.KilogramsPerSecond),
            new QuantityConverter<Length>(u, QuantityKind.Length, "m", l => l.Meters),
        ];
    }

    private sealed class QuantityConverter<T>(UnitVocabulary units, QuantityKind kind, string writeUnit, Func<T, double> inWriteUnit, bool absoluteOnly = false) : JsonConverter<T>
        where T : struct, IQuantity
    {
        private readonly QuantityInputJsonConverter _input = new();

        public override T Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
        {
            var text = _input.Read(ref reader, typeof(QuantityInput), options).Text;
            if (!units.TryParse(text, kind, out var parsed, out var error))
            {
                throw new JsonException($"'{text}': {error!.Problem} Accepted units: {string.Join(", ", error.AcceptedTokens)}.");
            }

            if (absoluteOnly && parsed!.Basis != PressureBasis.Absolute)
            {
                throw new JsonException($"'{text}': an absolute pressure is needed here (bara, psia, kPa(a), MPa(a), atm, Pa).");
            }

            return (T)parsed!.Quantity;
        }

        public override void Write(Utf8JsonWriter writer, T value, JsonSerializerOptions options)
        {
            ArgumentNullException.ThrowIfNull(writer);
            writer.WriteStartObject();
            writer.WriteNumber("value", inWriteUnit(value));
            writer.WriteString("unit", writeUnit);
            writer.WriteEndObject();
        }

        public override string ToString() => string.Create(CultureInfo.InvariantCulture, $"{typeof(T).Name} as {writeUnit}");
    }
}
