using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Runs a small set of candidate forecasting methods side by side on one series and publishes the forecast of the one with
/// the lowest recent error, switching only with hysteresis, and says which method produced each forecast. Create one from
/// <see cref="MethodSelectorOptions"/> with <see cref="MethodSelectorOptions.CreateSelector"/> or
/// <see cref="ForecasterOptions.CreateForecaster"/>.
/// </summary>
/// <remarks>
/// <para><b>Recent error.</b> Each candidate's one-step error e = actual − forecast is scored every period in which the
/// candidate could forecast; its recent error S is the first |e|, then S = w·|e| + (1 − w)·S with w =
/// <see cref="MethodSelectorOptions.ErrorWeight"/> (an exponentially smoothed MAD).</para>
/// <para><b>Selection.</b> The first period any candidate can forecast, the earliest such candidate in the list becomes the
/// incumbent. From then on, after each period, the challenger is the candidate with the lowest S among those with at least
/// <see cref="MethodSelectorOptions.MinScoredPeriods"/> scored periods (ties: the earlier candidate). When the challenger is
/// not the incumbent, the incumbent has that many scored periods too, and S_challenger &lt; (1 − margin)·S_incumbent, the
/// challenger's lead is counted; after <see cref="MethodSelectorOptions.PeriodsToSwitch"/> consecutive periods of the same
/// challenger leading, it becomes the incumbent. Any period without such a lead (or with a different challenger) restarts the
/// count. The margin and the count are the hysteresis: two candidates with nearly equal errors do not make the published
/// forecast flap.</para>
/// <para><b>Periods.</b> As with every <see cref="Forecaster"/>, the forecast read before <see cref="Forecaster.Update"/> is
/// the one published for that update's period; <see cref="LastStep"/> then tells which method produced it and what changed.</para>
/// <para><b>Bad input.</b> NaN and infinities are rejected with <see cref="ArgumentOutOfRangeException"/>, as is an actual any
/// candidate's method rejects (a negative demand for an intermittent-demand method, for example). The selector then is
/// exactly as before: each candidate's state is copied to a buffer allocated at creation before it is updated, and
/// restored if a later candidate rejects the actual.</para>
/// <para><b>Cost.</b> Per update: the candidates' own update costs plus O(k) for k candidates, plus copying each candidate's
/// state (<see cref="Forecaster.StateLength"/> numbers, a few dozen for the usual methods) for the rollback. Allocation-free
/// after creation.</para>
/// <para><b>Snapshots.</b> <see cref="Forecaster.ExportState(Span{double})"/> writes the full state as
/// <see cref="Forecaster.StateLength"/> plain numbers; <see cref="Forecaster.ImportState"/> validates them and reads them back into a selector created from equal options, or
/// changes nothing. Continuing after an import is bit-identical to an uninterrupted run.</para>
/// <para><b>Engine.</b> A selector is a <see cref="Forecaster"/>, so any host runs it like any other method: give
/// <see cref="MethodSelectorOptions"/> as a series' method to the engine, the cluster, the hosting options or the
/// command-line tool (<c>best:</c> text form), and every forecast update names the candidate that made its forecast
/// (<c>ForecastUpdate.Method</c>). Horizon variance ratios are the selected candidate's.</para>
/// <para><b>Thread safety.</b> Not thread-safe: one owner per series.</para>
/// </remarks>
public sealed partial class MethodSelector : Forecaster
{
    // Exported core layout (after the base's count): incumbent, challenger, challenger run, switches; then per candidate:
    // scored periods, recent error, the forecaster's state.
    private const int HeaderLength = 4;
    private const int PerCandidateLength = 2;

    private readonly MethodSelectorOptions _options;
    private readonly Forecaster[] _forecasters;
    private readonly double[][] _backups;
    private readonly long[] _scored;
    private readonly double[] _recentError;
    private readonly double[] _stagedError;
    private readonly bool[] _hadForecast;
    private readonly double _keep;
    private int _incumbent = -1;
    private int _challenger = -1;
    private int _challengerRun;
    private long _switches;
    private Forecaster?[]? _probes; // scratch forecasters for import validation, made on the first import
    private SelectionStep _last = new(double.NaN, double.NaN, double.NaN, -1, -1, false);

