using System.Collections.Frozen;
using System.Globalization;
using UnitsNet;
using UnitsNet.Units;

namespace DischargeGuard.Rules.Units;

/// <summary>What a quantity string is expected to measure.</summary>
public enum QuantityKind
{
    /// <summary>A point on a temperature scale (K, °C, °F, °R).</summary>
    Temperature,
    /// <summary>A temperature difference (K, ΔK, Δ°C, Δ°F, Δ°R).</summary>
    TemperatureDifference,
    /// <summary>A state pressure, with its basis (absolute, gauge, or not stated).</summary>
    Pressure,
    /// <summary>A pressure difference (drop); no basis.</summary>
    PressureDifference,
    /// <summary>A length (site elevation).</summary>
    Length,
    /// <summary>A mass flow.</summary>
    MassFlow,
    /// <summary>An actual volume flow.</summary>
    VolumeFlow,
    /// <summary>A fraction (%, ppm).</summary>
    Fraction,
    /// <summary>A specific energy (head, enthalpy change).</summary>
    SpecificEnergy,
    /// <summary>A power.</summary>
    Power,
    /// <summary>A molar mass.</summary>
    MolarMass,
}

/// <summary>Whether a pressure is absolute, gauge, or written without a basis.</summary>
public enum PressureBasis
{
    /// <summary>Not a pressure, or a pressure difference.</summary>
    None,
    /// <summary>Absolute pressure (bara, psia, kPa(a), MPa(a), atm, Pa).</summary>
    Absolute,
    /// <summary>Gauge pressure (barg, psig, kPa(g), MPa(g)); needs the barometric pressure to become absolute.</summary>
    Gauge,
    /// <summary>Written as bar, psi, kPa or MPa: the basis was not stated.</summary>
    NotStated,
}

/// <summary>One accepted unit token: the exact spelling, what it measures and the UnitsNet unit it maps to.</summary>
/// <param name="Token">The exact, case-sensitive spelling.</param>
/// <param name="Kind">The kind of quantity the token is accepted for.</param>
/// <param name="Unit">The UnitsNet unit.</param>
/// <param name="Basis">For pressures, the basis the token states.</param>
/// <param name="Description">A short description for documentation and error messages.</param>
/// <param name="Scale">A factor applied to the number before it is given to <paramref name="Unit"/> (1 for nearly all tokens).</param>
public sealed record UnitToken(string Token, QuantityKind Kind, Enum Unit, PressureBasis Basis, string Description, double Scale = 1.0);

/// <summary>A token that is refused for a kind, with the reason shown to the user.</summary>
/// <param name="Token">The refused spelling.</param>
/// <param name="Kind">The kind for which it is refused.</param>
/// <param name="Reason">Why, and what to write instead.</param>
public sealed record RefusedToken(string Token, QuantityKind Kind, string Reason);

/// <summary>Why a quantity string could not be read.</summary>
/// <param name="Input">The text as given.</param>
/// <param name="Kind">The kind that was expected.</param>
/// <param name="Problem">What was wrong, in one sentence.</param>
/// <param name="AcceptedTokens">The tokens accepted for <paramref name="Kind"/>.</param>
public sealed record UnitParseError(string Input, QuantityKind Kind, string Problem, IReadOnlyList<string> AcceptedTokens)
{
    /// <inheritdoc />
    public override string ToString() =>
        string.Create(CultureInfo.InvariantCulture, $"'{Input}': {Problem} Accepted units for {Kind}: {string.Join(", ", AcceptedTokens)}.");
}

/// <summary>A parsed quantity string: the UnitsNet quantity, the token used and, for pressures, the basis.</summary>
/// <param name="Quantity">The value in the unit that was written.</param>
/// <param name="Token">The accepted token that matched.</param>
public sealed record ParsedQuantity(IQuantity Quantity, UnitToken Token)
{
    /// <summary>The pressure basis the token stated (<see cref="PressureBasis.None"/> for other kinds).</summary>
    public PressureBasis Basis => Token.Basis;
}

