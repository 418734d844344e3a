using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Tracking;

/// <content>One period's step computed before anything changes (so a refused period changes nothing), then committed.</content>
public sealed partial class ErrorTracker
{
    /// <summary>Checks a finite actual and forecast and computes the state after scoring them, without changing anything.</summary>
    internal void StageScored(double actual, double forecast, out Staged staged)
    {
        if (!double.IsFinite(actual))
        {
            ThrowHelper.ThrowNonFiniteActual(actual);
        }

        if (!double.IsFinite(forecast))
        {
            ThrowHelper.ThrowOutOfRange(nameof(forecast), forecast, "a forecast must be a finite number; NaN and infinities are rejected and the state is left unchanged");
        }

        double error = actual - forecast;
        double absError = Math.Abs(error);
        staged.Scored = true;
        staged.Actual = actual;
        staged.Error = error;
        staged.ZeroActual = Math.Abs(actual) < PercentageFloor;
        staged.ErrorSum = _errorSum;
        staged.ErrorSum.Add(error);
        staged.AbsErrorSum = _absErrorSum;
        staged.AbsErrorSum.Add(absError);
        staged.SquaredErrorSum = _squaredErrorSum;
        staged.SquaredErrorSum.Add(error * error);
        staged.PercentErrorSum = _percentErrorSum;
        if (!staged.ZeroActual)
        {
            staged.PercentErrorSum.Add(100 * absError / Math.Abs(actual));
        }

        staged.AbsActualSum = _absActualSum;
        staged.AbsActualSum.Add(Math.Abs(actual));
        ErrorTrackerOptions options = _options;
        double madWeight = options.SmoothedMadWeight;
        double beta = options.TriggBeta;
        double triggKeep = 1 - beta;
        staged.SmoothedMad = _count == 0 ? absError : (madWeight * absError) + ((1 - madWeight) * _smoothedMad);
        staged.TriggError = (beta * error) + (triggKeep * _triggError);
        staged.TriggAbsError = (beta * absError) + (triggKeep * _triggAbsError);
        staged.NaiveSum = StageNaive(actual);

        if (!(double.IsFinite(error)
            && double.IsFinite(staged.ErrorSum.Value)
            && double.IsFinite(staged.AbsErrorSum.Value)
            && double.IsFinite(staged.SquaredErrorSum.Value)
            && double.IsFinite(staged.PercentErrorSum.Value)
            && double.IsFinite(staged.AbsActualSum.Value)
            && double.IsFinite(staged.NaiveSum.Value)))
        {
            ThrowOverflow(actual, forecast);
        }
    }

    /// <summary>Checks a finite actual of an unscored period and computes the state after it, without changing anything.</summary>
    internal void StageUnscored(double actual, out Staged staged)
    {
        if (!double.IsFinite(actual))
        {
            ThrowHelper.ThrowNonFiniteActual(actual);
        }

        staged = default;
        staged.Actual = actual;
        staged.NaiveSum = StageNaive(actual);
        if (!double.IsFinite(staged.NaiveSum.Value))
        {
            ThrowOverflow(actual, double.NaN);
        }
    }

    /// <summary>Applies a state computed by <see cref="StageScored"/> or <see cref="StageUnscored"/> on the current state.</summary>
    internal void Commit(in Staged staged)
    {
        if (staged.Scored)
        {
            _count++;
            if (staged.ZeroActual)
            {
                _zeroActualCount++;
            }

            _errorSum = staged.ErrorSum;
            _absErrorSum = staged.AbsErrorSum;
            _squaredErrorSum = staged.SquaredErrorSum;
            _percentErrorSum = staged.PercentErrorSum;
            _absActualSum = staged.AbsActualSum;
            _smoothedMad = staged.SmoothedMad;
            _triggError = staged.TriggError;
            _triggAbsError = staged.TriggAbsError;
            _lastError = staged.Error;
        }

        _naiveSum = staged.NaiveSum;
        _recent.Push(staged.Actual, _actualCount);
        _actualCount++;
    }

    private CompensatedSum StageNaive(double actual)
    {
        CompensatedSum naive = _naiveSum;
        if (_actualCount >= _recent.Length)
        {
            naive.Add(Math.Abs(actual - _recent.Lagged(_actualCount))); // the actual m periods before this one
        }

        return naive;
    }

    [DoesNotReturn]
    private static void ThrowOverflow(double actual, double forecast) =>
        ThrowHelper.ThrowOutOfRange(nameof(actual), actual, string.Create(CultureInfo.InvariantCulture,
            $"with forecast {forecast} the period's error statistics would overflow to infinity; actuals and forecasts must stay well inside the double range"));

    /// <summary>The state after one period, computed before anything is changed so a rejected period changes nothing.</summary>
    internal struct Staged
    {
        internal bool Scored;
        internal bool ZeroActual;
        internal double Actual;
        internal double Error;
        internal CompensatedSum ErrorSum;
        internal CompensatedSum AbsErrorSum;
        internal CompensatedSum SquaredErrorSum;
        internal CompensatedSum PercentErrorSum;
        internal CompensatedSum AbsActualSum;
        internal CompensatedSum NaiveSum;
        internal double SmoothedMad;
        internal double TriggError;
        internal double TriggAbsError;
    }
}
