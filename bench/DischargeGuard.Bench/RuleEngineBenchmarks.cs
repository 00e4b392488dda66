using BenchmarkDotNet.Attributes;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using UnitsNet;

namespace DischargeGuard.Bench;

/// <summary>One stage against the shipped default rules (goal: a few µs, allocations only for findings), and a strict load.</summary>
[MemoryDiagnoser]
public class RuleEngineBenchmarks
{
    private string _rulesDirectory = "";
    private EffectiveRuleSet _defaults = null!;
    private EffectiveRuleSet _siteAsset = null!;
    private StageFacts _recip = null!;
    private StageFacts _screw = null!;

    [GlobalSetup]
    public void Setup()
    {
        _rulesDirectory = Repository.RulesDirectory;
        var snapshot = FileRuleSetProvider.LoadDirectory(_rulesDirectory, DateTimeOffset.UnixEpoch);
        _defaults = snapshot.DefaultSet;
        _siteAsset = snapshot.Resolve("marlow-fen", "C-204B");
        _recip = new StageFacts
        {
            StageIndex = 0,
            Position = StagePosition.Only,
            CompressorTypeId = "recip-lubricated",
            LubricantId = "mineral-vdl",
            ValveMaterialId = "peek",
            SealMaterialId = "fkm",
            DeclaredServiceClasses = ["hydrocarbon"],
            GasMolarMass = MolarMass.FromGramsPerMole(18.2),
            OxygenMoleFraction = Ratio.FromPercent(0.1),
            SuctionTemperature = Temperature.FromDegreesCelsius(30),
            SuctionPressure = Pressure.FromBars(10),
            DischargePressure = Pressure.FromBars(30),
            Isentropic = Temperature.FromDegreesCelsius(120),
            Estimated = Temperature.FromDegreesCelsius(130),
            EstimatedUpperBound = Temperature.FromDegreesCelsius(135),
            MeasuredDischarge = Temperature.FromDegreesCelsius(133),
            NormalOperatingDischarge = Temperature.FromDegreesCelsius(128),
            JacketCoolantInlet = Temperature.FromDegreesCelsius(40),
            UnloadedRunning = false,
        };
        _screw = _recip with { CompressorTypeId = "screw-oil-flooded", MeasuredDischarge = Temperature.FromDegreesCelsius(92), DischargeWaterDewPoint = Temperature.FromDegreesCelsius(45) };
    }

    [Benchmark(Baseline = true, Description = "recip stage, default rules")]
    public StageResult RecipStageDefaults() => RuleEngine.EvaluateStage(_defaults, _recip);

    [Benchmark(Description = "recip stage, default + site + asset layers")]
    public StageResult RecipStageSiteAndAsset() => RuleEngine.EvaluateStage(_siteAsset, _recip);

    [Benchmark(Description = "oil-flooded screw stage, default rules")]
    public StageResult OilFloodedScrewDefaults() => RuleEngine.EvaluateStage(_defaults, _screw);

    [Benchmark(Description = "strict load of rules/ (default, sites, assets)")]
    public int LoadRulesDirectory() => FileRuleSetProvider.LoadDirectory(_rulesDirectory, DateTimeOffset.UnixEpoch).Sites.Count;
}

internal static class Repository
{
    public static string RulesDirectory { get; } = Find();

    private static string Find()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "DischargeGuard.sln")))
        {
            dir = dir.Parent;
        }

        return Path.Combine(dir?.FullName ?? throw new InvalidOperationException("DischargeGuard.sln not found."), "rules");
    }
}
