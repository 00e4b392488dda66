using System.Globalization;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Units;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// Turns a scenario into the request it stands for: the base request without its measured values and scenarios, the
/// scenario's override merged onto it, then the hot day, fouled cooler and cooling-water failure written into the stages.
/// Recycle needs the train's discharge temperature and is applied after binding (<see cref="Recycle"/>).
/// </summary>
internal static class ScenarioRequests
{
    /// <summary>The request of scenario <paramref name="index"/>; throws <see cref="RequestProblemException"/> keyed by the scenario's path.</summary>
    public static EvaluationRequest Build(EvaluationRequest request, ScenarioInput scenario, int index, UnitVocabulary units)
    {
        var path = Path(index);
        var merged = Merge(request, scenario.Override);
        var stages = merged.Stages!.ToList();
        if (scenario.HotDay is { } hot)
        {
            if (hot.SuctionTemperatureRise is { } rise)
            {
                var dT = Difference(rise, path + ".hotDay.suctionTemperatureRise", units);
                for (var i = 0; i < stages.Count; i++)
                {
                    if (stages[i].Suction is { Temperature: { } t } s)
                    {
                        stages[i] = stages[i] with { Suction = s with { Temperature = Raise(t, dT, path + ".hotDay.suctionTemperatureRise", units) } };
                    }
                }
            }

            if (hot.CoolantTemperatureRise is { } coolant)
            {
                var dT = Difference(coolant, path + ".hotDay.coolantTemperatureRise", units);
                for (var i = 1; i < stages.Count; i++)
                {
                    if (stages[i].Intercooler is { } c)
                    {
                        stages[i] = stages[i] with
                        {
                            Intercooler = c.CoolantTemperature is { } ct
                                ? c with { CoolantTemperature = Raise(ct, dT, path + ".hotDay.coolantTemperatureRise", units) }
                                : c.OutletTemperature is { } ot ? c with { OutletTemperature = Raise(ot, dT, path + ".hotDay.coolantTemperatureRise", units) } : c,
                        };
                    }
                }
            }
        }

        if (scenario.FouledCooler is { } fouled)
        {
            var dT = Difference(fouled.ApproachRise!, path + ".fouledCooler.approachRise", units);
            foreach (var i in CoolerStages(fouled.Stages, stages, path + ".fouledCooler.stages"))
            {
                var c = stages[i].Intercooler!;
                stages[i] = stages[i] with
                {
                    Intercooler = c.Approach is { } a
                        ? c with { Approach = new QuantityInput(Format(Difference(a, path + ".fouledCooler.approachRise", units).Kelvins + dT.Kelvins) + " K") }
                        : c with { OutletTemperature = Raise(c.OutletTemperature!, dT, path + ".fouledCooler.approachRise", units) },
                };
            }
        }

        if (scenario.CoolingWaterFailure is { } failure)
        {
            foreach (var i in CoolerStages(failure.Stages, stages, path + ".coolingWaterFailure.stages"))
            {
                stages[i] = stages[i] with { FedDirectly = true };
            }
        }

        return merged with { Stages = stages };
    }

    /// <summary>The scenario's path in the request: <c>scenarios[i]</c>.</summary>
    public static string Path(int index) => string.Create(CultureInfo.InvariantCulture, $"scenarios[{index}]");

    /// <summary>
    /// The base request without its scenarios and measured values, with <paramref name="patch"/> merged onto it: each
    /// member the patch gives replaces the base's, objects merge member by member, and the stage list merges stage by
    /// stage (the i-th patch stage onto the i-th base stage).
    /// </summary>
    public static EvaluationRequest Merge(EvaluationRequest request, EvaluationRequest? patch)
    {
        var info = EvaluationJson.Options.GetTypeInfo(typeof(EvaluationRequest));
        var node = JsonSerializer.SerializeToNode(request, info)!.AsObject();
        node.Remove("scenarios");
        node.Remove("trainEnvelopeSplit");
        if (node["stages"] is JsonArray baseStages)
        {
            foreach (var stage in baseStages.OfType<JsonObject>())
            {
                // A scenario is hypothetical: what was measured at the base case does not describe it.
                stage.Remove("measured");
            }
        }

        if (patch is not null)
        {
            MergeInto(node, JsonSerializer.SerializeToNode(patch, info)!.AsObject());
        }

        return (EvaluationRequest)node.Deserialize(info)!;
    }

