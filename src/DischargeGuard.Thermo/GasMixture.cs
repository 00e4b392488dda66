using System.Globalization;
using System.Text;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>One species of a mixture with its mole and mass fraction.</summary>
/// <param name="Species">The species.</param>
/// <param name="MoleFraction">Mole fraction, 0–1.</param>
/// <param name="MassFraction">Mass fraction, 0–1.</param>
public readonly record struct MixtureComponent(Species Species, double MoleFraction, double MassFraction);

/// <summary>
/// An ideal-gas mixture of fixed composition. Its species' NASA 7-coefficient polynomials are collapsed, once, into one
/// set of mole-fraction-weighted coefficients per temperature segment, so evaluating a property costs the same whatever
/// the number of species. S° includes the ideal mixing term −R·Σx·ln x (at 1 bar total pressure). Immutable, thread-safe.
/// </summary>
public sealed class GasMixture
{
    private readonly MixedSegment[] _segments;
    private readonly MixtureComponent[] _components;
    private readonly MixedSegment _first;
    private readonly MixedSegment _second;

    private GasMixture(MixtureComponent[] components, MixedSegment[] segments, double molarMass, double minK, double maxK)
    {
        _components = components;
        _segments = segments;
        _first = segments[0];
        _second = segments[^1];
        MolarMassKilogramsPerMole = molarMass;
        SpecificGasConstantJoulesPerKilogramKelvin = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin / molarMass;
        MinimumKelvin = minK;
        MaximumKelvin = maxK;
        CompositionHash = Core.CompositionKey.HashOf(components);
        foreach (var c in components)
        {
            if (c.Species.Id == "H2O")
            {
                WaterMoleFraction = c.MoleFraction;
            }
        }
    }

    /// <summary>The components as a span (the per-composition model caches compare them).</summary>
    internal ReadOnlySpan<MixtureComponent> ComponentSpan => _components;

    /// <summary>Hash of the species instances and the mole fractions' bits (<see cref="Core.CompositionKey"/>).</summary>
    internal int CompositionHash { get; }

    /// <summary>Mole fraction of water vapour (0 for a dry gas); kept as a field because trains ask for it per stage.</summary>
    public double WaterMoleFraction { get; }

    /// <summary>The components, largest mole fraction first.</summary>
    public IReadOnlyList<MixtureComponent> Components => _components;

    /// <summary>Molar mass, kg/mol.</summary>
    public double MolarMassKilogramsPerMole { get; }

    /// <summary>Molar mass.</summary>
    public MolarMass MolarMass => MolarMass.FromKilogramsPerMole(MolarMassKilogramsPerMole);

    /// <summary>Specific gas constant R/M, J/(kg·K).</summary>
    public double SpecificGasConstantJoulesPerKilogramKelvin { get; }

    /// <summary>Specific gas constant R/M.</summary>
    public SpecificEntropy SpecificGasConstant => SpecificEntropy.FromJoulesPerKilogramKelvin(SpecificGasConstantJoulesPerKilogramKelvin);

    /// <summary>Lowest temperature at which every species' data is valid, K (the narrowest range wins).</summary>
    public double MinimumKelvin { get; }

    /// <summary>Highest temperature at which every species' data is valid, K.</summary>
    public double MaximumKelvin { get; }

    /// <summary>Lowest valid temperature.</summary>
    public Temperature MinimumTemperature => Temperature.FromKelvins(MinimumKelvin);

    /// <summary>Highest valid temperature.</summary>
    public Temperature MaximumTemperature => Temperature.FromKelvins(MaximumKelvin);

    /// <summary>Mole fraction of a species (0 when absent).</summary>
    public double MoleFractionOf(string speciesId)
    {
        foreach (var c in _components)
        {
            if (string.Equals(c.Species.Id, speciesId, StringComparison.Ordinal))
            {
                return c.MoleFraction;
            }
        }

        return 0;
    }

