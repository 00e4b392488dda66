using System.Globalization;
using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>
/// Turns a stage's temperatures, equipment and service into findings, a verdict and the governing finding.
/// Pure: no I/O, no clock; the rule set is immutable, so evaluations in flight are unaffected by reloads.
/// </summary>
public static class RuleEngine
{
    /// <summary>Id of the engine's own warning that violation-level rules were left unchecked.</summary>
    public const string UncheckedLimitsRuleId = "ENGINE-UNCHECKED-LIMITS";

    private const double CelsiusOffset = 273.15;
    private const string NotComputable = "The governing quantity is not predicted from pressures and temperatures, so no envelope can be computed for it.";

    /// <summary>Evaluates every stage of a train and forms the overall verdict.</summary>
    /// <param name="rules">The effective rule set (from <c>Resolve(siteId, assetId)</c>).</param>
    /// <param name="stages">The stages.</param>
    /// <param name="envelope">Optional envelope calculator, called with each stage's governing quantity and limit.</param>
    /// <returns>Findings per stage, verdicts, digest and layers.</returns>
    public static EvaluationResult Evaluate(EffectiveRuleSet rules, IReadOnlyList<StageFacts> stages, IEnvelopeCalculator? envelope = null)
    {
        ArgumentNullException.ThrowIfNull(rules);
        ArgumentNullException.ThrowIfNull(stages);
        var results = new StageResult[stages.Count];
        var overall = Verdict.Pass;
        for (var i = 0; i < stages.Count; i++)
        {
            results[i] = EvaluateStage(rules, stages[i], envelope);
            if (results[i].Verdict > overall)
            {
                overall = results[i].Verdict;
            }
        }

        return new EvaluationResult(overall, results, rules.Digest, rules.Layers);
    }

