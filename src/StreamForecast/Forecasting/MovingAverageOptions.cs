using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for the n-period moving-average forecast: the forecast for period t is the mean of the actuals of
/// periods t−n … t−1 and never includes period t itself.
/// </summary>
/// <remarks>Immutable and thread-safe. Validated at construction.</remarks>
public sealed record MovingAverageOptions : ForecasterOptions
{
    /// <summary>The largest window accepted.</summary>
    public const int MaxLength = 1_000_000;

    /// <summary>Creates moving-average options.</summary>
    /// <param name="length">The number of periods n averaged, 1 to 1,000,000.</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="length"/> is out of range.</exception>
    public MovingAverageOptions(int length)
    {
        if (length is < 1 or > MaxLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(length), length, "the moving-average length n must be between 1 and 1,000,000 periods");
        }

        Length = length;
    }

    /// <summary>The number of periods n in the window.</summary>
    public int Length { get; }

    /// <inheritdoc/>
    public override string MethodName => string.Create(CultureInfo.InvariantCulture, $"MA({Length})");

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new MovingAverage(this);
}
