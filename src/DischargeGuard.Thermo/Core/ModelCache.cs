using System.Collections.Concurrent;
using System.Runtime.CompilerServices;

namespace DischargeGuard.Thermo.Core;

/// <summary>
/// Identifies a mixture's exact composition: its species (by instance, so two catalogues' species of one id never
/// match) in their order and each mole fraction bit for bit. Two mixtures with equal keys have identical properties,
/// so a model prepared for one serves the other. Holds the mixture it was made from.
/// </summary>
internal readonly struct CompositionKey : IEquatable<CompositionKey>
{
    private readonly GasMixture _gas;

    public CompositionKey(GasMixture gas) => _gas = gas;

    public bool Equals(CompositionKey other)
    {
        if (ReferenceEquals(_gas, other._gas))
        {
            return true;
        }

        if (_gas.CompositionHash != other._gas.CompositionHash)
        {
            return false;
        }

        var a = _gas.ComponentSpan;
        var b = other._gas.ComponentSpan;
        if (a.Length != b.Length)
        {
            return false;
        }

        for (var i = 0; i < a.Length; i++)
        {
            if (!ReferenceEquals(a[i].Species, b[i].Species)
                || BitConverter.DoubleToInt64Bits(a[i].MoleFraction) != BitConverter.DoubleToInt64Bits(b[i].MoleFraction))
            {
                return false;
            }
        }

        return true;
    }

    public override bool Equals(object? obj) => obj is CompositionKey other && Equals(other);

    public override int GetHashCode() => _gas.CompositionHash;

    /// <summary>The hash of a composition as <see cref="Equals(CompositionKey)"/> compares it.</summary>
    internal static int HashOf(ReadOnlySpan<MixtureComponent> components)
    {
        var h = default(HashCode);
        foreach (var c in components)
        {
            h.Add(RuntimeHelpers.GetHashCode(c.Species));
            h.Add(BitConverter.DoubleToInt64Bits(c.MoleFraction));
        }

        return h.ToHashCode();
    }
}

/// <summary>Identifies a mixture's species list (instances, in order) whatever the fractions.</summary>
internal readonly struct SpeciesListKey : IEquatable<SpeciesListKey>
{
    private readonly GasMixture _gas;

    public SpeciesListKey(GasMixture gas) => _gas = gas;

    public bool Equals(SpeciesListKey other)
    {
        if (ReferenceEquals(_gas, other._gas))
        {
            return true;
        }

        var a = _gas.ComponentSpan;
        var b = other._gas.ComponentSpan;
        if (a.Length != b.Length)
        {
            return false;
        }

        for (var i = 0; i < a.Length; i++)
        {
            if (!ReferenceEquals(a[i].Species, b[i].Species))
            {
                return false;
            }
        }

        return true;
    }

    public override bool Equals(object? obj) => obj is SpeciesListKey other && Equals(other);

    public override int GetHashCode()
    {
        var h = default(HashCode);
        foreach (var c in _gas.ComponentSpan)
        {
            h.Add(RuntimeHelpers.GetHashCode(c.Species));
        }

        return h.ToHashCode();
    }
}

/// <summary>
/// A small bounded thread-safe cache of immutable models prepared from a gas (the GERG-2008 folded coefficients, the
/// Peng-Robinson constants, the phase model), so a batch of requests on one gas prepares them once. When full it is
/// emptied and refilled: the working set of a batch is a few gases, and a stream of never-repeating gases costs one
/// dictionary insert per model. Values must be immutable and depend only on the key.
/// </summary>
/// <typeparam name="TKey">The key (<see cref="CompositionKey"/> or <see cref="SpeciesListKey"/>).</typeparam>
/// <typeparam name="TValue">The prepared model.</typeparam>
internal sealed class ModelCache<TKey, TValue>(int capacity)
    where TKey : struct, IEquatable<TKey>
    where TValue : class
{
    private readonly ConcurrentDictionary<TKey, TValue> _map = new();
    private int _count;

    /// <summary>The cached model for <paramref name="key"/>, or the one <paramref name="create"/> builds (then cached).</summary>
    public TValue GetOrAdd<TState>(TKey key, TState state, Func<TState, TValue> create)
    {
        if (_map.TryGetValue(key, out var cached))
        {
            return cached;
        }

        var built = create(state);
        if (Interlocked.Increment(ref _count) > capacity)
        {
            // Crude but bounded: start again. A racing insert may survive the clear; the count only limits growth.
            _map.Clear();
            Interlocked.Exchange(ref _count, 1);
        }

        return _map.GetOrAdd(key, built);
    }
}