    private static void MergeInto(JsonObject target, JsonObject patch)
    {
        foreach (var (name, value) in patch.ToArray())
        {
            if (value is null)
            {
                continue;
            }

            if (value is JsonObject po && target[name] is JsonObject to && name != "composition")
            {
                MergeInto(to, po);
            }
            else if (name == "stages" && value is JsonArray pa && target[name] is JsonArray ta)
            {
                for (var i = 0; i < pa.Count && i < ta.Count; i++)
                {
                    if (pa[i] is JsonObject ps && ta[i] is JsonObject ts)
                    {
                        MergeInto(ts, ps);
                    }
                }
            }
            else
            {
                target[name] = value.DeepClone();
            }
        }
    }

    // The stages a cooler scenario names (zero-based), or every stage with a cooler; each must exist and have a cooler.
    private static IEnumerable<int> CoolerStages(IReadOnlyList<int>? named, List<StageInput> stages, string path)
    {
        if (named is null)
        {
            var all = Enumerable.Range(1, Math.Max(0, stages.Count - 1)).Where(i => stages[i].Intercooler is not null && stages[i].FedDirectly != true).ToArray();
            return all.Length > 0 ? all : throw ContractPaths.Invalid(path, "The train has no stage with an intercooler for this scenario to change.");
        }

        for (var k = 0; k < named.Count; k++)
        {
            var i = named[k];
            var at = string.Create(CultureInfo.InvariantCulture, $"{path}[{k}]");
            if (i < 0 || i >= stages.Count)
            {
                throw ContractPaths.Invalid(at, string.Create(CultureInfo.InvariantCulture, $"Stage {i} does not exist: the train has stages 0 to {stages.Count - 1}."));
            }

            if (stages[i].Intercooler is null)
            {
                throw ContractPaths.Invalid(at, string.Create(CultureInfo.InvariantCulture, $"Stage {i} has no intercooler before it (the first stage never has one)."));
            }
        }

        return named.Distinct();
    }

    private static TemperatureDelta Difference(QuantityInput q, string path, UnitVocabulary units) =>
        units.TryParseTemperatureDifference(q.Text, out var d, out var error)
            ? d
            : throw ContractPaths.Invalid(path, $"'{q.Text}': {error!.Problem} Accepted units: {string.Join(", ", error.AcceptedTokens)}.");

    // Written back in kelvin: the scenario's request is evaluated, never shown, and the answer converts every temperature.
    private static QuantityInput Raise(QuantityInput t, TemperatureDelta by, string path, UnitVocabulary units) =>
        units.TryParseTemperature(t.Text, out var value, out _)
            ? new QuantityInput(Format(value.Kelvins + by.Kelvins) + " K")
            : throw ContractPaths.Invalid(path, $"'{t.Text}' in the base request is not a temperature this scenario can raise.");

    private static string Format(double value) => value.ToString("R", CultureInfo.InvariantCulture);
}

/// <summary>A scenario's changes in words, for the answer.</summary>
internal static class ScenarioChanges
{
    /// <summary>One sentence per change the scenario names (recycle is described where it is applied).</summary>
    public static IEnumerable<string> Describe(ScenarioInput s)
    {
        if (s.Override is not null)
        {
            yield return "Override: the scenario's fields merged onto the base request.";
        }

        if (s.HotDay is { } hot)
        {
            yield return "Hot day: suction temperature up by " + (hot.SuctionTemperatureRise?.Text ?? "0 K")
                + (hot.CoolantTemperatureRise is { } c ? ", coolant (and so each cooler's gas outlet) up by " + c.Text : "") + ".";
        }

        if (s.FouledCooler is { } f)
        {
            yield return "Fouled cooler: approach up by " + f.ApproachRise?.Text + " before " + StagesText(f.Stages) + ".";
        }

        if (s.CoolingWaterFailure is { } w)
        {
            yield return "Cooling-water failure: " + StagesText(w.Stages) + " fed directly (cooler out of service; its pressure drop kept).";
        }
    }

    // Words for people count stages from 1 (the request's stages[1] is "stage 2"), as the page and the reports do.
    private static string StagesText(IReadOnlyList<int>? stages) =>
        stages is null ? "every cooled stage" : "stage" + (stages.Count == 1 ? " " : "s ") + string.Join(", ", stages.Select(i => (i + 1).ToString(CultureInfo.InvariantCulture)));
}
