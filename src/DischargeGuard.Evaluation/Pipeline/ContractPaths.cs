using System.Globalization;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// The request paths of the evaluation contract (<c>stages[0].discharge.pressure</c>), in one place: how a stage's path
/// is spelt, how a Thermo error's member maps to the field the caller typed, and the two refusals (400 and 422) keyed by
/// such a path.
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
    /// Maps a Thermo member name (<c>stages[i].DischargePressure</c>, <c>gas.…</c>) to the request field the caller typed;
    /// no member maps to <c>stages</c>.
    /// </summary>
    /// <param name="member">The member Thermo named, or null.</param>
    /// <param name="stages">The request's stages (a cooled stage's suction comes from its cooler's fields).</param>
    internal static string FromThermoMember(string? member, IReadOnlyList<StageInput> stages)
    {
        if (member is null)
        {
            return "stages";
        }

        var dot = member.IndexOf('.', StringComparison.Ordinal);
        if (!member.StartsWith("stages[", StringComparison.Ordinal) || dot < 0)
        {
            return member;
        }

        var prefix = member[..dot];
        var index = int.Parse(member.AsSpan(7, prefix.Length - 8), CultureInfo.InvariantCulture);
        var cooler = index < stages.Count ? stages[index].Intercooler : null;
        var direct = index < stages.Count && stages[index].FedDirectly == true;
        var field = member[(dot + 1)..] switch
        {
            "SuctionTemperature" when direct => "fedDirectly",
            "SuctionPressure" or "Intercooler.PressureDrop" when direct => cooler?.PressureDrop is not null ? "intercooler.pressureDrop" : "fedDirectly",
            "DischargePressure" => "discharge.pressure",
            "SuctionPressure" => cooler is not null ? "intercooler.pressureDrop" : "suction.pressure",
            "SuctionTemperature" => cooler is null ? "suction.temperature" : cooler.OutletTemperature is null ? "intercooler.coolantTemperature" : "intercooler.outletTemperature",
            "Efficiency" => "efficiency",
            "Intercooler" => "intercooler",
            "Intercooler.PressureDrop" => "intercooler.pressureDrop",
            var other => char.ToLowerInvariant(other[0]) + other[1..],
        };
        return prefix + "." + field;
    }
}