/// <summary>
/// The one unit vocabulary used by rule files, the API and the CLI: a table of accepted tokens built once,
/// looked up by exact spelling (never UnitsNet's culture-aware parser). A quantity string is
/// <c>"&lt;number&gt; &lt;unit&gt;"</c> with an invariant decimal point; see docs/units.md.
/// </summary>
public sealed class UnitVocabulary
{
    private readonly FrozenDictionary<(QuantityKind Kind, string Token), UnitToken> _tokens;
    private readonly FrozenDictionary<(QuantityKind Kind, string Token), RefusedToken> _refused;
    private readonly FrozenDictionary<QuantityKind, string[]> _acceptedByKind;

    /// <summary>Builds a vocabulary from accepted and refused tokens. Use <see cref="Default"/> or <see cref="With"/>.</summary>
    /// <param name="tokens">Accepted tokens; a (kind, token) pair may appear once.</param>
    /// <param name="refused">Refused tokens with their reasons.</param>
    public UnitVocabulary(IEnumerable<UnitToken> tokens, IEnumerable<RefusedToken> refused)
    {
        ArgumentNullException.ThrowIfNull(tokens);
        ArgumentNullException.ThrowIfNull(refused);
        var list = tokens.ToList();
        var map = new Dictionary<(QuantityKind, string), UnitToken>();
        foreach (var t in list)
        {
            if (!map.TryAdd((t.Kind, t.Token), t))
            {
                throw new ArgumentOutOfRangeException(nameof(tokens), t.Token, $"Token '{t.Token}' appears twice for {t.Kind}.");
            }
        }

        Tokens = list;
        Refused = refused.ToList();
        _tokens = map.ToFrozenDictionary();
        _refused = Refused.ToFrozenDictionary(r => (r.Kind, r.Token));
        _acceptedByKind = list.GroupBy(t => t.Kind).ToFrozenDictionary(g => g.Key, g => g.Select(t => t.Token).ToArray());
    }

    /// <summary>The shipped vocabulary.</summary>
    public static UnitVocabulary Default { get; } = new(DefaultTokens(), DefaultRefusals());

    /// <summary>Every accepted token, in documentation order.</summary>
    public IReadOnlyList<UnitToken> Tokens { get; }

    /// <summary>Every refused token with its reason.</summary>
    public IReadOnlyList<RefusedToken> Refused { get; }

    /// <summary>A new vocabulary with extra tokens (and refusals) added to this one.</summary>
    /// <param name="extraTokens">Tokens to add.</param>
    /// <param name="extraRefusals">Refusals to add.</param>
    /// <returns>The extended vocabulary.</returns>
    public UnitVocabulary With(IEnumerable<UnitToken> extraTokens, IEnumerable<RefusedToken>? extraRefusals = null) =>
        new(Tokens.Concat(extraTokens), Refused.Concat(extraRefusals ?? []));

    /// <summary>The tokens accepted for a kind.</summary>
    /// <param name="kind">The kind.</param>
    /// <returns>The accepted spellings.</returns>
    public IReadOnlyList<string> AcceptedTokens(QuantityKind kind) =>
        _acceptedByKind.TryGetValue(kind, out var a) ? a : [];

    /// <summary>Largest magnitude of a number in any unit (the SI conversion of any accepted value stays finite).</summary>
    public const double MaxMagnitude = 1e15;