    /// <summary>Evaluates one stage.</summary>
    /// <param name="rules">The effective rule set.</param>
    /// <param name="stage">The stage.</param>
    /// <param name="envelope">Optional envelope calculator.</param>
    /// <returns>The stage result.</returns>
    public static StageResult EvaluateStage(EffectiveRuleSet rules, StageFacts stage, IEnvelopeCalculator? envelope = null)
    {
        ArgumentNullException.ThrowIfNull(rules);
        ArgumentNullException.ThrowIfNull(stage);
        Validate(rules, stage);

        var detected = ServiceClassDetector.Detect(rules, stage.GasMolarMass, stage.OxygenMoleFraction, stage.MoleFractions, stage.DischargePressure);
        var classes = detected.Count == 0 ? stage.DeclaredServiceClasses : stage.DeclaredServiceClasses.Union(detected, StringComparer.Ordinal).ToArray();
        var type = stage.CompressorTypeId is null ? null : rules.CompressorTypes[stage.CompressorTypeId];
        var lubricant = stage.LubricantId is null ? null : rules.Lubricants[stage.LubricantId];
        var findings = new List<Finding>(rules.Rules.Count);
        List<NotChecked>? notChecked = null;
        RuleDefinition? setPointRule = null;

        foreach (var rule in rules.Rules)
        {
            var missing = Applies(rules, rule.AppliesTo, stage, classes, type, lubricant, out var applies);
            if (!applies)
            {
                continue;
            }

            if (missing is not null)
            {
                (notChecked ??= []).Add(new NotChecked(rule.Id, rule.Title, [missing], NotCheckedReason.ApplicabilityInput));
                continue;
            }

            if (rule.SetPoints is not null)
            {
                setPointRule = rule;
                continue;
            }

            var finding = Check(rules, rule, stage, lubricant, ref notChecked);
            if (finding is not null)
            {
                findings.Add(finding);
            }
        }

        if (setPointRule is not null)
        {
            if (stage.NormalOperatingDischarge is { } normal)
            {
                findings.Add(ProposeSetPoints(setPointRule, normal, findings));
            }
            else
            {
                (notChecked ??= []).Add(new NotChecked(setPointRule.Id, setPointRule.Title, ["normalOperatingDischargeTemperature"], NotCheckedReason.CheckedValue));
            }
        }

        if (stage.EfficiencyDefaulted && type is not null)
        {
            findings.Add(new Finding
            {
                RuleId = "ENGINE-DEFAULT-EFFICIENCY",
                Title = "Efficiency taken from the compressor-type catalogue",
                Severity = Severity.Info,
                RuleSeverity = Severity.Info,
                Quantity = CheckedQuantity.Estimated,
                Basis = type.EfficiencyBasis,
                Layer = rules.CatalogueLayers.TryGetValue("compressorTypes/" + type.Id, out var typeLayer) ? typeLayer : "default",
                Message = "The request gave no efficiency, so the estimated discharge temperature uses the catalogue default for this compressor type. Use the manufacturer's value where one exists.",
                Note = type.DefaultEfficiency is { } eff
                    ? string.Create(CultureInfo.InvariantCulture, $"{type.EfficiencyKind.ToString().ToLowerInvariant()} efficiency {eff:0.00} for '{type.Id}'")
                    : string.Create(CultureInfo.InvariantCulture, $"no efficiency applies to '{type.Id}'"),
            });
        }

        // A gate must not pass what it could not check: violation-level rules left unchecked make the stage a review.
        if (notChecked is not null)
        {
            var uncheckedLimits = notChecked.Where(n => n.Why != NotCheckedReason.OptionalInput && rules.RulesById.TryGetValue(n.RuleId, out var r) && r.Severity == Severity.Violation).ToArray();
            if (uncheckedLimits.Length > 0)
            {
                findings.Add(new Finding
                {
                    RuleId = UncheckedLimitsRuleId,
                    Title = "Limits that could not be checked",
                    Severity = Severity.Warning,
                    RuleSeverity = Severity.Warning,
                    Quantity = CheckedQuantity.Estimated,
                    Basis = "common practice, no single source: a screening gate does not pass a stage whose limits it could not check",
                    Layer = "default",
                    Message = "Some violation-level rules could not be checked because inputs are missing, so this stage cannot pass. Supply the missing inputs listed under notChecked, or have a qualified engineer confirm the limits with the manufacturer and local codes.",
                    Note = "unchecked: " + string.Join(", ", uncheckedLimits.Select(n => $"{n.RuleId} (needs {string.Join(", ", n.MissingInputs)})")),
                });
            }
        }

        var verdict = Verdict.Pass;
        Finding? governing = null;
        foreach (var f in findings)
        {
            if (f.Severity == Severity.Violation)
            {
                verdict = Verdict.Fail;
            }
            else if (f.Severity == Severity.Warning && verdict == Verdict.Pass)
            {
                verdict = Verdict.Review;
            }

            if (f.RuleSeverity == Severity.Violation && f.Margin is { } m && IsBetterGoverning(f, m, governing))
            {
                governing = f;
            }
        }

        // A violation with no number (a prohibited combination, liquid at the suction) decides the stage whatever the
        // margins of the numeric limits: it governs, and no operating point moves it, so no envelope is computed.
        if (findings.FirstOrDefault(f => f.Severity == Severity.Violation && f.Margin is null) is { } decisive)
        {
            return new StageResult(stage.StageIndex, verdict, findings, notChecked ?? (IReadOnlyList<NotChecked>)[], rules.Disabled, classes, detected, decisive, null);
        }

        EnvelopeEstimate? env = null;
        if (envelope is not null && governing is not null)
        {
            env = Envelope(envelope, stage, governing);
        }

        return new StageResult(stage.StageIndex, verdict, findings, notChecked ?? (IReadOnlyList<NotChecked>)[], rules.Disabled, classes, detected, governing, env);
    }

    private static bool IsBetterGoverning(Finding candidate, Reading margin, Finding? current)
    {
        if (current is null)
        {
            return true;
        }

        // Kelvin margins and ratio margins cannot be compared; a temperature limit governs over a ratio limit.
        var candTemp = margin.Dimension != QuantityDimension.Ratio;
        var curTemp = current.Margin!.Value.Dimension != QuantityDimension.Ratio;
        if (candTemp != curTemp)
        {
            return candTemp;
        }

        return margin.SiValue < current.Margin.Value.SiValue;
    }

    private static EnvelopeEstimate Envelope(IEnvelopeCalculator calculator, StageFacts stage, Finding governing)
    {
        if (governing.Quantity is CheckedQuantity.Isentropic or CheckedQuantity.IsentropicInternal or CheckedQuantity.Estimated or CheckedQuantity.EstimatedUpperBound or CheckedQuantity.PressureRatio)
        {
            var (p, t) = calculator.Compute(stage, governing.Quantity, governing.Limit!.Value);
            return new EnvelopeEstimate(governing.RuleId, governing.Quantity, governing.Limit.Value, p, t);
        }

        return new EnvelopeEstimate(governing.RuleId, governing.Quantity, governing.Limit!.Value,
            new EnvelopeBound<Pressure>(EnvelopeBoundStatus.NotComputableForQuantity, null, NotComputable),
            new EnvelopeBound<Temperature>(EnvelopeBoundStatus.NotComputableForQuantity, null, NotComputable));
    }

