using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Rules.Units;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// A request bound to SI values: every quantity parsed once, at binding, with the request path that gave it. The stage
/// evaluator works from this alone; nothing after binding reads the request's text.
/// </summary>
/// <param name="Request">The request as received (asset, site, preset and the caller's choices are echoed from it).</param>
/// <param name="Layers">The rule layers in force for the request's site and asset.</param>
/// <param name="Barometer">The barometric pressure used for gauge pressures, when the site gives one.</param>
/// <param name="Feed">The gas at the first stage's suction (with any humidity).</param>
/// <param name="Stages">The stages, bound.</param>
/// <param name="Flow">The train's mass flow, when given.</param>
/// <param name="DeclaredServiceClasses">The declared service plus the classes the composition makes obvious.</param>
/// <param name="Method">The gas model asked for (normalized).</param>
/// <param name="HumidityField">The request field that put water into the gas (for errors about the water).</param>
internal sealed record EvaluationInput(
    EvaluationRequest Request,
    LayerResolution Layers,
    Pressure? Barometer,
    GasMixture Feed,
    IReadOnlyList<BoundStage> Stages,
    MassFlow? Flow,
    IReadOnlyList<string> DeclaredServiceClasses,
    string Method,
    string HumidityField)
{
    /// <summary>The rule set in force.</summary>
    public EffectiveRuleSet Rules => Layers.Set!;
}

/// <summary>One stage of the request, bound.</summary>
/// <param name="Index">Zero-based stage index.</param>
/// <param name="Input">The stage as received (equipment ids, operation flags).</param>
/// <param name="Train">The stage as the train solver takes it.</param>
/// <param name="EfficiencySource">Where the efficiency came from (request, rule-default, calibration) and its basis.</param>
/// <param name="Calibration">The calibration fitted at binding, when the stage gave one.</param>
/// <param name="MeasuredDischarge">Measured discharge temperature.</param>
/// <param name="NormalOperatingDischarge">Normal operating discharge temperature (set points).</param>
/// <param name="JacketCoolantInlet">Jacket coolant inlet temperature.</param>
/// <param name="DesignTemperature">Design temperature of the discharge side.</param>
/// <param name="SuctionPressureUnit">The unit the suction pressure was typed in (null for a stage fed through a cooler).</param>
/// <param name="DischargePressureUnit">The unit the discharge pressure was typed in.</param>
/// <param name="Oil">The oil injection as stated, parsed.</param>
/// <param name="ValveLossPerValve">The compressor type's valve-loss allowance per valve (a fraction), NaN when none.</param>
internal sealed record BoundStage(
    int Index,
    StageInput Input,
    TrainStage Train,
    (string Source, string? Basis) EfficiencySource,
    StageCalibration? Calibration,
    Temperature? MeasuredDischarge,
    Temperature? NormalOperatingDischarge,
    Temperature? JacketCoolantInlet,
    Temperature? DesignTemperature,
    UnitToken? SuctionPressureUnit,
    UnitToken DischargePressureUnit,
    BoundOilInjection? Oil,
    double ValveLossPerValve);

/// <summary>An oil-flooded stage's oil injection as the request states it, parsed.</summary>
/// <param name="Flow">Oil mass flow.</param>
/// <param name="InletTemperature">Oil inlet temperature.</param>
/// <param name="ShaftPower">The package's shaft power.</param>
internal sealed record BoundOilInjection(MassFlow? Flow, Temperature? InletTemperature, Power? ShaftPower);
