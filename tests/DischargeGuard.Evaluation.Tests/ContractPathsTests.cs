using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Thermo;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>One spelling of every request field, whichever reader found the fault (validator, JSON reader, Thermo).</summary>
public sealed class ContractPathsTests
{
    [Theory]
    [InlineData("$.stages[0].suction.pressure", "stages[0].suction.pressure")]
    [InlineData("$.asset", "asset")]
    [InlineData("$", "")]
    [InlineData(null, "")]
    [InlineData("$.gas.composition['n-C4H10']", "gas.composition.n-C4H10")]
    [InlineData("$.stages[1]['intercooler'].approach", "stages[1].intercooler.approach")]
    public void FromJsonPath_WhenGivenAReaderPath_SpellsTheContractField(string? jsonPath, string expected) =>
        Assert.Equal(expected, ContractPaths.FromJsonPath(jsonPath));

    [Fact]
    public void FromJsonPath_WhenTheValidatorNamesTheSameField_GivesTheSameName()
    {
        // A malformed species fraction and an invalid one must name one field, so a client can match them.
        Assert.Equal(ContractPaths.FromValidator("Gas.Composition.n-C4H10"), ContractPaths.FromJsonPath("$.gas.composition['n-C4H10']"));
        Assert.Equal(ContractPaths.FromValidator("Stages[0].Suction.Pressure"), ContractPaths.FromJsonPath("$.stages[0].suction.pressure"));
    }

    private static readonly StageInput Plain = new();
    private static readonly StageInput CooledToOutlet = new() { Intercooler = new IntercoolerInput { OutletTemperature = Scenario.Q("40 °C") } };
    private static readonly StageInput CooledByApproach = new() { Intercooler = new IntercoolerInput { CoolantTemperature = Scenario.Q("30 °C") } };

    [Theory]
    [InlineData(0, "DischargePressure", "stages[0].discharge.pressure")]
    [InlineData(0, "SuctionPressure", "stages[0].suction.pressure")]
    [InlineData(1, "SuctionPressure", "stages[1].intercooler.pressureDrop")]
    [InlineData(1, "SuctionTemperature", "stages[1].intercooler.outletTemperature")]
    [InlineData(2, "SuctionTemperature", "stages[2].intercooler.coolantTemperature")]
    [InlineData(1, "Intercooler.PressureDrop", "stages[1].intercooler.pressureDrop")]
    [InlineData(0, "Efficiency", "stages[0].efficiency")]
    [InlineData(0, "OilInjection", "stages[0].oilInjection")]
    [InlineData(2, null, "stages[2]")]
    public void FromThermo_WhenTheErrorCarriesItsStage_NamesTheFieldTyped(int stage, string? member, string expected)
    {
        var error = new ThermoInputException(stage, member, 1.0, "reason");

        Assert.Equal(expected, ContractPaths.FromThermo(error, [Plain, CooledToOutlet, CooledByApproach]));
    }

    [Fact]
    public void FromThermo_WhenTheErrorNamesNoStage_TakesTheStageBeingSolved()
    {
        var error = new ThermoInputException(nameof(StageConditions.DischargePressure), 1.0, "reason");

        Assert.Equal("stages[1].discharge.pressure", ContractPaths.FromThermo(error, [Plain, Plain], stageIndex: 1));
        Assert.Equal("stages", ContractPaths.FromThermo(error, [Plain, Plain]));
    }

    [Fact]
    public void FromThermo_WhenTheTrainSolverRefusesAStage_NamesThatStagesField()
    {
        // The error is raised by the stage solver and stamped with its stage by the train: no text is parsed on the way.
        TrainStage[] train =
        [
            new(UnitsNet.Pressure.FromKilopascals(400), StageEfficiency.Isentropic(0.8), SuctionPressure: UnitsNet.Pressure.FromKilopascals(100), SuctionTemperature: UnitsNet.Temperature.FromDegreesCelsius(25)),
            new(UnitsNet.Pressure.FromKilopascals(300), StageEfficiency.Isentropic(0.8), Intercooler: Intercooler.ToOutlet(UnitsNet.Temperature.FromDegreesCelsius(40), PressureDrop.None)),
        ];
        var error = Assert.Throws<ThermoInputException>(() => TrainSolver.Solve(GasCatalog.Default.Preset("dry-air"), train));

        Assert.Equal("stages[1].discharge.pressure", ContractPaths.FromThermo(error, [Plain, CooledToOutlet]));
    }
}