    private static void Validate(EffectiveRuleSet rules, StageFacts stage)
    {
        static void Positive(double v, string name)
        {
            if (!double.IsFinite(v) || v <= 0)
            {
                throw new ArgumentOutOfRangeException(nameof(stage), v, $"{name} must be positive and finite.");
            }
        }

        Positive(stage.SuctionTemperature.Kelvins, nameof(StageFacts.SuctionTemperature));
        Positive(stage.Isentropic.Kelvins, nameof(StageFacts.Isentropic));
        Positive(stage.Estimated.Kelvins, nameof(StageFacts.Estimated));
        Positive(stage.EstimatedUpperBound.Kelvins, nameof(StageFacts.EstimatedUpperBound));
        Positive(stage.SuctionPressure.Pascals, nameof(StageFacts.SuctionPressure));
        Positive(stage.DischargePressure.Pascals, nameof(StageFacts.DischargePressure));
        static void Optional(Temperature? t, string name)
        {
            if (t is { } v)
            {
                Positive(v.Kelvins, name);
            }
        }

        Optional(stage.MeasuredDischarge, nameof(StageFacts.MeasuredDischarge));
        Optional(stage.NormalOperatingDischarge, nameof(StageFacts.NormalOperatingDischarge));
        Optional(stage.JacketCoolantInlet, nameof(StageFacts.JacketCoolantInlet));
        Optional(stage.DischargeWaterDewPoint, nameof(StageFacts.DischargeWaterDewPoint));
        Optional(stage.DesignTemperature, nameof(StageFacts.DesignTemperature));

        static void Known<T>(IReadOnlyDictionary<string, T> catalogue, string? id, string what)
        {
            if (id is not null && !catalogue.ContainsKey(id))
            {
                throw new ArgumentOutOfRangeException(nameof(stage), id, $"Unknown {what} '{id}'; known: {string.Join(", ", catalogue.Keys.Order(StringComparer.Ordinal))}.");
            }
        }

        Known(rules.CompressorTypes, stage.CompressorTypeId, "compressor type");
        Known(rules.Lubricants, stage.LubricantId, "lubricant");
        Known(rules.Materials, stage.ValveMaterialId, "valve material");
        Known(rules.Materials, stage.SealMaterialId, "seal material");
        Known(rules.Materials, stage.RingMaterialId, "ring material");
        Known(rules.Materials, stage.SpringMaterialId, "spring material");
        if (stage.DischargeMaterial is { } dm && !DischargeMaterials.IsKnown(dm))
        {
            throw new ArgumentOutOfRangeException(nameof(stage), dm, $"Unknown discharge material '{dm}'; known: {string.Join(", ", DischargeMaterials.All)}.");
        }
        foreach (var c in stage.DeclaredServiceClasses)
        {
            Known(rules.ServiceClasses, c, "service class");
        }
    }

    private static string? MissingDetectionInput(EffectiveRuleSet rules, IReadOnlyList<string> wanted, StageFacts s)
    {
        foreach (var id in wanted)
        {
            if (rules.ServiceClasses.TryGetValue(id, out var c))
            {
                if (c.Detection == ServiceDetection.MolarMassAtMost && s.GasMolarMass is null)
                {
                    return "gasMolarMass";
                }

                if (c.Detection == ServiceDetection.OxygenFractionAbove && s.OxygenMoleFraction is null)
                {
                    return "oxygenMoleFraction";
                }

                if (c.Detection is ServiceDetection.SpeciesFractionAbove or ServiceDetection.PartialPressureAbove && s.MoleFractions is null)
                {
                    return "gas.composition";
                }
            }
        }

        return null;
    }

