using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>The naive and seasonal naive forecast of one series. Create it from <see cref="NaiveOptions"/>.</summary>
/// <remarks>
/// <para>Warm after m actuals (one for the plain naive forecast). O(1), allocation-free updates.</para>
/// <para>Horizon variance: a (seasonal) random walk, so the h-step error variance is ⌈h/m⌉ times the one-step
/// variance (h for the plain naive forecast, σ_h = σ·√h).</para>
/// <para>Thread safety: not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class Naive : Forecaster
{
    private readonly NaiveOptions _options;
    private RingWindow _window;

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public Naive(NaiveOptions options)
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