    /// <summary>Creates a selector with every candidate's forecaster empty.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public MethodSelector(MethodSelectorOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        int k = options.Candidates.Length;
        _forecasters = new Forecaster[k];
        _backups = new double[k][];
        for (int i = 0; i < k; i++)
        {
            _forecasters[i] = options.Candidates[i].CreateForecaster();
            _backups[i] = new double[_forecasters[i].StateLength];
        }

        _scored = new long[k];
        _recentError = new double[k];
        _stagedError = new double[k];
        _hadForecast = new bool[k];
        _keep = 1 - options.ErrorWeight;
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <summary>The number of candidates.</summary>
    public int CandidateCount => _forecasters.Length;

    /// <summary>Whether a method is selected, so <see cref="Forecaster.Forecast"/> can be called.</summary>
    public override bool IsWarm => _incumbent >= 0;

    /// <summary>The index of the selected candidate, whose forecasts are published; −1 while none can forecast.</summary>
    public int SelectedIndex => _incumbent;

    /// <summary>The selected method; null while none can forecast.</summary>
    public ForecasterOptions? SelectedMethod => _incumbent >= 0 ? _options.Candidates[_incumbent] : null;

    /// <summary>The candidate currently leading the incumbent by the margin, or −1.</summary>
    public int ChallengerIndex => _challenger;

    /// <summary>The consecutive periods <see cref="ChallengerIndex"/> has led by the margin (0 without a challenger).</summary>
    public int ChallengerPeriods => _challengerRun;

    /// <summary>How many times a challenger has replaced the incumbent.</summary>
    public long Switches => _switches;

    /// <summary>What the last update did: the forecast published for its period, its error and maker, the selection after it.</summary>
    /// <remarks>Not part of the exported state: after an import or a reset it reads as "nothing published" until the next update.</remarks>
    public SelectionStep LastStep => _last;

    /// <inheritdoc/>
    internal override string? ActiveMethodName => _incumbent >= 0 ? _options.CandidateNames[_incumbent] : null;

    /// <summary>A candidate's recent (smoothed absolute) one-step error; NaN before its first scored period.</summary>
    /// <param name="index">The candidate's index.</param>
    /// <returns>The recent error.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="index"/> is not a candidate's index.</exception>
    public double RecentError(int index)
    {
        CheckIndex(index);
        return _scored[index] == 0 ? double.NaN : _recentError[index];
    }

    /// <summary>The number of periods a candidate has been scored.</summary>
    /// <param name="index">The candidate's index.</param>
    /// <returns>The scored periods.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="index"/> is not a candidate's index.</exception>
    public long ScoredPeriods(int index)
    {
        CheckIndex(index);
        return _scored[index];
    }

    /// <summary>Gets a candidate's own forecast, whether or not it is selected.</summary>
    /// <param name="index">The candidate's index.</param>
    /// <param name="horizon">Periods ahead, 1 or more.</param>
    /// <param name="forecast">The candidate's forecast, or NaN when it cannot forecast yet.</param>
    /// <returns>Whether the candidate is warm.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="index"/> or <paramref name="horizon"/> is out of range.</exception>
    public bool TryForecastCandidate(int index, int horizon, out double forecast)
    {
        CheckIndex(index);
        return _forecasters[index].TryForecast(horizon, out forecast);
    }

    private protected override double ForecastCore(int horizon) => _forecasters[_incumbent].Forecast(horizon);

    private protected override double HorizonVarianceRatioCore(int horizon) => _forecasters[_incumbent].HorizonVarianceRatio(horizon);

