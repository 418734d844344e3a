using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Derives a slower copy of a method, to run beside it as a series' reference model
/// (<see cref="Streaming.SeriesOptions.ReferenceMethod"/>): the copy keeps following the old level for longer after a
/// lasting shift, so the rules that watch its errors see the shift even when the published method adapts within a few
/// periods.
/// </summary>
/// <remarks>
/// <para><b>The rule</b> (one scale s in (0, 1], default <see cref="DefaultWeightScale"/> = 0.25):</para>
/// <list type="bullet">
/// <item><description>single exponential smoothing: α → s·α, same start;</description></item>
/// <item><description>Holt: level and trend weights → s·α and s·β, same damping and start;</description></item>
/// <item><description>Holt-Winters: level, trend and seasonal weights each × s, everything else the same;</description></item>
/// <item><description>
/// a moving average of n periods: n → ⌈(n + 1)/s⌉ − 1, the length whose average data age matches single smoothing at
/// s·α when α = 2/(n + 1) (common practice: α = 2/(n + 1) gives a moving average and single smoothing the same average
/// age); at most <see cref="MovingAverageOptions.MaxLength"/>;
/// </description></item>
/// <item><description>the (non-seasonal) naive forecast, a moving average of 1: the same rule with n = 1;</description></item>
/// <item><description>Croston and its variants: size and interval weights × s, same variant; TSB: probability and size weights × s.</description></item>
/// </list>
/// <para>Other methods (weighted moving averages, seasonal naive, a method selector) have no
/// single obvious slower copy: give the reference method explicitly (a long moving average suits most series).</para>
/// <para><b>Thread safety.</b> Static and stateless; safe from any thread.</para>
/// </remarks>
public static class ReferenceMethods
{
    /// <summary>The default weight scale of <see cref="Slower"/>: 0.25 (the copy's weights are a quarter of the method's).</summary>
    public const double DefaultWeightScale = 0.25;

    /// <summary>A slower copy of <paramref name="method"/> by the rule in the remarks on <see cref="ReferenceMethods"/>.</summary>
    /// <param name="method">The published method.</param>
    /// <param name="weightScale">The factor s applied to the smoothing weights, in (0, 1]; 1 returns an equal method.</param>
    /// <returns>The slower method's options.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="method"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="weightScale"/> is not in (0, 1].</exception>
    /// <exception cref="ArgumentException">The method has no derived slower copy (see the remarks); give one explicitly.</exception>
    public static ForecasterOptions Slower(ForecasterOptions method, double weightScale = DefaultWeightScale)
    {
        ArgumentNullException.ThrowIfNull(method);
        if (!(weightScale > 0 && weightScale <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(weightScale), weightScale, "the weight scale must be above 0 and at most 1");
        }

        switch (method)
        {
            case ExponentialSmoothingOptions ses:
                return new ExponentialSmoothingOptions(ses.Alpha * weightScale, ses.Start);
            case HoltOptions holt:
                return new HoltOptions(holt.LevelWeight * weightScale, holt.TrendWeight * weightScale, holt.Damping, holt.Start);
            case HoltWintersOptions hw:
                return new HoltWintersOptions(
                    hw.SeasonLength, hw.Seasonality, hw.LevelWeight * weightScale, hw.TrendWeight * weightScale,
                    hw.SeasonalWeight * weightScale, hw.Damping, hw.StartSeasons);
            case MovingAverageOptions ma:
                return new MovingAverageOptions(LongerWindow(ma.Length, weightScale));
            case CrostonOptions croston:
                return new CrostonOptions(croston.SizeWeight * weightScale, croston.IntervalWeight * weightScale, croston.Variant);
            case TsbOptions tsb:
                return new TsbOptions(tsb.ProbabilityWeight * weightScale, tsb.SizeWeight * weightScale);
            case NaiveOptions { SeasonLength: 1 }:
                return new MovingAverageOptions(LongerWindow(1, weightScale));
            default:
                ThrowHelper.ThrowArgument(nameof(method), string.Create(CultureInfo.InvariantCulture,
                    $"There is no derived slower copy of {method.MethodName}; give the reference method explicitly (for example a long moving average)."));
                return null!;
        }
    }

    private static int LongerWindow(int length, double weightScale)
    {
        double longer = Math.Ceiling((length + 1) / weightScale) - 1;
        return (int)Math.Min(Math.Max(longer, length), MovingAverageOptions.MaxLength);
    }
}
