using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// The discharge temperature of an oil-flooded stage (screw, vane) from its overall energy balance, adiabatic to the
/// surroundings, with gas and oil leaving at one temperature:
/// m_gas·(h_gas(T2) − h_gas(T1)) + m_oil·c_oil·(T2 − T_oil,in) = W_shaft, per unit gas mass
/// (h(T2) − h(T1)) + R_og·c_oil·(T2 − T_oil,in) = w_shaft. Ideal gas with cp(T); the oil's cp is taken constant.
/// Pure, allocates nothing.
/// </summary>
public static class FloodedStageSolver
{
    /// <summary>Solves the balance by bisection on T2.</summary>
    /// <param name="gas">The gas.</param>
    /// <param name="suctionTemperature">Gas suction temperature.</param>
    /// <param name="specificShaftWork">Shaft work per unit gas mass, &gt; 0.</param>
    /// <param name="oilToGasMassRatio">Oil mass flow over gas mass flow, &gt; 0.</param>
    /// <param name="oilSpecificHeatJoulesPerKilogramKelvin">Oil specific heat, J/(kg·K), &gt; 0.</param>
    /// <param name="oilInletTemperature">Oil temperature at injection.</param>
    /// <param name="toleranceKelvin">Bisection stops when the bracket is narrower than this, K.</param>
    /// <param name="maxIterations">Iteration cap.</param>
    /// <param name="discharge">The common discharge temperature of gas and oil.</param>
    /// <returns>False when the balance has no root inside the gas data (never throws for that).</returns>
    public static bool TrySolve(GasMixture gas, Temperature suctionTemperature, SpecificEnergy specificShaftWork, double oilToGasMassRatio,
        double oilSpecificHeatJoulesPerKilogramKelvin, Temperature oilInletTemperature, double toleranceKelvin, int maxIterations, out Temperature discharge)
    {
        ArgumentNullException.ThrowIfNull(gas);
        discharge = default;
        var t1 = suctionTemperature.Kelvins;
        var tOil = oilInletTemperature.Kelvins;
        var w = specificShaftWork.JoulesPerKilogram;
        if (!(w > 0) || !(oilToGasMassRatio > 0) || !(oilSpecificHeatJoulesPerKilogramKelvin > 0) || !double.IsFinite(w))
        {
            return false;
        }

        var oilTerm = oilToGasMassRatio * oilSpecificHeatJoulesPerKilogramKelvin;
        var h1 = gas.PropertiesAt(suctionTemperature).SpecificEnthalpy.JoulesPerKilogram;
        double F(double t) => gas.PropertiesAt(Temperature.FromKelvins(t)).SpecificEnthalpy.JoulesPerKilogram - h1 + (oilTerm * (t - tOil)) - w;
        var lo = Math.Max(Math.Min(t1, tOil), gas.MinimumKelvin);
        var hi = gas.MaximumKelvin;
        if (F(lo) > 0 || F(hi) < 0)
        {
            return false;
        }

        for (var i = 0; i < maxIterations && hi - lo > toleranceKelvin; i++)
        {
            var mid = 0.5 * (lo + hi);
            if (F(mid) > 0)
            {
                hi = mid;
            }
            else
            {
                lo = mid;
            }
        }

        if (hi - lo > toleranceKelvin)
        {
            return false;
        }

        discharge = Temperature.FromKelvins(0.5 * (lo + hi));
        return true;
    }

    /// <summary>As <see cref="TrySolve"/>, throwing when there is no root inside the gas data.</summary>
    /// <exception cref="ThermoInputException">No root inside the gas data (member <c>OilInjection</c>).</exception>
    public static Temperature Solve(GasMixture gas, Temperature suctionTemperature, SpecificEnergy specificShaftWork, double oilToGasMassRatio,
        double oilSpecificHeatJoulesPerKilogramKelvin, Temperature oilInletTemperature) =>
        TrySolve(gas, suctionTemperature, specificShaftWork, oilToGasMassRatio, oilSpecificHeatJoulesPerKilogramKelvin, oilInletTemperature, 1e-6, 200, out var t)
            ? t
            : throw ThermoErrors.OutOfRange("OilInjection", oilToGasMassRatio, "The oil-flooded energy balance has no solution inside the gas data: check the oil flow, its temperature and the efficiency.");
}