    /// <summary>Returns the missing input that prevents checking, or null; <paramref name="applies"/> false when the rule does not apply.</summary>
    private static string? Applies(EffectiveRuleSet rules, AppliesTo a, StageFacts s, IReadOnlyList<string> classes, CompressorType? type, Lubricant? lubricant, out bool applies)
    {
        applies = false;
        string? missing = null;
        if (a.DecidedBy.Count > 0 && !DecidedByMatches(a.DecidedBy, s.DecidedBy))
        {
            return null;
        }

        if (a.SuctionPhases.Count > 0)
        {
            if (s.SuctionPhase is not { } sp)
            {
                missing ??= "suctionPhase";
            }
            else if (!a.SuctionPhases.Contains(sp))
            {
                return null;
            }
        }

        if (a.DischargePhases.Count > 0)
        {
            if (s.DischargePhase is not { } dp)
            {
                missing ??= "dischargePhase";
            }
            else if (!a.DischargePhases.Contains(dp))
            {
                return null;
            }
        }

        if (a.OxygenPartialPressureAbovePascals is { } pO2Threshold)
        {
            if (s.DischargeOxygenPartialPressure is not { } pO2)
            {
                missing ??= "gas.composition";
            }
            else if (!(pO2.Pascals > pO2Threshold))
            {
                return null;
            }
        }

        if (a.PartialPressureAbovePascals.Count > 0)
        {
            if (s.MoleFractions is null)
            {
                missing ??= "gas.composition";
            }
            else if (!a.PartialPressureAbovePascals.Any(kv => ServiceClassDetector.PartialPressurePascals(s.MoleFractions, kv.Key, s.DischargePressure) > kv.Value))
            {
                return null;
            }
        }

        if (a.DischargePressureAbovePascals is { } pDischargeThreshold && !(s.DischargePressure.Pascals > pDischargeThreshold))
        {
            return null;
        }

        if (a.DischargeMaterials.Count > 0)
        {
            if (s.DischargeMaterial is null)
            {
                missing ??= "dischargeMaterial";
            }
            else if (!Contains(a.DischargeMaterials, s.DischargeMaterial))
            {
                return null;
            }
        }

        if (!MaterialFlag(rules, a.ValveMaterialSourService, s.ValveMaterialId, "valveMaterial", "sourService", m => m.SourService, ref missing)
            || !MaterialFlag(rules, a.SpringMaterialSourService, s.SpringMaterialId, "springMaterial", "sourService", m => m.SourService, ref missing)
            || !MaterialFlag(rules, a.SealMaterialSourService, s.SealMaterialId, "sealMaterial", "sourService", m => m.SourService, ref missing)
            || !MaterialFlag(rules, a.SealMaterialRgdRated, s.SealMaterialId, "sealMaterial", "rgdRated", m => m.RgdRated, ref missing))
        {
            return null;
        }

        if (a.Lubricated is { } lubricated)
        {
            if (type is null)
            {
                missing ??= "compressorType";
            }
            else if (type.Lubricated != lubricated)
            {
                return null;
            }
        }

        if (a.Cooled is { } cooled)
        {
            var isCooled = s.Cooled ?? (s.JacketCoolantInlet is not null || type?.PredictionIsUpperBound == true ? true : type is null ? null : false);
            if (isCooled is null)
            {
                missing ??= "compressorType";
            }
            else if (isCooled != cooled)
            {
                return null;
            }
        }

        if (a.ValveMaterialOxygenCompatible is { } valveO2)
        {
            if (s.ValveMaterialId is null)
            {
                missing ??= "valveMaterial";
            }
            else if (rules.Materials[s.ValveMaterialId].OxygenCompatible is not { } compatible)
            {
                missing ??= $"materials[{s.ValveMaterialId}].oxygenCompatible";
            }
            else if (compatible != valveO2)
            {
                return null;
            }
        }

        if (a.SealMaterialOxygenCompatible is { } sealO2)
        {
            if (s.SealMaterialId is null)
            {
                missing ??= "sealMaterial";
            }
            else if (rules.Materials[s.SealMaterialId].OxygenCompatible is not { } compatible)
            {
                missing ??= $"materials[{s.SealMaterialId}].oxygenCompatible";
            }
            else if (compatible != sealO2)
            {
                return null;
            }
        }
        if (a.CompressorTypes.Count > 0 || a.NotCompressorTypes.Count > 0)
        {
            if (s.CompressorTypeId is null)
            {
                missing ??= "compressorType";
            }
            else if ((a.CompressorTypes.Count > 0 && !Contains(a.CompressorTypes, s.CompressorTypeId)) || Contains(a.NotCompressorTypes, s.CompressorTypeId))
            {
                return null;
            }
        }

        if (a.ServiceClasses.Count > 0 && !Any(a.ServiceClasses, classes))
        {
            // A class detected from the composition cannot be ruled out when the composition input is absent; when it can
            // be ruled out, the rule does not apply whatever other input is missing.
            var detectionInput = MissingDetectionInput(rules, a.ServiceClasses, s);
            if (detectionInput is null)
            {
                return null;
            }

            missing ??= detectionInput;
        }

        if (a.NotServiceClasses.Count > 0 && Any(a.NotServiceClasses, classes))
        {
            return null;
        }

        if (a.StagePositions.Count > 0 && !a.StagePositions.Contains(s.Position))
        {
            return null;
        }

        if (a.BaseStocks.Count > 0)
        {
            if (lubricant is null && type is { Lubricated: false })
            {
                // A non-lubricated machine carries no lubricant in its gas path: a rule on the oil does not apply.
                return null;
            }

            if (lubricant is null)
            {
                missing ??= "lubricant";
            }
            else if (!Contains(a.BaseStocks, lubricant.BaseStock))
            {
                return null;
            }
        }

        if (a.ValveMaterials.Count > 0)
        {
            if (s.ValveMaterialId is null)
            {
                missing ??= "valveMaterial";
            }
            else if (!Contains(a.ValveMaterials, s.ValveMaterialId))
            {
                return null;
            }
        }

        if (a.SealMaterials.Count > 0)
        {
            if (s.SealMaterialId is null)
            {
                missing ??= "sealMaterial";
            }
            else if (!Contains(a.SealMaterials, s.SealMaterialId))
            {
                return null;
            }
        }

        if (a.UnloadedRunning is { } wanted)
        {
            if (s.UnloadedRunning is null)
            {
                missing ??= "unloadedRunning";
            }
            else if (s.UnloadedRunning != wanted)
            {
                return null;
            }
        }

        applies = true;
        return missing;
    }