    /// <summary>Properties at <paramref name="temperature"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">The temperature is outside the mixture's data range.</exception>
    public GasProperties PropertiesAt(Temperature temperature)
    {
        var t = temperature.Kelvins;
        RequireInRange(t, nameof(temperature));
        var cpR = HeatCapacityOverR(t);
        var r = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;
        var m = MolarMassKilogramsPerMole;
        return new GasProperties(
            Temperature.FromKelvins(t),
            MolarEntropy.FromJoulesPerMoleKelvin(cpR * r),
            MolarEntropy.FromJoulesPerMoleKelvin((cpR - 1) * r),
            cpR / (cpR - 1),
            MolarEnergy.FromJoulesPerMole(EnthalpyOverR(t) * r),
            MolarEntropy.FromJoulesPerMoleKelvin(EntropyOverR(t) * r),
            SpecificEntropy.FromJoulesPerKilogramKelvin(cpR * r / m),
            SpecificEntropy.FromJoulesPerKilogramKelvin((cpR - 1) * r / m),
            SpecificEnergy.FromJoulesPerKilogram(EnthalpyOverR(t) * r / m),
            SpecificEntropy.FromJoulesPerKilogramKelvin(EntropyOverR(t) * r / m));
    }

    /// <summary>A compact description, e.g. "N2 0.78084, O2 0.209476".</summary>
    public override string ToString()
    {
        var sb = new StringBuilder();
        foreach (var c in _components)
        {
            if (sb.Length > 0)
            {
                sb.Append(", ");
            }

            sb.Append(c.Species.Id).Append(' ').Append(c.MoleFraction.ToString("0.######", CultureInfo.InvariantCulture));
        }

        return sb.ToString();
    }

    /// <summary>cp/R at <paramref name="tKelvin"/> (no range check; hot path).</summary>
    internal double HeatCapacityOverR(double tKelvin) => Segment(tKelvin).HeatCapacityOverR(tKelvin);

    /// <summary>H/R in K at <paramref name="tKelvin"/> (no range check; hot path).</summary>
    internal double EnthalpyOverR(double tKelvin) => Segment(tKelvin).EnthalpyOverR(tKelvin);

    /// <summary>S°/R at <paramref name="tKelvin"/> (no range check; hot path).</summary>
    internal double EntropyOverR(double tKelvin) => Segment(tKelvin).EntropyOverR(tKelvin);

    internal bool InRange(double tKelvin) => tKelvin >= MinimumKelvin && tKelvin <= MaximumKelvin;

    internal void RequireInRange(double tKelvin, string parameterName)
    {
        if (!InRange(tKelvin))
        {
            throw ThermoErrors.OutOfRange(
                parameterName,
                tKelvin,
                string.Create(CultureInfo.InvariantCulture, $"Temperature {tKelvin:0.###} K is outside the gas data's valid range {MinimumKelvin:0.##}–{MaximumKelvin:0.##} K for this mixture."));
        }
    }

    /// <summary>A mixture with water vapour at mole fraction <paramref name="waterMoleFraction"/> replacing part of this (dry) gas.</summary>
    internal GasMixture WithWaterFraction(Species water, double waterMoleFraction)
    {
        // Plain loops, no LINQ: the humid envelope builds one of these per trial suction temperature.
        var n = 0;
        foreach (var c in _components)
        {
            if (c.Species != water)
            {
                n++;
            }
        }

        var withWater = waterMoleFraction > 0;
        var species = new Species[withWater ? n + 1 : n];
        var moles = new double[species.Length];
        var k = 0;
        var dry = 0.0;
        foreach (var c in _components)
        {
            if (c.Species == water)
            {
                continue;
            }

            species[k] = c.Species;
            moles[k] = c.MoleFraction;
            dry += c.MoleFraction;
            k++;
        }

        for (var i = 0; i < n; i++)
        {
            moles[i] = moles[i] / dry * (1 - waterMoleFraction);
        }

        if (withWater)
        {
            species[n] = water;
            moles[n] = waterMoleFraction;
        }

        return FromAmounts(species, moles);
    }

