using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for the naive forecast (the next period equals the last actual) and the seasonal naive forecast
/// (the next period equals the actual one season earlier).
/// </summary>
/// <remarks>Immutable and thread-safe. Validated at construction.</remarks>
public sealed record NaiveOptions : ForecasterOptions
{
    /// <summary>Creates naive options.</summary>
    /// <param name="seasonLength">
    /// The season length m in periods: 1 (the default) is the plain naive forecast F(t+1) = y(t); m ≥ 2 is the
    /// seasonal naive forecast F(t+h) = y(t+h−m·k) with k the smallest whole number of seasons that reaches back
    /// into the data. Must be between 1 and 100,000.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="seasonLength"/> is out of range.</exception>
    public NaiveOptions(int seasonLength = 1)
    {
        if (seasonLength is < 1 or > MaxSeasonLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonLength), seasonLength, "the season length must be between 1 and 100,000 periods");
        }

        SeasonLength = seasonLength;
    }

    /// <summary>The largest season length accepted.</summary>
    public const int MaxSeasonLength = 100_000;

    /// <summary>The season length m; 1 for the plain naive forecast.</summary>
    public int SeasonLength { get; }

    /// <inheritdoc/>
    public override string MethodName => SeasonLength == 1 ? "Naive" : string.Create(CultureInfo.InvariantCulture, $"SeasonalNaive({SeasonLength})");

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new Naive(this);
}
