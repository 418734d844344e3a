using System.Globalization;
using StreamForecast.Forecasting;

namespace StreamForecast.Selection;

/// <summary>A method whose parameters were fitted to a history, with the one-step squared error it achieved there.</summary>
/// <remarks>Immutable and safe to share across threads.</remarks>
public sealed class FittedMethod
{
    internal FittedMethod(ForecasterOptions method, double sumOfSquaredErrors, long errorCount, int evaluations)
    {
        Method = method;
        SumOfSquaredErrors = sumOfSquaredErrors;
        ErrorCount = errorCount;
        Evaluations = evaluations;
    }

    /// <summary>The fitted method.</summary>
    public ForecasterOptions Method { get; }

    /// <summary>The sum of squared one-step errors of <see cref="Method"/> over the fitting window (its own forecaster, run once over it).</summary>
    public double SumOfSquaredErrors { get; }

    /// <summary>The number of one-step errors in <see cref="SumOfSquaredErrors"/>.</summary>
    public long ErrorCount { get; }

    /// <summary>The one-step mean squared error, <see cref="SumOfSquaredErrors"/> / <see cref="ErrorCount"/>.</summary>
    public double MeanSquaredError => SumOfSquaredErrors / ErrorCount;

    /// <summary>How many times the objective ran a forecaster over the window (1 for a plain score).</summary>
    public int Evaluations { get; }

    /// <summary>A one-line summary.</summary>
    /// <returns>The method and its one-step MSE.</returns>
    public override string ToString() =>
        string.Create(CultureInfo.InvariantCulture, $"{Method.MethodName}: one-step MSE {MeanSquaredError:G6} over {ErrorCount} periods");
}
