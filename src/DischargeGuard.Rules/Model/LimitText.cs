using System.Globalization;

namespace DischargeGuard.Rules.Model;

/// <summary>
/// Limits and warning bands as people read them, with their units: an absolute temperature in °C, a difference in K, a
/// ratio as a plain number, a catalogue or input limit as its formula. Invariant culture.
/// </summary>
public static class LimitText
{
    /// <summary>
    /// The limit of a rule in force, e.g. "150 °C (300 °F)", "350 °F", "4.5", "lubricant.autoignitionTemperature − 140 K − 50 K".
    /// An absolute limit reads as its rule file states it (<see cref="RuleLimit.AsStated"/>), so a source's 350 °F is not
    /// shown as 176.667 °C.
    /// </summary>
    /// <param name="rule">The rule.</param>
    /// <returns>The text.</returns>
    public static string Of(RuleDefinition rule)
    {
        ArgumentNullException.ThrowIfNull(rule);
        return Of(rule.Limit, rule.Quantities[0].Dimension(), rule.RequiresSignedLimit);
    }

    /// <summary>A limit's text.</summary>
    /// <param name="limit">The limit, or null.</param>
    /// <param name="dimension">The checked quantity's dimension.</param>
    /// <param name="requiresSignedLimit">Whether a layer must set and sign one.</param>
    /// <returns>The text.</returns>
    public static string Of(RuleLimit? limit, QuantityDimension dimension, bool requiresSignedLimit)
    {
        if (limit is null)
        {
            return requiresSignedLimit ? "none until a site or asset layer sets and signs one" : "none (a note or a proposal)";
        }

        return limit.Source switch
        {
            LimitSource.Absolute when Stated(limit) is { } stated => stated,
            LimitSource.Absolute when Value(limit, dimension) is { } v => Number(v.Value) + (v.Unit == "1" ? string.Empty : " " + v.Unit),
            LimitSource.GreaterOfFixedAndFractionOfPredicted =>
                $"greater of {Number(limit.AtLeastKelvin)} K and {Number(limit.FractionOfPredicted * 100)} % of the estimated discharge temperature in K",
            _ => Formula(limit),
        };
    }

    /// <summary>
    /// A limit's stated readings as text, the source's equivalent in parentheses: "150 °C (300 °F)", "350 °F"; null when
    /// the limit has none (derived limits, ratios).
    /// </summary>
    /// <param name="limit">The limit, or null.</param>
    /// <returns>The text, or null.</returns>
    public static string? Stated(RuleLimit? limit) => limit?.AsStated switch
    {
        null or [] => null,
        [var used] => used.ToString(),
        var readings => readings[0] + " (" + string.Join(", ", readings.Skip(1)) + ")",
    };

    /// <summary>An absolute limit as a number and unit (°C, K or "1" for a ratio); null for other forms.</summary>
    /// <param name="limit">The limit.</param>
    /// <param name="dimension">The checked quantity's dimension.</param>
    /// <returns>The value and unit, or null.</returns>
    public static (double Value, string Unit)? Value(RuleLimit? limit, QuantityDimension dimension) =>
        limit is { Source: LimitSource.Absolute, Absolute: { } a } ? dimension switch
        {
            QuantityDimension.Temperature => (Math.Round(a - 273.15, 3), "°C"),
            QuantityDimension.TemperatureDifference => (Math.Round(a, 3), "K"),
            _ => (Math.Round(a, 6), "1"),
        }
        : null;

    /// <summary>A warning band as a number and unit (K, or "1" for a ratio rule).</summary>
    /// <param name="band">The band (K or ratio).</param>
    /// <param name="dimension">The checked quantity's dimension.</param>
    /// <returns>The value and unit.</returns>
    public static (double Value, string Unit) Band(double band, QuantityDimension dimension) =>
        dimension == QuantityDimension.Ratio ? (Math.Round(band, 6), "1") : (Math.Round(band, 3), "K");

    /// <summary>A warning band's text: "12 K", "0.2", or "none".</summary>
    /// <param name="band">The band.</param>
    /// <param name="dimension">The checked quantity's dimension.</param>
    /// <returns>The text.</returns>
    public static string BandOf(double band, QuantityDimension dimension)
    {
        if (band == 0)
        {
            return "none";
        }

        var (v, unit) = Band(band, dimension);
        return Number(v) + (unit == "1" ? string.Empty : " " + unit);
    }

    private static string Formula(RuleLimit l)
    {
        var text = l.Source switch
        {
            LimitSource.LubricantRatedMaxDischarge => "lubricant.ratedMaxDischarge",
            LimitSource.LubricantAutoignition => "lubricant.autoignitionTemperature",
            LimitSource.LubricantFlashPoint => "lubricant.flashPoint",
            LimitSource.ValveMaterialLimit => "valveMaterial.continuousLimit",
            LimitSource.SealMaterialLimit => "sealMaterial.continuousLimit",
            LimitSource.RingMaterialLimit => "ringMaterial.continuousLimit",
            LimitSource.InputSuctionTemperature => "input.suctionTemperature",
            LimitSource.InputDischargeWaterDewPoint => "input.dischargeWaterDewPoint",
            LimitSource.InputDesignTemperature => "input.designTemperature",
            _ => l.Source.ToString(),
        };
        if (l.DeratingForPressureKelvin != 0)
        {
            text += $" − {Number(l.DeratingForPressureKelvin)} K";
        }

        if (l.MarginKelvin != 0)
        {
            text += $" − {Number(l.MarginKelvin)} K";
        }

        if (l.PlusKelvin != 0)
        {
            text += $" + {Number(l.PlusKelvin)} K";
        }

        return text;
    }

    private static string Number(double v) => Math.Round(v, 3).ToString("0.###", CultureInfo.InvariantCulture);
}
