using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// The envelope questions of <see cref="EnvelopeSolver"/> for the Peng-Robinson real gas: the highest discharge pressure
/// and the highest suction temperature at which a chosen discharge temperature reaches a limit. The real-gas stage has no
/// closed-form inverse, so each is a bisection on the stage solve (in ln P for pressure, in T for suction temperature),
/// 60 halvings at most and stopped at 1e-7 relative width: about 50–60 stage solves of 2–5 µs.
/// </summary>
public static class RealGasEnvelopeSolver
{
    private const int MaxHalvings = 60;
    private const double RelativeWidth = 1e-7;

    private const string FoundNote = "Solved (bisection on the real-gas stage) for the point where the temperature reaches the limit.";
    private const string ExceededNote = "The temperature already exceeds the limit at the lowest pressure ratio searched.";
    private const string NotReachedNote = "The limit is not reached below the real-gas model's pressure ceiling or before the gas leaves the vapour region.";
    private const string SuctionAtLimitNote = "The suction temperature is already at or above the limit, so any compression exceeds it.";
    private const string ColdestExceedsNote = "Even at the lowest suction temperature the gas data cover (in the vapour region), the temperature exceeds the limit.";

    /// <summary>The highest absolute discharge pressure at which <paramref name="quantity"/> reaches <paramref name="limit"/>.</summary>
    public static EnvelopeResult<Pressure> MaxDischargePressure(RealGasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var p1 = conditions.SuctionPressure.Pascals;
        var tLim = limit.Kelvins;
        if (conditions.SuctionTemperature.Kelvins >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, SuctionAtLimitNote);
        }

        var c = conditions;
        double? At(double p2) => TemperatureAt(gas, c with { DischargePressure = Pressure.FromPascals(p2) }, quantity);
        var lo = p1 * 1.0001;
        if (At(lo) is not { } tLo)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, NotReachedNote);
        }

        if (tLo >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, ExceededNote);
        }

        // The highest pressure the model answers at (its ceiling, or below it where the state leaves the vapour region).
        var hi = RealGasMixture.MaximumPressurePascals;
        var tHi = At(hi);
        for (var k = 0; tHi is null && k < 40 && hi > lo * 1.01; k++)
        {
            hi = Math.Sqrt(hi * lo);
            tHi = At(hi);
        }

        if (tHi is null || tHi < tLim)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, NotReachedNote);
        }

        // Bisection in ln P with lo below and hi above the limit.
        for (var i = 0; i < MaxHalvings && (hi - lo) > RelativeWidth * hi; i++)
        {
            var mid = Math.Sqrt(lo * hi);
            if (At(mid) is { } t && t < tLim)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return new(EnvelopeStatus.Found, Pressure.FromPascals(0.5 * (lo + hi)), FoundNote);
    }

    /// <summary>The highest suction temperature at which <paramref name="quantity"/> reaches <paramref name="limit"/>.</summary>
    public static EnvelopeResult<Temperature> MaxSuctionTemperature(RealGasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var tLim = limit.Kelvins;
        var c = conditions;
        double? At(double t1) => TemperatureAt(gas, c with { SuctionTemperature = Temperature.FromKelvins(t1) }, quantity);

        // Above: the limit itself (a discharge temperature is above its suction temperature); below: the coldest vapour suction.
        var hi = Math.Min(tLim, gas.IdealGas.MaximumKelvin);
        var lo = Math.Max(gas.IdealGas.MinimumKelvin, 1.0);
        if (conditions.SuctionTemperature.Kelvins >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, SuctionAtLimitNote);
        }

        var tLo = At(lo);
        for (var k = 0; tLo is null && k < 60 && lo < hi - 0.5; k++)
        {
            lo += 0.1 * (hi - lo);
            tLo = At(lo);
        }

        if (tLo is null)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, NotReachedNote);
        }

        if (tLo >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, ColdestExceedsNote);
        }

        for (var i = 0; i < MaxHalvings && (hi - lo) > RelativeWidth * hi; i++)
        {
            var mid = 0.5 * (lo + hi);
            if (At(mid) is { } t && t < tLim)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return new(EnvelopeStatus.Found, Temperature.FromKelvins(0.5 * (lo + hi)), FoundNote);
    }

    // The stage's temperature, or null where the model gives none (liquid or two-phase, outside its range).
    private static double? TemperatureAt(RealGasMixture gas, in StageConditions conditions, TemperatureQuantity quantity)
    {
        try
        {
            return RealGasStageSolver.TrySolve(gas, conditions, CompressionPath.DefaultToleranceKelvin, CompressionPath.DefaultMaxIterations, out var r)
                ? r.TemperatureOf(quantity).Kelvins
                : null;
        }
        catch (ArgumentOutOfRangeException)
        {
            return null;
        }
    }
}