    private protected override void UpdateCore(double actual)
    {
        int k = _forecasters.Length;
        int publisher = _incumbent;
        double published = double.NaN;

        // Stage every score before anything changes.
        for (int i = 0; i < k; i++)
        {
            _hadForecast[i] = _forecasters[i].TryForecast(1, out double forecast);
            if (!_hadForecast[i])
            {
                continue;
            }

            if (i == publisher)
            {
                published = forecast;
            }

            double absolute = Math.Abs(actual - forecast);
            _stagedError[i] = _scored[i] == 0 ? absolute : (_options.ErrorWeight * absolute) + (_keep * _recentError[i]);
        }

        // Update the forecasters; a rejection by any of them restores the ones already updated.
        for (int i = 0; i < k; i++)
        {
            _forecasters[i].ExportState(_backups[i]);
            try
            {
                _forecasters[i].Update(actual);
            }
            catch (ArgumentOutOfRangeException)
            {
                for (int j = 0; j < i; j++)
                {
                    _forecasters[j].ImportState(_backups[j]);
                }

                throw;
            }
        }

        for (int i = 0; i < k; i++)
        {
            if (_hadForecast[i])
            {
                _recentError[i] = _stagedError[i];
                _scored[i]++;
            }
        }

        bool switched = Reselect();
        _last = new SelectionStep(actual, published, actual - published, publisher, _incumbent, switched);
    }

    private protected override void ResetCore()
    {
        foreach (Forecaster f in _forecasters)
        {
            f.Reset();
        }

        Array.Clear(_scored);
        Array.Clear(_recentError);
        _incumbent = -1;
        _challenger = -1;
        _challengerRun = 0;
        _switches = 0;
        _last = new SelectionStep(double.NaN, double.NaN, double.NaN, -1, -1, false);
    }

    private protected override int CoreStateLength
    {
        get
        {
            int length = HeaderLength;
            foreach (Forecaster f in _forecasters)
            {
                length += PerCandidateLength + f.StateLength;
            }

            return length;
        }
    }

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _incumbent;
        destination[1] = _challenger;
        destination[2] = _challengerRun;
        destination[3] = _switches;
        int offset = HeaderLength;
        for (int i = 0; i < _forecasters.Length; i++)
        {
            destination[offset] = _scored[i];
            destination[offset + 1] = _recentError[i];
            int length = _forecasters[i].StateLength;
            _forecasters[i].ExportState(destination.Slice(offset + PerCandidateLength, length));
            offset += PerCandidateLength + length;
        }
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _incumbent = (int)state[0];
        _challenger = (int)state[1];
        _challengerRun = (int)state[2];
        _switches = (long)state[3];
        int offset = HeaderLength;
        for (int i = 0; i < _forecasters.Length; i++)
        {
            _scored[i] = (long)state[offset];
            _recentError[i] = state[offset + 1];
            int length = _forecasters[i].StateLength;
            _forecasters[i].ImportState(state.Slice(offset + PerCandidateLength, length));
            offset += PerCandidateLength + length;
        }

        _last = new SelectionStep(double.NaN, double.NaN, double.NaN, -1, _incumbent, false);
    }

    private bool Reselect()
    {
        int k = _forecasters.Length;
        if (_incumbent < 0)
        {
            for (int i = 0; i < k; i++)
            {
                if (_forecasters[i].IsWarm)
                {
                    _incumbent = i;
                    break;
                }
            }

            return false;
        }

        int minScored = _options.MinScoredPeriods;
        int challenger = -1;
        for (int i = 0; i < k; i++)
        {
            if (_scored[i] >= minScored && (challenger < 0 || _recentError[i] < _recentError[challenger]))
            {
                challenger = i;
            }
        }

        bool leads = challenger >= 0
            && challenger != _incumbent
            && _scored[_incumbent] >= minScored
            && _recentError[challenger] < (1 - _options.Margin) * _recentError[_incumbent];
        if (!leads)
        {
            _challenger = -1;
            _challengerRun = 0;
            return false;
        }

        _challengerRun = challenger == _challenger ? _challengerRun + 1 : 1;
        _challenger = challenger;
        if (_challengerRun < _options.PeriodsToSwitch)
        {
            return false;
        }

        _incumbent = challenger;
        _challenger = -1;
        _challengerRun = 0;
        _switches++;
        return true;
    }

    private void CheckIndex(int index)
    {
        if ((uint)index >= (uint)_forecasters.Length)
        {
            ThrowHelper.ThrowOutOfRange(nameof(index), index, string.Create(CultureInfo.InvariantCulture, $"the candidate index must be between 0 and {_forecasters.Length - 1}"));
        }
    }

}
