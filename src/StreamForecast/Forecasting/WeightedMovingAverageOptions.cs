using System.Collections.Immutable;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for the weighted moving-average forecast: F(t) = Σ wᵢ·y(t−i) / Σ wᵢ over the n periods before t,
/// with caller-given weights (integers or fractions: the division by their sum makes both work).
/// </summary>
/// <remarks>
/// Immutable and thread-safe. Validated at construction. Weights proportional to n, n−1, …, 1 (most recent
/// heaviest) are recognised and run in O(1) per update; any other weights cost one O(n) vectorised dot product.
/// </remarks>
public sealed record WeightedMovingAverageOptions : ForecasterOptions
{
    private readonly ImmutableArray<double> _weights;

    /// <summary>Creates weighted moving-average options.</summary>
    /// <param name="weights">
    /// One weight per period in the window, 1 to 1,000,000 of them: each 0 or between <see cref="NumericDomain.MinWeight"/> and <see cref="NumericDomain.MaxMagnitude"/>, not all zero.
    /// </param>
    /// <param name="order">Which end of the window the first weight applies to; by default the most recent period.</param>
    /// <exception cref="ArgumentOutOfRangeException">A weight is negative, not finite, non-zero below <see cref="NumericDomain.MinWeight"/> or above <see cref="NumericDomain.MaxMagnitude"/>, or there are no or too many weights.</exception>
    /// <exception cref="ArgumentException">All weights are zero.</exception>
    public WeightedMovingAverageOptions(ReadOnlySpan<double> weights, WeightOrder order = WeightOrder.MostRecentFirst)
    {
        if (weights.Length is < 1 or > MovingAverageOptions.MaxLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(weights), weights.Length, "give between 1 and 1,000,000 weights, one per period in the window");
        }

        if (order is not (WeightOrder.MostRecentFirst or WeightOrder.OldestFirst))
        {
            ThrowHelper.ThrowOutOfRange(nameof(order), order, "the order must be MostRecentFirst or OldestFirst");
        }

        double total = 0;
        for (int i = 0; i < weights.Length; i++)
        {
            double w = weights[i];
            if (!(w == 0 || (w >= NumericDomain.MinWeight && w <= NumericDomain.MaxMagnitude)))
            {
                ThrowHelper.ThrowOutOfRange(nameof(weights), w, string.Create(CultureInfo.InvariantCulture,
                    $"weight {i + 1} must be 0 or between {NumericDomain.MinWeight:E0} and {NumericDomain.MaxMagnitude:E0} (NumericDomain), so the weighted sums cannot overflow or vanish"));
            }

            total += w;
        }

        if (!(total > 0))
        {
            ThrowHelper.ThrowArgument(nameof(weights), "The weights must not all be zero: the forecast divides by their sum.");
        }

        var builder = ImmutableArray.CreateBuilder<double>(weights.Length);
        for (int i = 0; i < weights.Length; i++)
        {
            builder.Add(order == WeightOrder.MostRecentFirst ? weights[i] : weights[weights.Length - 1 - i]);
        }

        _weights = builder.MoveToImmutable();
        IsLinear = DetectLinear(_weights.AsSpan());
    }

    /// <summary>The weights, most recent period first, as given (not normalised).</summary>
    public ImmutableArray<double> Weights => _weights;

    /// <summary>The window length n (the number of weights).</summary>
    public int Length => _weights.Length;

    /// <summary>Whether the weights are proportional to n, n−1, …, 1 with the most recent heaviest (the O(1) path).</summary>
    public bool IsLinear { get; }

    /// <inheritdoc/>
    public override string MethodName =>
        string.Create(CultureInfo.InvariantCulture, $"WMA({string.Join('/', _weights)})");

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new WeightedMovingAverage(this);

    /// <summary>Equal when the weights are equal element by element.</summary>
    /// <param name="other">The other options.</param>
    /// <returns>Whether both describe the same forecast.</returns>
    public bool Equals(WeightedMovingAverageOptions? other) =>
        other is not null && _weights.AsSpan().SequenceEqual(other._weights.AsSpan());

    /// <inheritdoc/>
    public override int GetHashCode()
    {
        var hash = default(HashCode);
        foreach (double w in _weights)
        {
            hash.Add(w);
        }

        return hash.ToHashCode();
    }

    private static bool DetectLinear(ReadOnlySpan<double> mostRecentFirst)
    {
        int n = mostRecentFirst.Length;
        double scale = mostRecentFirst[0] / n;
        for (int i = 0; i < n; i++)
        {
            double expected = scale * (n - i);
            if (Math.Abs(mostRecentFirst[i] - expected) > 1e-12 * Math.Abs(expected))
            {
                return false;
            }
        }

        return true;
    }
}
