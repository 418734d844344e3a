using System.Diagnostics;
using StreamForecast.Classification;

namespace StreamForecast.Internal;

/// <summary>
/// The running statistics behind a demand classification: period count, demand-period count, the positions of the
/// first and last demand, and Welford's mean and sum of squared deviations of the non-zero sizes. O(1) per value.
/// </summary>
internal struct DemandMoments
{
    private long _periods;
    private long _demandPeriods;
    private long _firstDemand;  // 0-based period index of the first demand
    private long _lastDemand;   // 0-based period index of the last demand
    private double _mean;
    private double _squaredDeviations;

    public readonly long Periods => _periods;

    public readonly long DemandPeriods => _demandPeriods;

    /// <summary>Adds one period's demand, already checked to be finite and ≥ 0.</summary>
    public void Add(double demand)
    {
        Debug.Assert(double.IsFinite(demand) && demand >= 0);
        long index = _periods++;
        if (demand == 0)
        {
            return;
        }

        if (_demandPeriods == 0)
        {
            _firstDemand = index;
        }

        _lastDemand = index;
        _demandPeriods++;

        // Welford (1962): numerically stable single-pass mean and sum of squared deviations.
        double delta = demand - _mean;
        _mean += delta / _demandPeriods;
        _squaredDeviations += delta * (demand - _mean);
    }

    public readonly DemandClassification Classify(DemandClassifierOptions options)
    {
        if (_demandPeriods < 2)
        {
            return new DemandClassification(DemandClass.Undetermined, double.NaN, double.NaN, _demandPeriods, _periods);
        }

        // ADI: mean of the n − 1 intervals between consecutive demands, which telescopes to (last − first)/(n − 1).
        double adi = (double)(_lastDemand - _firstDemand) / (_demandPeriods - 1);

        // CV²: sample variance (n − 1 divisor) over the squared mean.
        double variance = _squaredDeviations / (_demandPeriods - 1);
        double cv2 = variance / (_mean * _mean);

        bool infrequent = adi >= options.IntervalCutoff;
        bool variable = cv2 >= options.VariationCutoff;
        DemandClass result = infrequent
            ? (variable ? DemandClass.Lumpy : DemandClass.Intermittent)
            : (variable ? DemandClass.Erratic : DemandClass.Smooth);
        return new DemandClassification(result, adi, cv2, _demandPeriods, _periods);
    }
}