    /// <summary>Reads a quantity string of the given kind.</summary>
    /// <param name="text">The text, e.g. <c>"150 °C"</c>.</param>
    /// <param name="kind">What the text must measure.</param>
    /// <param name="result">The parsed quantity when successful.</param>
    /// <param name="error">What was wrong when not.</param>
    /// <returns>Whether the text was read.</returns>
    public bool TryParse(string? text, QuantityKind kind, out ParsedQuantity? result, out UnitParseError? error)
    {
        result = null;
        error = null;
        if (string.IsNullOrWhiteSpace(text))
        {
            error = Error(text ?? string.Empty, kind, "The value is empty; write a number followed by a unit.");
            return false;
        }

        var s = text.Trim();
        var i = 0;
        if (i < s.Length && (s[i] == '-' || s[i] == '+'))
        {
            i++;
        }

        while (i < s.Length && (char.IsAsciiDigit(s[i]) || s[i] == '.' || s[i] == 'e' || s[i] == 'E'
                                || ((s[i] == '-' || s[i] == '+') && (s[i - 1] == 'e' || s[i - 1] == 'E'))))
        {
            i++;
        }

        var numberText = s[..i];
        var unitText = s[i..].Trim();
        if (i < s.Length && s[i] == ',')
        {
            error = Error(text, kind, "A comma is not a decimal separator here (write 14.7, not 14,7), and thousands separators are not accepted.");
            return false;
        }

        if (numberText.Length == 0 || !double.TryParse(numberText, NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent, CultureInfo.InvariantCulture, out var number)
            || !double.IsFinite(number))
        {
            error = Error(text, kind, "It does not start with a number written with a decimal point.");
            return false;
        }

        if (Math.Abs(number) > MaxMagnitude)
        {
            // Far beyond any physical value here, and converting it to SI (1e308 bar in Pa) would overflow to infinity.
            error = Error(text, kind, string.Create(CultureInfo.InvariantCulture, $"The number is beyond any physical value (at most {MaxMagnitude:0e0} in magnitude)."));
            return false;
        }

        if (unitText.Length == 0)
        {
            error = Error(text, kind, "The unit is missing; every quantity carries its unit.");
            return false;
        }

        if (_tokens.TryGetValue((kind, unitText), out var token))
        {
            result = new ParsedQuantity(Create(token, number * token.Scale), token);
            return true;
        }

        if (_refused.TryGetValue((kind, unitText), out var refusedToken))
        {
            error = Error(text, kind, refusedToken.Reason);
            return false;
        }

        var otherKind = _tokens.Keys.Where(k => k.Token == unitText).Select(k => k.Kind).FirstOrDefault((QuantityKind)(-1));
        if ((int)otherKind >= 0)
        {
            error = Error(text, kind, $"'{unitText}' is a unit of {otherKind}, not of {kind}.");
            return false;
        }

        var caseMatch = AcceptedTokens(kind).FirstOrDefault(t => string.Equals(t, unitText, StringComparison.OrdinalIgnoreCase));
        error = caseMatch is not null
            ? Error(text, kind, $"Unit tokens are case-sensitive ('mPa' is millipascal, 'MPa' megapascal); did you mean '{caseMatch}'?")
            : Error(text, kind, $"'{unitText}' is not an accepted unit.");
        return false;
    }

    /// <summary>Reads an absolute temperature such as <c>"150 °C"</c>, <c>"300 °F"</c> or <c>"420 K"</c>.</summary>
    /// <param name="text">The text.</param>
    /// <param name="value">The temperature.</param>
    /// <param name="error">What was wrong.</param>
    /// <returns>Whether the text was read.</returns>
    public bool TryParseTemperature(string? text, out Temperature value, out UnitParseError? error)
    {
        value = default;
        if (!TryParse(text, QuantityKind.Temperature, out var q, out error))
        {
            return false;
        }

        value = (Temperature)q!.Quantity;
        if (value.Kelvins < 0)
        {
            error = Error(text!, QuantityKind.Temperature, "The temperature is below absolute zero.");
            return false;
        }

        return true;
    }

    /// <summary>Reads a temperature difference such as <c>"50 K"</c> or <c>"90 Δ°F"</c>.</summary>
    /// <param name="text">The text.</param>
    /// <param name="value">The difference.</param>
    /// <param name="error">What was wrong.</param>
    /// <returns>Whether the text was read.</returns>
    public bool TryParseTemperatureDifference(string? text, out TemperatureDelta value, out UnitParseError? error)
    {
        value = default;
        if (!TryParse(text, QuantityKind.TemperatureDifference, out var q, out error))
        {
            return false;
        }

        value = (TemperatureDelta)q!.Quantity;
        return true;
    }