    // False when the material's flag is known and differs from the wanted value (the rule does not apply); a missing
    // material or an unstated flag is recorded in missing and the rule is listed as not checked.
    private static bool MaterialFlag(EffectiveRuleSet rules, bool? wanted, string? materialId, string input, string field, Func<Material, bool?> flag, ref string? missing)
    {
        if (wanted is not { } w)
        {
            return true;
        }

        if (materialId is null)
        {
            missing ??= input;
            return true;
        }

        if (flag(rules.Materials[materialId]) is not { } actual)
        {
            missing ??= $"materials[{materialId}].{field}";
            return true;
        }

        return actual == w;
    }

    private static bool Contains(IReadOnlyList<CheckedQuantity> list, CheckedQuantity value)
    {
        for (var i = 0; i < list.Count; i++)
        {
            if (list[i] == value)
            {
                return true;
            }
        }

        return false;
    }

    // "real-gas" in a rule names either real-gas model (peng-robinson, gerg-2008); the other names match themselves.
    private static bool DecidedByMatches(IReadOnlyList<string> list, string model) =>
        Contains(list, model) || (model is "peng-robinson" or "gerg-2008" && Contains(list, "real-gas"));

    private static bool Contains(IReadOnlyList<string> list, string value)
    {
        for (var i = 0; i < list.Count; i++)
        {
            if (string.Equals(list[i], value, StringComparison.Ordinal))
            {
                return true;
            }
        }

        return false;
    }

    private static bool Any(IReadOnlyList<string> wanted, IReadOnlyList<string> have)
    {
        for (var i = 0; i < have.Count; i++)
        {
            if (Contains(wanted, have[i]))
            {
                return true;
            }
        }

        return false;
    }

    private static (double? Value, string? Missing) ValueOf(CheckedQuantity q, StageFacts s, RuleDefinition rule) => q switch
    {
        CheckedQuantity.MeasuredMinusPredictedRise when s.MeasuredDischarge is null => (null, "measuredDischargeTemperature"),
        CheckedQuantity.MeasuredMinusPredictedRise => (DeviationTrend.Rise(s, rule.Trend!), DeviationTrend.MissingHistory(rule.Trend!)),
        CheckedQuantity.Isentropic => (s.Isentropic.Kelvins, null),
        CheckedQuantity.IsentropicInternal => (s.IsentropicInternal?.Kelvins, "compressorTypes.valveLoss"),
        CheckedQuantity.Estimated => (s.Estimated.Kelvins, null),
        CheckedQuantity.EstimatedUpperBound => (s.EstimatedUpperBound.Kelvins, null),
        CheckedQuantity.Measured => (s.MeasuredDischarge?.Kelvins, "measuredDischargeTemperature"),
        CheckedQuantity.MeasuredMinusPredicted => (s.MeasuredDischarge is { } m ? m.Kelvins - s.Estimated.Kelvins : null, "measuredDischargeTemperature"),
        CheckedQuantity.PressureRatio => (s.PressureRatio, null),
        CheckedQuantity.RealGasCorrection => (s.RealGasCorrection?.Kelvins, "realGasResult"),
        CheckedQuantity.MeasuredMinusIsentropic => (s.MeasuredDischarge is { } mi ? mi.Kelvins - s.Isentropic.Kelvins : null, "measuredDischargeTemperature"),
        CheckedQuantity.SuctionSuperheat => (s.SuctionSuperheat?.Kelvins, "suctionSuperheat"),
        CheckedQuantity.Combination => (null, null),
        CheckedQuantity.TemperatureRise => (s.TemperatureRise.Kelvins, null),
        CheckedQuantity.JacketCoolantInlet => (s.JacketCoolantInlet?.Kelvins, "jacketCoolantInletTemperature"),
        CheckedQuantity.NormalOperating => (s.NormalOperatingDischarge?.Kelvins, "normalOperatingDischargeTemperature"),
        _ => throw new ArgumentOutOfRangeException(nameof(q), q, "Unknown quantity."),
    };