    internal static GasMixture FromAmounts(Species[] species, double[] moles)
    {
        var count = species.Length;
        if (count == 0)
        {
            throw new InvalidOperationException("A mixture needs at least one species.");
        }

        var total = 0.0;
        for (var i = 0; i < count; i++)
        {
            total += moles[i];
        }

        // Largest amount first, ties in their given order (a stable insertion sort of the indices).
        Span<int> order = count <= 64 ? stackalloc int[count] : new int[count];
        for (var i = 0; i < count; i++)
        {
            var j = i;
            while (j > 0 && moles[order[j - 1]] < moles[i])
            {
                order[j] = order[j - 1];
                j--;
            }

            order[j] = i;
        }

        var x = new double[count];
        var sp = new Species[count];
        var molarMass = 0.0;
        for (var i = 0; i < count; i++)
        {
            x[i] = moles[order[i]] / total;
            sp[i] = species[order[i]];
            molarMass += x[i] * sp[i].MolarMassKilogramsPerMole;
        }

        var components = new MixtureComponent[count];
        var minK = double.NegativeInfinity;
        var maxK = double.PositiveInfinity;
        for (var i = 0; i < count; i++)
        {
            components[i] = new MixtureComponent(sp[i], x[i], x[i] * sp[i].MolarMassKilogramsPerMole / molarMass);
            minK = Math.Max(minK, sp[i].MinimumKelvin);
            maxK = Math.Min(maxK, sp[i].MaximumKelvin);
        }

        if (minK >= maxK)
        {
            throw new InvalidCompositionException("The species' data ranges do not overlap.");
        }

        var mixingEntropyOverR = 0.0;
        foreach (var xi in x)
        {
            mixingEntropyOverR -= xi * Math.Log(xi);
        }

        // Segment edges: the common range's ends and every range start inside it, sorted, each once.
        var edgeList = new List<double>(8) { minK, maxK };
        foreach (var s in sp)
        {
            foreach (var r in s.Ranges)
            {
                if (r.LowKelvin > minK && r.LowKelvin < maxK && !edgeList.Contains(r.LowKelvin))
                {
                    edgeList.Add(r.LowKelvin);
                }
            }
        }

        edgeList.Sort();
        var segments = new MixedSegment[edgeList.Count - 1];
        for (var k = 0; k < segments.Length; k++)
        {
            var mid = 0.5 * (edgeList[k] + edgeList[k + 1]);
            double a1 = 0, a2 = 0, a3 = 0, a4 = 0, a5 = 0, a6 = 0, a7 = mixingEntropyOverR;
            for (var i = 0; i < sp.Length; i++)
            {
                var r = sp[i].RangeAt(mid);
                a1 += x[i] * r.A1;
                a2 += x[i] * r.A2;
                a3 += x[i] * r.A3;
                a4 += x[i] * r.A4;
                a5 += x[i] * r.A5;
                a6 += x[i] * r.A6;
                a7 += x[i] * r.A7;
            }

            segments[k] = new MixedSegment(edgeList[k + 1], a1, a2, a3, a4, a5, a6, a7);
        }

        return new GasMixture(components, segments, molarMass, minK, maxK);
    }

    /// <summary>S°/R and cp/R at <paramref name="tKelvin"/> from one segment lookup (no range check; hot path).</summary>
    internal double EntropyOverR(double tKelvin, out double heatCapacityOverR)
    {
        ref readonly var seg = ref Segment(tKelvin);
        heatCapacityOverR = seg.HeatCapacityOverR(tKelvin);
        return seg.EntropyOverR(tKelvin);
    }