    /// <summary>Reads a state pressure and the basis its unit states.</summary>
    /// <param name="text">The text, e.g. <c>"12.5 bara"</c>.</param>
    /// <param name="value">The pressure as written (a gauge value stays gauge).</param>
    /// <param name="basis">The basis the unit states.</param>
    /// <param name="error">What was wrong.</param>
    /// <returns>Whether the text was read.</returns>
    public bool TryParsePressure(string? text, out Pressure value, out PressureBasis basis, out UnitParseError? error)
    {
        value = default;
        basis = PressureBasis.None;
        if (!TryParse(text, QuantityKind.Pressure, out var q, out error))
        {
            return false;
        }

        value = (Pressure)q!.Quantity;
        basis = q.Basis;
        return true;
    }

    /// <summary>Reads a fraction written in % or ppm.</summary>
    /// <param name="text">The text.</param>
    /// <param name="value">The fraction.</param>
    /// <param name="error">What was wrong.</param>
    /// <returns>Whether the text was read.</returns>
    public bool TryParseFraction(string? text, out Ratio value, out UnitParseError? error)
    {
        value = default;
        if (!TryParse(text, QuantityKind.Fraction, out var q, out error))
        {
            return false;
        }

        value = (Ratio)q!.Quantity;
        return true;
    }

    /// <summary>Reads a molar mass such as <c>"12 g/mol"</c>.</summary>
    /// <param name="text">The text.</param>
    /// <param name="value">The molar mass.</param>
    /// <param name="error">What was wrong.</param>
    /// <returns>Whether the text was read.</returns>
    public bool TryParseMolarMass(string? text, out MolarMass value, out UnitParseError? error)
    {
        value = default;
        if (!TryParse(text, QuantityKind.MolarMass, out var q, out error))
        {
            return false;
        }

        value = (MolarMass)q!.Quantity;
        return true;
    }

    private UnitParseError Error(string input, QuantityKind kind, string problem) => new(input, kind, problem, AcceptedTokens(kind));

    private static IQuantity Create(UnitToken token, double value) => token.Kind switch
    {
        QuantityKind.Temperature => new Temperature(value, (TemperatureUnit)token.Unit),
        QuantityKind.TemperatureDifference => new TemperatureDelta(value, (TemperatureDeltaUnit)token.Unit),
        QuantityKind.Pressure or QuantityKind.PressureDifference => new Pressure(value, (PressureUnit)token.Unit),
        QuantityKind.Length => new Length(value, (LengthUnit)token.Unit),
        QuantityKind.MassFlow => new MassFlow(value, (MassFlowUnit)token.Unit),
        QuantityKind.VolumeFlow => new VolumeFlow(value, (VolumeFlowUnit)token.Unit),
        QuantityKind.Fraction => new Ratio(value, (RatioUnit)token.Unit),
        QuantityKind.SpecificEnergy => new SpecificEnergy(value, (SpecificEnergyUnit)token.Unit),
        QuantityKind.Power => Power.From(value, (PowerUnit)token.Unit),
        QuantityKind.MolarMass => new MolarMass(value, (MolarMassUnit)token.Unit),
        _ => throw new ArgumentOutOfRangeException(nameof(token), token.Kind, "Unknown quantity kind."),
    };

