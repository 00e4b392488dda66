using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Thermo;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// The request paths of the evaluation contract (<c>stages[0].discharge.pressure</c>), in one place: how a stage's path
/// is spelt, how a validator's member, a JSON reader's path and a Thermo error map to the field the caller typed, and the
/// two refusals (400 and 422) keyed by such a path. The service and the gate name every field through this type.
/// </summary>
public static class ContractPaths
{
    /// <summary>
    /// A validator's member path (<c>Stages[0].Suction.Pressure</c>) as the contract spells it
    /// (<c>stages[0].suction.pressure</c>): camelCase like the JSON, except composition keys, which are species names.
    /// The service's problems and the gate's messages both name fields through this.
    /// </summary>
    public static string FromValidator(string path)
    {
        if (string.IsNullOrEmpty(path))
        {
            return path;
        }

        var parts = path.Split('.');
        for (var i = 0; i < parts.Length; i++)
        {
            if (parts[i].Length > 0 && char.IsUpper(parts[i][0]) && !(i > 0 && string.Equals(parts[i - 1], "composition", StringComparison.Ordinal)))
            {
                parts[i] = char.ToLowerInvariant(parts[i][0]) + parts[i][1..];
            }
        }

        return string.Join('.', parts);
    }

    /// <summary>The path of stage <paramref name="index"/>: <c>stages[i]</c>.</summary>
    internal static string Stage(int index) => string.Create(CultureInfo.InvariantCulture, $"stages[{index}]");

    /// <summary>A malformed field, or one that names something unknown (400).</summary>
    internal static RequestProblemException Invalid(string path, string message) =>
        RequestProblemException.Field(ProblemKind.InvalidRequest, "invalid-request", "The request has invalid fields.", path, message);

    /// <summary>A well-formed field that is physically impossible or outside the data's range (422).</summary>
    internal static RequestProblemException Unprocessable(string path, string message) =>
        RequestProblemException.Field(ProblemKind.Unprocessable, "out-of-range", "The request is physically impossible or outside the data's valid range.", path, message);

    /// <summary>
    /// Maps a Thermo range error to the request field the caller typed, from the error's stage index and member (never
    /// by parsing its text): <c>stages[i].discharge.pressure</c>. An error without a stage takes
    /// <paramref name="stageIndex"/> (the stage the caller was solving); with neither, it maps to <c>stages</c>.
    /// </summary>
    /// <param name="error">The Thermo error.</param>
    /// <param name="stages">The request's stages (a cooled stage's suction comes from its cooler's fields).</param>
    /// <param name="stageIndex">The stage being solved when the error names none; null outside a stage.</param>
    internal static string FromThermo(ThermoInputException error, IReadOnlyList<StageInput> stages, int? stageIndex = null)
    {
        var index = error.StageIndex ?? stageIndex;
        if (index is not { } i)
        {
            return "stages";
        }

        var cooler = i < stages.Count ? stages[i].Intercooler : null;
        var direct = i < stages.Count && stages[i].FedDirectly == true;
        var field = error.Member switch
        {
            null => null,
            "SuctionTemperature" when direct => "fedDirectly",
            "SuctionPressure" or "Intercooler.PressureDrop" when direct => cooler?.PressureDrop is not null ? "intercooler.pressureDrop" : "fedDirectly",
            "DischargePressure" => "discharge.pressure",
            "SuctionPressure" => cooler is not null ? "intercooler.pressureDrop" : "suction.pressure",
            "SuctionTemperature" => cooler is null ? "suction.temperature" : cooler.OutletTemperature is null ? "intercooler.coolantTemperature" : "intercooler.outletTemperature",
            "Efficiency" => "efficiency",
            "Intercooler" => "intercooler",
            "Intercooler.PressureDrop" => "intercooler.pressureDrop",
            var other => FromValidator(other),
        };
        return field is null ? Stage(i) : Stage(i) + "." + field;
    }

    /// <summary>
    /// A System.Text.Json path (<c>$.stages[0].suction.pressure</c>, <c>$.gas.composition['n-C4H10']</c>) as the contract
    /// spells it (<c>stages[0].suction.pressure</c>, <c>gas.composition.n-C4H10</c>): the same names
    /// <see cref="FromValidator"/> gives, so a malformed value and an invalid one name their field alike, in the service's
    /// problems and in the gate's messages. The document itself is the empty path.
    /// </summary>
    /// <param name="jsonPath">The path a <see cref="System.Text.Json.JsonException"/> reports, or null.</param>
    public static string FromJsonPath(string? jsonPath)
    {
        if (string.IsNullOrEmpty(jsonPath))
        {
            return string.Empty;
        }

        var p = jsonPath.StartsWith('$') ? jsonPath[1..] : jsonPath;
        var sb = new System.Text.StringBuilder(p.Length);
        for (var i = 0; i < p.Length; i++)
        {
            // A member whose name is no identifier is bracketed and quoted; the contract writes it dotted (species keys).
            if (p[i] == '[' && i + 1 < p.Length && p[i + 1] == '\'')
            {
                var end = p.IndexOf("']", i + 2, StringComparison.Ordinal);
                if (end > 0)
                {
                    sb.Append('.').Append(p, i + 2, end - i - 2);
                    i = end + 1;
                    continue;
                }
            }

            sb.Append(p[i]);
        }

        var s = sb.ToString();
        return s.StartsWith('.') ? s[1..] : s;
    }
}
