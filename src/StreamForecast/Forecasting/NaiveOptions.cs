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
    public override Forecaster CreateForecaster() => new NaiveForecaster(this);
}

/// <summary>The naive and seasonal naive forecast of one series. Create it from <see cref="NaiveOptions"/>.</summary>
/// <remarks>
/// <para>Warm after m actuals (one for the plain naive forecast). O(1), allocation-free updates.</para>
/// <para>Horizon variance: a (seasonal) random walk, so the h-step error variance is ⌈h/m⌉ times the one-step
/// variance (h for the plain naive forecast, σ_h = σ·√h).</para>
/// <para>Thread safety: not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class NaiveForecaster : Forecaster
{
    private readonly NaiveOptions _options;
    private RingWindow _window;

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public NaiveForecaster(NaiveOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _window = new RingWindow(options.SeasonLength);
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => _window.IsFull;

    private protected override void UpdateCore(double actual) => _window.Push(actual);

    private protected override double ForecastCore(int horizon)
    {
        int m = _window.Length;
        // One season back from the target period, as many seasons as it takes: the value of age m−1−((h−1) mod m).
        return _window.Recent(m - 1 - ((horizon - 1) % m));
    }

    private protected override double HorizonVarianceRatioCore(int horizon) => ((horizon - 1) / _window.Length) + 1;

    private protected override void ResetCore() => _window.Clear();

    private protected override int CoreStateLength => _window.Length;

    private protected override void ExportCore(Span<double> destination) => _window.CopyRawTo(destination);

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count) =>
        RingWindow.RawFits(state, count) ? null : "slots not yet filled must be zero";

    private protected override void ImportCore(ReadOnlySpan<double> state, long count) => _window.LoadRaw(state, count);
}