    private static IEnumerable<UnitToken> DefaultTokens()
    {
        const QuantityKind T = QuantityKind.Temperature;
        yield return new("K", T, TemperatureUnit.Kelvin, PressureBasis.None, "kelvin");
        yield return new("°C", T, TemperatureUnit.DegreeCelsius, PressureBasis.None, "degree Celsius");
        yield return new("℃", T, TemperatureUnit.DegreeCelsius, PressureBasis.None, "degree Celsius (single character U+2103)");
        yield return new("degC", T, TemperatureUnit.DegreeCelsius, PressureBasis.None, "degree Celsius (ASCII)");
        yield return new("°F", T, TemperatureUnit.DegreeFahrenheit, PressureBasis.None, "degree Fahrenheit");
        yield return new("℉", T, TemperatureUnit.DegreeFahrenheit, PressureBasis.None, "degree Fahrenheit (single character U+2109)");
        yield return new("degF", T, TemperatureUnit.DegreeFahrenheit, PressureBasis.None, "degree Fahrenheit (ASCII)");
        yield return new("°R", T, TemperatureUnit.DegreeRankine, PressureBasis.None, "degree Rankine");
        yield return new("degR", T, TemperatureUnit.DegreeRankine, PressureBasis.None, "degree Rankine (ASCII)");

        const QuantityKind D = QuantityKind.TemperatureDifference;
        yield return new("K", D, TemperatureDeltaUnit.Kelvin, PressureBasis.None, "kelvin (difference)");
        yield return new("ΔK", D, TemperatureDeltaUnit.Kelvin, PressureBasis.None, "kelvin (difference)");
        yield return new("Δ°C", D, TemperatureDeltaUnit.DegreeCelsius, PressureBasis.None, "Celsius degree of difference (= 1 K)");
        yield return new("Δ°F", D, TemperatureDeltaUnit.DegreeFahrenheit, PressureBasis.None, "Fahrenheit degree of difference (= 5/9 K)");
        yield return new("Δ°R", D, TemperatureDeltaUnit.DegreeRankine, PressureBasis.None, "Rankine degree of difference (= 5/9 K)");
        yield return new("delta-K", D, TemperatureDeltaUnit.Kelvin, PressureBasis.None, "kelvin (difference, ASCII)");
        yield return new("delta-degC", D, TemperatureDeltaUnit.DegreeCelsius, PressureBasis.None, "Celsius degree of difference (ASCII)");
        yield return new("delta-degF", D, TemperatureDeltaUnit.DegreeFahrenheit, PressureBasis.None, "Fahrenheit degree of difference (ASCII)");

        const QuantityKind P = QuantityKind.Pressure;
        yield return new("bara", P, PressureUnit.Bar, PressureBasis.Absolute, "bar, absolute");
        yield return new("psia", P, PressureUnit.PoundForcePerSquareInch, PressureBasis.Absolute, "pound-force per square inch, absolute");
        yield return new("kPa(a)", P, PressureUnit.Kilopascal, PressureBasis.Absolute, "kilopascal, absolute");
        yield return new("MPa(a)", P, PressureUnit.Megapascal, PressureBasis.Absolute, "megapascal, absolute");
        yield return new("atm", P, PressureUnit.Atmosphere, PressureBasis.Absolute, "standard atmosphere (101.325 kPa), absolute");
        yield return new("Pa", P, PressureUnit.Pascal, PressureBasis.Absolute, "pascal, absolute (SI pressures are absolute unless marked)");
        yield return new("barg", P, PressureUnit.Bar, PressureBasis.Gauge, "bar, gauge");
        yield return new("psig", P, PressureUnit.PoundForcePerSquareInch, PressureBasis.Gauge, "pound-force per square inch, gauge");
        yield return new("kPa(g)", P, PressureUnit.Kilopascal, PressureBasis.Gauge, "kilopascal, gauge");
        yield return new("MPa(g)", P, PressureUnit.Megapascal, PressureBasis.Gauge, "megapascal, gauge");
        yield return new("bar", P, PressureUnit.Bar, PressureBasis.NotStated, "bar, basis not stated");
        yield return new("psi", P, PressureUnit.PoundForcePerSquareInch, PressureBasis.NotStated, "pound-force per square inch, basis not stated");
        yield return new("kPa", P, PressureUnit.Kilopascal, PressureBasis.NotStated, "kilopascal, basis not stated");
        yield return new("MPa", P, PressureUnit.Megapascal, PressureBasis.NotStated, "megapascal, basis not stated");
        yield return new("mbar", P, PressureUnit.Millibar, PressureBasis.NotStated, "millibar, basis not stated (barometric readings)");
        yield return new("hPa", P, PressureUnit.Hectopascal, PressureBasis.NotStated, "hectopascal, basis not stated (barometric readings)");

        const QuantityKind DP = QuantityKind.PressureDifference;
        yield return new("bar", DP, PressureUnit.Bar, PressureBasis.None, "bar (difference)");
        yield return new("mbar", DP, PressureUnit.Millibar, PressureBasis.None, "millibar (difference)");
        yield return new("psi", DP, PressureUnit.PoundForcePerSquareInch, PressureBasis.None, "psi (difference)");
        yield return new("Pa", DP, PressureUnit.Pascal, PressureBasis.None, "pascal (difference)");
        yield return new("kPa", DP, PressureUnit.Kilopascal, PressureBasis.None, "kilopascal (difference)");
        yield return new("MPa", DP, PressureUnit.Megapascal, PressureBasis.None, "megapascal (difference)");

        yield return new("m", QuantityKind.Length, LengthUnit.Meter, PressureBasis.None, "metre");
        yield return new("ft", QuantityKind.Length, LengthUnit.Foot, PressureBasis.None, "international foot (0.3048 m)");

        yield return new("kg/s", QuantityKind.MassFlow, MassFlowUnit.KilogramPerSecond, PressureBasis.None, "kilogram per second");
        yield return new("kg/h", QuantityKind.MassFlow, MassFlowUnit.KilogramPerHour, PressureBasis.None, "kilogram per hour");
        // UnitsNet's pound-based flow factors are rounded; the exact pound (0.45359237 kg) is applied here instead.
        yield return new("lb/s", QuantityKind.MassFlow, MassFlowUnit.KilogramPerSecond, PressureBasis.None, "pound per second", 0.45359237);
        yield return new("lb/h", QuantityKind.MassFlow, MassFlowUnit.KilogramPerSecond, PressureBasis.None, "pound per hour", 0.45359237 / 3600.0);

        yield return new("m³/h", QuantityKind.VolumeFlow, VolumeFlowUnit.CubicMeterPerHour, PressureBasis.None, "actual cubic metre per hour");
        yield return new("m3/h", QuantityKind.VolumeFlow, VolumeFlowUnit.CubicMeterPerHour, PressureBasis.None, "actual cubic metre per hour (ASCII)");
        yield return new("m³/s", QuantityKind.VolumeFlow, VolumeFlowUnit.CubicMeterPerSecond, PressureBasis.None, "actual cubic metre per second");
        yield return new("m3/s", QuantityKind.VolumeFlow, VolumeFlowUnit.CubicMeterPerSecond, PressureBasis.None, "actual cubic metre per second (ASCII)");
        yield return new("ft³/min", QuantityKind.VolumeFlow, VolumeFlowUnit.CubicFootPerMinute, PressureBasis.None, "actual cubic foot per minute");
        yield return new("ft3/min", QuantityKind.VolumeFlow, VolumeFlowUnit.CubicFootPerMinute, PressureBasis.None, "actual cubic foot per minute (ASCII)");
        yield return new("acfm", QuantityKind.VolumeFlow, VolumeFlowUnit.CubicFootPerMinute, PressureBasis.None, "actual cubic foot per minute");

        yield return new("%", QuantityKind.Fraction, RatioUnit.Percent, PressureBasis.None, "percent (mole or mass as the field says)");
        yield return new("ppm", QuantityKind.Fraction, RatioUnit.PartPerMillion, PressureBasis.None, "part per million");

        yield return new("kJ/kg", QuantityKind.SpecificEnergy, SpecificEnergyUnit.KilojoulePerKilogram, PressureBasis.None, "kilojoule per kilogram");
        yield return new("J/kg", QuantityKind.SpecificEnergy, SpecificEnergyUnit.JoulePerKilogram, PressureBasis.None, "joule per kilogram");
        yield return new("Btu/lb", QuantityKind.SpecificEnergy, SpecificEnergyUnit.BtuPerPound, PressureBasis.None, "British thermal unit (IT) per pound");

        yield return new("kW", QuantityKind.Power, PowerUnit.Kilowatt, PressureBasis.None, "kilowatt");
        yield return new("W", QuantityKind.Power, PowerUnit.Watt, PressureBasis.None, "watt");
        yield return new("MW", QuantityKind.Power, PowerUnit.Megawatt, PressureBasis.None, "megawatt");
        // UnitsNet rounds the mechanical horsepower to 745.69 W; 550 ft·lbf/s is 745.69987158227022 W exactly.
        yield return new("hp", QuantityKind.Power, PowerUnit.Watt, PressureBasis.None, "mechanical horsepower (550 ft·lbf/s = 745.699872 W)", 745.69987158227022);

        yield return new("g/mol", QuantityKind.MolarMass, MolarMassUnit.GramPerMole, PressureBasis.None, "gram per mole");
        yield return new("kg/kmol", QuantityKind.MolarMass, MolarMassUnit.KilogramPerKilomole, PressureBasis.None, "kilogram per kilomole (= g/mol)");
        yield return new("lb/lbmol", QuantityKind.MolarMass, MolarMassUnit.GramPerMole, PressureBasis.None, "pound per pound-mole (= g/mol)");
    }