    private static string? CatalogueLayer(EffectiveRuleSet rules, LimitSource source, StageFacts s)
    {
        var (section, id) = source switch
        {
            LimitSource.LubricantRatedMaxDischarge or LimitSource.LubricantAutoignition or LimitSource.LubricantFlashPoint => ("lubricants", s.LubricantId),
            LimitSource.ValveMaterialLimit => ("materials", s.ValveMaterialId),
            LimitSource.SealMaterialLimit => ("materials", s.SealMaterialId),
            LimitSource.RingMaterialLimit => ("materials", s.RingMaterialId),
            _ => ("", null),
        };
        return id is not null && rules.CatalogueLayersByPair.TryGetValue((section, id), out var layer) ? layer : null;
    }

    private enum LimitOutcome
    {
        Ok,
        Missing,
        NotApplicable,
    }

    private static LimitOutcome ResolveLimit(EffectiveRuleSet rules, RuleLimit limit, StageFacts s, Lubricant? lubricant, out double value, out string? missing)
    {
        value = 0;
        missing = null;
        double? b;
        switch (limit.Source)
        {
            case LimitSource.Absolute:
                value = limit.Absolute!.Value;
                return LimitOutcome.Ok;
            case LimitSource.GreaterOfFixedAndFractionOfPredicted:
                value = Math.Max(limit.AtLeastKelvin, limit.FractionOfPredicted * s.Estimated.Kelvins);
                return LimitOutcome.Ok;
            case LimitSource.LubricantRatedMaxDischarge or LimitSource.LubricantAutoignition or LimitSource.LubricantFlashPoint:
                if (lubricant is null)
                {
                    missing = "lubricant";
                    return LimitOutcome.Missing;
                }

                (b, missing) = limit.Source switch
                {
                    LimitSource.LubricantRatedMaxDischarge => (lubricant.RatedMaxDischarge?.Kelvins, $"lubricants[{lubricant.Id}].ratedMaxDischarge"),
                    LimitSource.LubricantAutoignition => (lubricant.AutoignitionTemperature?.Kelvins, $"lubricants[{lubricant.Id}].autoignitionTemperature"),
                    _ => (lubricant.FlashPoint?.Kelvins, $"lubricants[{lubricant.Id}].flashPoint"),
                };
                break;
            case LimitSource.ValveMaterialLimit or LimitSource.SealMaterialLimit or LimitSource.RingMaterialLimit:
                var id = limit.Source switch
                {
                    LimitSource.ValveMaterialLimit => s.ValveMaterialId,
                    LimitSource.SealMaterialLimit => s.SealMaterialId,
                    _ => s.RingMaterialId,
                };
                if (id is null)
                {
                    missing = limit.Source switch
                    {
                        LimitSource.ValveMaterialLimit => "valveMaterial",
                        LimitSource.SealMaterialLimit => "sealMaterial",
                        _ => "ringMaterial",
                    };
                    return LimitOutcome.Missing;
                }

                b = rules.Materials[id].ContinuousLimit?.Kelvins;
                if (b is null)
                {
                    // The catalogue states deliberately that no temperature check applies (e.g. metal plates).
                    return LimitOutcome.NotApplicable;
                }

                break;
            case LimitSource.InputSuctionTemperature:
                b = s.SuctionTemperature.Kelvins;
                break;
            case LimitSource.InputDischargeWaterDewPoint:
                b = s.DischargeWaterDewPoint?.Kelvins;
                missing = "dischargeWaterDewPoint";
                break;
            case LimitSource.InputDesignTemperature:
                b = s.DesignTemperature?.Kelvins;
                missing = "designTemperature";
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(limit), limit.Source, "Unknown limit source.");
        }

        if (b is null)
        {
            return LimitOutcome.Missing;
        }