    /// <summary>H/R and cp/R at <paramref name="tKelvin"/> from one segment lookup (no range check; hot path).</summary>
    internal double EnthalpyOverR(double tKelvin, out double heatCapacityOverR)
    {
        ref readonly var seg = ref Segment(tKelvin);
        heatCapacityOverR = seg.HeatCapacityOverR(tKelvin);
        return seg.EnthalpyOverR(tKelvin);
    }

    // Almost every mixture has two segments (all species break at 1000 K), so those are fields, not an array walk.
    private ref readonly MixedSegment Segment(double tKelvin)
    {
        if (_segments.Length <= 2)
        {
            return ref tKelvin <= _first.HighKelvin ? ref _first : ref _second;
        }

        var segments = _segments;
        for (var i = 0; i < segments.Length - 1; i++)
        {
            if (tKelvin <= segments[i].HighKelvin)
            {
                return ref segments[i];
            }
        }

        return ref segments[^1];
    }

    // Coefficients pre-divided by their integration factors so each evaluation is a short Horner chain.
    private readonly struct MixedSegment
    {
        private readonly double _a1;
        private readonly double _a2;
        private readonly double _a3;
        private readonly double _a4;
        private readonly double _a5;
        private readonly double _a6;
        private readonly double _a7;
        private readonly double _h2;
        private readonly double _h3;
        private readonly double _h4;
        private readonly double _h5;
        private readonly double _s3;
        private readonly double _s4;
        private readonly double _s5;

        public MixedSegment(double highKelvin, double a1, double a2, double a3, double a4, double a5, double a6, double a7)
        {
            HighKelvin = highKelvin;
            _a1 = a1;
            _a2 = a2;
            _a3 = a3;
            _a4 = a4;
            _a5 = a5;
            _a6 = a6;
            _a7 = a7;
            _h2 = a2 / 2;
            _h3 = a3 / 3;
            _h4 = a4 / 4;
            _h5 = a5 / 5;
            _s3 = a3 / 2;
            _s4 = a4 / 3;
            _s5 = a5 / 4;
        }

        public double HighKelvin { get; }

        public double HeatCapacityOverR(double t) => _a1 + (t * (_a2 + (t * (_a3 + (t * (_a4 + (t * _a5)))))));

        public double EnthalpyOverR(double t) => _a6 + (t * (_a1 + (t * (_h2 + (t * (_h3 + (t * (_h4 + (t * _h5)))))))));

        public double EntropyOverR(double t) => (_a1 * Math.Log(t)) + _a7 + (t * (_a2 + (t * (_s3 + (t * (_s4 + (t * _s5)))))));
    }
}

/// <summary>Ideal-gas properties of a mixture at one temperature (S° at 1 bar).</summary>
/// <param name="Temperature">Temperature.</param>
/// <param name="MolarCp">cp, J/(mol·K).</param>
/// <param name="MolarCv">cv = cp − R, J/(mol·K).</param>
/// <param name="K">Heat-capacity ratio cp/cv, dimensionless.</param>
/// <param name="MolarEnthalpy">H on the enthalpy-of-formation basis of the data, J/mol (only differences matter here).</param>
/// <param name="MolarEntropy">S° at 1 bar including the ideal mixing term, J/(mol·K).</param>
/// <param name="SpecificCp">cp, J/(kg·K).</param>
/// <param name="SpecificCv">cv, J/(kg·K).</param>
/// <param name="SpecificEnthalpy">H per kg, J/kg.</param>
/// <param name="SpecificEntropy">S° per kg, J/(kg·K).</param>
public readonly record struct GasProperties(
    Temperature Temperature,
    MolarEntropy MolarCp,
    MolarEntropy MolarCv,
    double K,
    MolarEnergy MolarEnthalpy,
    MolarEntropy MolarEntropy,
    SpecificEntropy SpecificCp,
    SpecificEntropy SpecificCv,
    SpecificEnergy SpecificEnthalpy,
    SpecificEntropy SpecificEntropy);