    private static IEnumerable<RefusedToken> DefaultRefusals()
    {
        const string DiffReason = "A temperature difference must not be written in {0}: {0} names a point on a scale, and 10 {0} as a point and 10 {0} as a difference are different things. Write the difference in K or {1}.";
        foreach (var (token, diff) in new[] { ("°C", "Δ°C"), ("°F", "Δ°F"), ("degC", "Δ°C"), ("degF", "Δ°F"), ("℃", "Δ°C"), ("℉", "Δ°F"), ("°R", "Δ°R"), ("degR", "Δ°R") })
        {
            yield return new(token, QuantityKind.TemperatureDifference, string.Format(CultureInfo.InvariantCulture, DiffReason, token, diff));
        }

        foreach (var token in new[] { "ΔK", "Δ°C", "Δ°F", "Δ°R", "delta-K", "delta-degC", "delta-degF" })
        {
            yield return new(token, QuantityKind.Temperature, $"'{token}' is a temperature difference; an absolute temperature is needed here (K, °C, °F, °R).");
        }

        yield return new("C", QuantityKind.Temperature, "A bare 'C' is refused (it is also the coulomb); write °C or degC.");
        yield return new("F", QuantityKind.Temperature, "A bare 'F' is refused (it is also the farad); write °F or degF.");
        yield return new("R", QuantityKind.Temperature, "A bare 'R' is refused; write °R or degR.");
        yield return new("°K", QuantityKind.Temperature, "Kelvin takes no degree sign; write K.");
        foreach (var token in new[] { "bara", "barg", "psia", "psig", "kPa(a)", "kPa(g)", "MPa(a)", "MPa(g)", "atm" })
        {
            yield return new(token, QuantityKind.PressureDifference, $"A pressure difference has no basis; write it without the absolute/gauge mark (e.g. 'bar', 'psi', 'kPa'), not '{token}'.");
        }

        const string StdReason = "Normal/standard volume flows depend on reference conditions that differ between conventions; give a mass flow or an actual volume flow (m³/h, ft³/min).";
        foreach (var token in new[] { "Nm³/h", "Nm3/h", "Sm³/h", "Sm3/h", "scfm", "SCFM", "MMSCFD" })
        {
            yield return new(token, QuantityKind.VolumeFlow, StdReason);
        }
    }
}
