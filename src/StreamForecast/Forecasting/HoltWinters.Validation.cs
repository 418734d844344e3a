using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>The checks of <see cref="HoltWinters"/> on the start window and on imported state.</summary>
public sealed partial class HoltWinters
{
    /// <summary>Rejects a zero at window position <paramref name="t"/> that would give a zero season mean or a zero start index.</summary>
    private void CheckStartZero(int t)
    {
        int m = _seasonLength;
        int season = t / m;
        int position = t % m;
        if (position == m - 1 && IsZero(_startWindow.AsSpan(season * m, m - 1)))
        {
            ThrowHelper.ThrowOutOfRange("actual", 0.0, string.Create(CultureInfo.InvariantCulture,
                $"with this zero every actual of start season {season + 1} would be zero, and multiplicative seasonality divides by the season mean; the state is unchanged"));
        }

        if (season == _startSeasons - 1 && IsZeroAtPosition(_startWindow, m, season, position))
        {
            ThrowHelper.ThrowOutOfRange("actual", 0.0, string.Create(CultureInfo.InvariantCulture,
                $"season position {position + 1} is zero in every start season, so its multiplicative start index would be zero; the state is unchanged"));
        }
    }

    private static bool IsZero(ReadOnlySpan<double> values)
    {
        foreach (double v in values)
        {
            if (v != 0)
            {
                return false;
            }
        }

        return true;
    }

    private static bool IsZeroAtPosition(ReadOnlySpan<double> window, int m, int seasons, int position)
    {
        for (int p = 0; p < seasons; p++)
        {
            if (window[(p * m) + position] != 0)
            {
                return false;
            }
        }

        return true;
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        int m = _seasonLength;
        ReadOnlySpan<double> seasonal = state.Slice(2, m);
        ReadOnlySpan<double> window = state[(2 + m)..];
        if (count >= window.Length)
        {
            if (!IsZero(window))
            {
                return "the start window must be zero once the forecaster is warm";
            }

            if (_multiplicative)
            {
                if (!(state[0] >= MultiplicativeFloor))
                {
                    return "multiplicative seasonality needs a positive level (at least 1e-30)";
                }

                foreach (double s in seasonal)
                {
                    if (!(s >= MultiplicativeFloor))
                    {
                        return "multiplicative seasonality needs positive seasonal indices";
                    }
                }
            }

            return null;
        }

        int filled = (int)count;
        if (state[0] != 0 || state[1] != 0 || !IsZero(seasonal) || !IsZero(window[filled..]))
        {
            return "while warming up only the start-window slots already filled may be non-zero";
        }

        return _multiplicative ? MultiplicativeStartProblem(window, filled) : null;
    }

    private string? MultiplicativeStartProblem(ReadOnlySpan<double> window, int filled)
    {
        int m = _seasonLength;
        for (int t = 0; t < filled; t++)
        {
            if (window[t] < 0)
            {
                return "multiplicative seasonality needs actuals of 0 or more";
            }
        }

        if (_startKind != HoltWintersStartKind.SeasonMeans)
        {
            // Only the season-means rule refuses zeros early; the decomposition refuses at the actual that completes the window.
            return null;
        }

        for (int season = 0; (season + 1) * m <= filled; season++)
        {
            if (IsZero(window.Slice(season * m, m)))
            {
                return "a start season has only zero actuals";
            }
        }

        int last = _startSeasons - 1;
        for (int t = last * m; t < filled; t++)
        {
            if (window[t] == 0 && IsZeroAtPosition(window, m, last, t - (last * m)))
            {
                return "a season position is zero in every start season";
            }
        }

        return null;
    }
}
