namespace StreamForecast.Selection.Internal;

/// <summary>
/// The sum of squared one-step errors, Neumaier-compensated so that long histories compare on their exact SSE: the one
/// accumulator every fitting objective uses (the forecaster run and the allocation-free equation runs), so their sums are
/// the same bit for bit.
/// </summary>
internal struct SquaredErrorSum
{
    private double _sum;
    private double _compensation;

    /// <summary>The compensated sum.</summary>
    public readonly double Value => _sum + _compensation;

    /// <summary>How many errors were added.</summary>
    public long Count { get; private set; }

    /// <summary>Adds the square of the error of <paramref name="forecast"/> for <paramref name="actual"/>.</summary>
    public void Add(double actual, double forecast)
    {
        double e = actual - forecast;
        double term = e * e;
        double sum = _sum + term;
        _compensation += Math.Abs(_sum) >= term ? (_sum - sum) + term : (term - sum) + _sum;
        _sum = sum;
        Count++;
    }
}