        missing = null;
        value = b.Value - limit.DeratingForPressureKelvin - limit.MarginKelvin + limit.PlusKelvin;
        return LimitOutcome.Ok;
    }

    private static Finding? Check(EffectiveRuleSet rules, RuleDefinition rule, StageFacts s, Lubricant? lubricant, ref List<NotChecked>? notChecked)
    {
        if (rule.Prohibited)
        {
            // A prohibited combination or condition: no number to compare, nothing a layer can sign off.
            return new Finding
            {
                RuleId = rule.Id,
                Title = rule.Title,
                Severity = Severity.Violation,
                RuleSeverity = Severity.Violation,
                Quantity = CheckedQuantity.Combination,
                Basis = rule.Basis,
                Layer = rule.LimitLayer,
                Message = rule.Message,
            };
        }

        if (rule.Quantities.Count == 1 && rule.Quantities[0] == CheckedQuantity.Combination)
        {
            // An info note or a warning caution on a condition (its appliesTo already holds).
            return new Finding
            {
                RuleId = rule.Id,
                Title = rule.Title,
                Severity = rule.Severity == Severity.Warning ? Severity.Warning : Severity.Info,
                RuleSeverity = rule.Severity,
                Quantity = CheckedQuantity.Combination,
                Basis = rule.Basis,
                Layer = rule.LimitLayer,
                Message = rule.Message,
            };
        }

        if (s.SuctionSuperheat is null && s.SuctionPhase is not null && Contains(rule.Quantities, CheckedQuantity.SuctionSuperheat))
        {
            // No hydrocarbon dew point at the suction pressure (nothing condensable, or above the cricondenbar): no margin to keep.
            return null;
        }

        var dim = rule.Quantities[0].Dimension();
        var marginDim = dim == QuantityDimension.Ratio ? QuantityDimension.Ratio : QuantityDimension.TemperatureDifference;

        // Pick the available quantity with the smallest margin (or the first available when there is no limit).
        double limitValue = 0;
        var hasLimit = false;
        var limitLayer = rule.LimitLayer;
        if (rule.Limit is not null)
        {
            var outcome = ResolveLimit(rules, rule.Limit, s, lubricant, out limitValue, out var limitMissing);
            limitLayer = rules.Later(rule.LimitLayer, CatalogueLayer(rules, rule.Limit.Source, s));
            if (outcome == LimitOutcome.NotApplicable)
            {
                return null;
            }

            if (outcome == LimitOutcome.Missing)
            {
                // The stage's own design temperature is an optional input: listed as not checked, it does not hold the
                // verdict at review, because the shipped limits on the same temperature still apply.
                var why = rule.Limit.Source == LimitSource.InputDesignTemperature ? NotCheckedReason.OptionalInput : NotCheckedReason.LimitInput;
                (notChecked ??= []).Add(new NotChecked(rule.Id, rule.Title, [limitMissing!], why));
                return null;
            }

            hasLimit = true;
        }

        CheckedQuantity? best = null;
        double bestValue = 0, bestMargin = double.PositiveInfinity;
        string[]? missingQ = null;
        foreach (var q in rule.Quantities)
        {
            var (v, miss) = ValueOf(q, s, rule);
            if (v is null)
            {
                missingQ = missingQ is null ? [miss!] : [.. missingQ, miss!];
                continue;
            }

            var margin = hasLimit ? (rule.Direction == LimitDirection.Upper ? limitValue - v.Value : v.Value - limitValue) : 0;
            if (best is null || margin < bestMargin)
            {
                best = q;
                bestValue = v.Value;
                bestMargin = margin;
            }
        }

        if (best is null)
        {
            if (!(rule.RequiresSignedLimit && !hasLimit))
            {
                var distinct = missingQ!.Distinct(StringComparer.Ordinal).ToArray();
                var why = distinct.All(m => m.StartsWith("history", StringComparison.Ordinal)) ? NotCheckedReason.History : NotCheckedReason.CheckedValue;
                (notChecked ??= []).Add(new NotChecked(rule.Id, rule.Title, distinct, why));
                return null;
            }
        }

        var value = best is null ? (Reading?)null : new Reading(dim, bestValue);
        var quantity = best ?? rule.Quantities[0];
        if (rule.RequiresSignedLimit && !hasLimit)
        {
            return new Finding
            {
                RuleId = rule.Id,
                Title = rule.Title,
                Severity = Severity.Violation,
                RuleSeverity = Severity.Violation,
                Quantity = quantity,
                Value = value,
                Basis = rule.Basis,
                Layer = rule.LimitLayer,
                Message = rule.Message,
                Note = "no limit set for this special service; an engineer must set and sign off the limit in a site or asset layer",
            };
        }

        if (!hasLimit)
        {
            return new Finding
            {
                RuleId = rule.Id,
                Title = rule.Title,
                Severity = Severity.Info,
                RuleSeverity = rule.Severity,
                Quantity = quantity,
                Value = value,
                Basis = rule.Basis,
                Layer = rule.LimitLayer,
                Message = rule.Message,
            };
        }

        Severity severity;
        if (bestMargin < 0)
        {
            severity = rule.Severity;
        }
        else if (rule.WarningBand > 0 && bestMargin < rule.WarningBand)
        {
            severity = rule.Severity == Severity.Violation ? Severity.Warning : Severity.Info;
        }
        else
        {
            severity = Severity.Pass;
        }

        var limit = new Reading(dim, limitValue);
        var marginReading = new Reading(marginDim, bestMargin);
        return new Finding
        {
            RuleId = rule.Id,
            Title = rule.Title,
            Severity = severity,
            RuleSeverity = rule.Severity,
            Quantity = quantity,
            Value = value,
            Limit = limit,
            // The rule's own list, not a copy: a finding allocates nothing for it and equal findings stay equal.
            LimitAsStated = rule.Limit!.Source == LimitSource.Absolute ? rule.Limit.AsStated : [],
            Margin = marginReading,
            Direction = rule.Direction,
            Basis = rule.Basis,
            Layer = limitLayer,
            LoosenedReason = rule.LoosenedReason,
            SignOff = rule.SignOff,
            Message = OutcomeWording.For(rule, bestMargin < 0 ? Outcome.Beyond : severity == Severity.Pass ? Outcome.Inside : Outcome.Near, marginReading, rule.WarningBand),
        };
    }

    private static Finding ProposeSetPoints(RuleDefinition rule, Temperature normal, List<Finding> findings)
    {
        var spec = rule.SetPoints!;
        var nK = normal.Kelvins;
        var nC = nK - CelsiusOffset;
        var minStep = spec.MinimumStepKelvin;

        // Percent steps are taken on the Celsius reading: smaller than on the Fahrenheit reading above -40 °C, so more cautious.
        // Every step is at least the minimum: an alarm sits above normal, a trip above the alarm.
        static double Step(SetPointStep s, double celsius, double least) => Math.Max(least, Math.Min(s.Fraction * celsius, s.AtMostKelvin));
        var alarm = nK + Step(spec.Alarm, nC, minStep);
        var trip = Math.Max(nK + Step(spec.Trip, nC, minStep), alarm + minStep);

        // Only limits on what the instrument reads (the measured or estimated discharge temperature) cap a set point; a
        // design-prediction limit (isentropic, η = 1) is a rating criterion for the machine, not an operating ceiling.
        Finding? cap = null;
        foreach (var f in findings)
        {
            if (f.RuleSeverity == Severity.Violation && f.Limit is { Dimension: QuantityDimension.Temperature } l
                && f.Quantity is CheckedQuantity.Measured or CheckedQuantity.Estimated
                && f.Direction == LimitDirection.Upper && (cap is null || l.SiValue < cap.Limit!.Value.SiValue))
            {
                cap = f;
            }
        }

        var capped = false;
        var severity = Severity.Info;
        string? note = null;
        if (cap is not null)
        {
            var capK = cap.Limit!.Value.SiValue;
            if (trip > capK)
            {
                var cappedTrip = capK;
                var cappedAlarm = Math.Min(alarm, cappedTrip - minStep);
                if (cappedAlarm >= nK + minStep && cappedTrip > cappedAlarm)
                {
                    trip = cappedTrip;
                    alarm = cappedAlarm;
                    capped = true;
                }
                else
                {
                    // The limit leaves no room for an alarm and a trip above normal: say so rather than collapse them.
                    severity = Severity.Warning;
                    note = string.Create(CultureInfo.InvariantCulture,
                        $"the fail limit {new Reading(QuantityDimension.Temperature, capK)} of {cap.RuleId} leaves no room above normal operating {new Reading(QuantityDimension.Temperature, nK)} for an alarm and a trip {minStep:0.#} K apart; the proposal shown ignores the limit, and its trip is above it: lower the normal operating temperature or review the limit");
                }
            }
        }

        var proposal = new SetPointProposal(normal, Temperature.FromKelvins(alarm), Temperature.FromKelvins(trip), cap?.RuleId, cap?.Limit?.Temperature, capped);
        return new Finding
        {
            RuleId = rule.Id,
            Title = rule.Title,
            Severity = severity,
            RuleSeverity = rule.Severity,
            Quantity = CheckedQuantity.NormalOperating,
            Value = new Reading(QuantityDimension.Temperature, nK),
            Basis = rule.Basis,
            Layer = rule.LimitLayer,
            LoosenedReason = rule.LoosenedReason,
            Message = severity == Severity.Warning
                ? "The limits in force leave no room for alarm and trip set points above the normal operating discharge temperature. Lower the normal operating temperature (cooling, ratio) or have the limits reviewed with the manufacturer, the site's safety review and local codes."
                : rule.Message,
            Note = note,
            SetPoints = proposal,
        };
    }
}
