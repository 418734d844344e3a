using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Forecasting;
using StreamForecast.Selection.Internal;

namespace StreamForecast.Selection;

/// <summary>
/// Runs a small set of candidate forecasting methods side by side on one series and publishes the forecast of the one with
/// the lowest recent error, switching only with hysteresis, and says which method produced each forecast. Create one from
/// <see cref="MethodSelectorOptions"/> with <see cref="MethodSelectorOptions.CreateSelector"/>.
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
/// <para><b>Periods.</b> As with <see cref="Forecaster"/>, the forecast read before <see cref="Update"/> is the one published
/// for that update's period; <see cref="Update"/> returns it with the index of the method that produced it.</para>
/// <para><b>Bad input.</b> NaN and infinities are rejected with <see cref="ArgumentOutOfRangeException"/>, as is an actual any
/// candidate's method rejects (a negative demand for an intermittent-demand method, for example). The selector then is
/// exactly as before: each candidate's state is copied to a buffer allocated at creation before it is updated, and
/// restored if a later candidate rejects the actual.</para>
/// <para><b>Cost.</b> Per update: the candidates' own update costs plus O(k) for k candidates, plus copying each candidate's
/// state (<see cref="Forecaster.StateLength"/> numbers, a few dozen for the usual methods) for the rollback. Allocation-free
/// after creation.</para>
/// <para><b>Snapshots.</b> <see cref="ExportState(Span{double})"/> writes the full state as <see cref="StateLength"/> plain
/// numbers; <see cref="ImportState"/> validates them and reads them back into a selector created from equal options, or
/// changes nothing. Continuing after an import is bit-identical to an uninterrupted run.</para>
/// <para><b>Engine.</b> The engine takes one <see cref="ForecasterOptions"/> per series; a selector is a separate operator
/// that a host steps itself (for example alongside the engine, or to choose the method it configures).</para>
/// <para><b>Thread safety.</b> Not thread-safe: one owner per series.</para>
/// </remarks>
public sealed class MethodSelector
{
    // Exported layout: count, incumbent, challenger, challenger run, switches; then per candidate:
    // scored periods, recent error, the forecaster's state.
    private const int HeaderLength = 5;
    private const int PerCandidateLength = 2;
    private const double MaxWholeNumber = 9007199254740992; // 2^53

    private readonly MethodSelectorOptions _options;
    private readonly Forecaster[] _forecasters;
    private readonly double[][] _backups;
    private readonly long[] _scored;
    private readonly double[] _recentError;
    private readonly double[] _stagedError;
    private readonly bool[] _hadForecast;
    private readonly double _keep;
    private long _count;
    private int _incumbent = -1;
    private int _challenger = -1;
    private int _challengerRun;
    private long _switches;

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

    /// <summary>The validated options this selector was created from.</summary>
    public MethodSelectorOptions Options => _options;

    /// <summary>The number of candidates.</summary>
    public int CandidateCount => _forecasters.Length;

    /// <summary>The number of actuals taken since creation or the last <see cref="Reset"/>.</summary>
    public long Count => _count;

    /// <summary>Whether a method is selected, so <see cref="Forecast"/> can be called.</summary>
    public bool IsWarm => _incumbent >= 0;

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

    /// <summary>The published forecast for <paramref name="horizon"/> periods ahead: the selected candidate's.</summary>
    /// <param name="horizon">Periods ahead, 1 or more; 1 (the default) is the next period.</param>
    /// <returns>The forecast; <see cref="SelectedIndex"/> says which method made it.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is less than 1.</exception>
    /// <exception cref="InvalidOperationException">No candidate can forecast yet (<see cref="IsWarm"/>).</exception>
    /// <remarks>O(1) plus the method's forecast cost. Does not change the state.</remarks>
    public double Forecast(int horizon = 1)
    {
        if (horizon < 1)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(horizon), horizon, "the horizon counts periods ahead and must be 1 or more");
        }

        if (_incumbent < 0)
        {
            ThrowNotWarm();
        }

        return _forecasters[_incumbent].Forecast(horizon);
    }

    /// <summary>Gets the published forecast and the method that produced it, if a method is selected.</summary>
    /// <param name="horizon">Periods ahead, 1 or more.</param>
    /// <param name="forecast">The forecast, or NaN when the result is false.</param>
    /// <param name="methodIndex">The candidate that produced it, or −1 when the result is false.</param>
    /// <returns>Whether a method is selected (<see cref="IsWarm"/>).</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is less than 1.</exception>
    public bool TryForecast(int horizon, out double forecast, out int methodIndex)
    {
        if (horizon < 1)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(horizon), horizon, "the horizon counts periods ahead and must be 1 or more");
        }

        methodIndex = _incumbent;
        if (_incumbent < 0)
        {
            forecast = double.NaN;
            return false;
        }

        forecast = _forecasters[_incumbent].Forecast(horizon);
        return true;
    }

    /// <summary>Takes the actual of the period that just closed: scores every candidate, updates them, and reselects.</summary>
    /// <param name="actual">The period's actual; finite and inside every candidate's domain.</param>
    /// <returns>The forecast that was published for the period, its error and the method that produced it, and the selection after it.</returns>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="actual"/> is NaN or infinite, a candidate's method rejects it, or an error would overflow. The selector is unchanged.
    /// </exception>
    /// <remarks>See the remarks on <see cref="MethodSelector"/> for the cost. Allocation-free. Not thread-safe.</remarks>
    public SelectionStep Update(double actual)
    {
        if (!double.IsFinite(actual))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(actual), actual, "an actual must be a finite number; NaN and infinities are rejected and the selector is left unchanged");
        }

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
            double staged = _scored[i] == 0 ? absolute : (_options.ErrorWeight * absolute) + (_keep * _recentError[i]);
            if (!double.IsFinite(staged))
            {
                SelectionThrowHelper.ThrowOutOfRange(nameof(actual), actual, string.Create(CultureInfo.InvariantCulture,
                    $"the error of candidate {i} would overflow; actuals and forecasts must stay well inside the double range, and the selector is left unchanged"));
            }

            _stagedError[i] = staged;
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

        _count++;
        bool switched = Reselect();
        return new SelectionStep(actual, published, actual - published, publisher, _incumbent, switched);
    }

    /// <summary>Forgets every actual: every candidate and the selection are as if just created.</summary>
    public void Reset()
    {
        foreach (Forecaster f in _forecasters)
        {
            f.Reset();
        }

        Array.Clear(_scored);
        Array.Clear(_recentError);
        _count = 0;
        _incumbent = -1;
        _challenger = -1;
        _challengerRun = 0;
        _switches = 0;
    }

    /// <summary>How many numbers <see cref="ExportState(Span{double})"/> writes; fixed by the options.</summary>
    public int StateLength
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

    /// <summary>Writes the full state into <paramref name="destination"/> as plain numbers.</summary>
    /// <param name="destination">At least <see cref="StateLength"/> numbers long.</param>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is too short.</exception>
    /// <remarks>Allocation-free. The layout is private to the selector and versioned with the library.</remarks>
    public void ExportState(Span<double> destination)
    {
        if (destination.Length < StateLength)
        {
            SelectionThrowHelper.ThrowArgument(nameof(destination), string.Create(CultureInfo.InvariantCulture,
                $"The destination holds {destination.Length} numbers; the selector state needs {StateLength}."));
        }

        destination[0] = _count;
        destination[1] = _incumbent;
        destination[2] = _challenger;
        destination[3] = _challengerRun;
        destination[4] = _switches;
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

    /// <summary>Returns the full state as a new array of <see cref="StateLength"/> numbers.</summary>
    /// <returns>The exported state.</returns>
    public double[] ExportState()
    {
        var state = new double[StateLength];
        ExportState(state);
        return state;
    }

    /// <summary>Replaces the state with one exported from a selector created from equal options.</summary>
    /// <param name="state">Exactly <see cref="StateLength"/> numbers from <see cref="ExportState(Span{double})"/>.</param>
    /// <exception cref="ArgumentException">
    /// The state has the wrong length, a non-finite number, values the selector cannot hold (indices out of range, counts that
    /// are not whole or disagree, a negative recent error), or a candidate's part its forecaster rejects. Nothing is imported.
    /// </exception>
    public void ImportState(ReadOnlySpan<double> state)
    {
        string? problem = Validate(state);
        if (problem is not null)
        {
            ThrowInvalidState(problem);
        }

        // Each forecaster validates its own part; restore the ones already imported if a later part is rejected.
        int k = _forecasters.Length;
        int offset = HeaderLength;
        for (int i = 0; i < k; i++)
        {
            int length = _forecasters[i].StateLength;
            _forecasters[i].ExportState(_backups[i]);
            try
            {
                _forecasters[i].ImportState(state.Slice(offset + PerCandidateLength, length));
            }
            catch (ArgumentException)
            {
                for (int j = 0; j < i; j++)
                {
                    _forecasters[j].ImportState(_backups[j]);
                }

                throw;
            }

            offset += PerCandidateLength + length;
        }

        int incumbent = (int)state[1];
        if (incumbent >= 0 && !_forecasters[incumbent].IsWarm)
        {
            for (int j = 0; j < k; j++)
            {
                _forecasters[j].ImportState(_backups[j]);
            }

            ThrowInvalidState("the selected candidate's forecaster cannot forecast");
        }

        _count = (long)state[0];
        _incumbent = incumbent;
        _challenger = (int)state[2];
        _challengerRun = (int)state[3];
        _switches = (long)state[4];
        offset = HeaderLength;
        for (int i = 0; i < k; i++)
        {
            _scored[i] = (long)state[offset];
            _recentError[i] = state[offset + 1];
            offset += PerCandidateLength + _forecasters[i].StateLength;
        }
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

    private string? Validate(ReadOnlySpan<double> state)
    {
        if (state.Length != StateLength)
        {
            return string.Create(CultureInfo.InvariantCulture, $"it has {state.Length} numbers, expected {StateLength}");
        }

        for (int i = 0; i < state.Length; i++)
        {
            if (!double.IsFinite(state[i]))
            {
                return string.Create(CultureInfo.InvariantCulture, $"number {i + 1} is not finite");
            }
        }

        int k = _forecasters.Length;
        double count = state[0];
        if (!IsWhole(count, MaxWholeNumber) || !IsWhole(state[4], count))
        {
            return "the period count and the switch count must be whole numbers, with no more switches than periods";
        }

        if (!IsWhole(state[1] + 1, k) || !IsWhole(state[2] + 1, k))
        {
            return "the selected and challenging candidates must be −1 or a candidate's index";
        }

        if (!IsWhole(state[3], _options.PeriodsToSwitch - 1) || (state[3] == 0) != (state[2] < 0))
        {
            return "the challenger's run must be between 1 and PeriodsToSwitch − 1 with a challenger, and 0 without one";
        }

        if (state[2] >= 0 && (state[1] < 0 || state[2] == state[1]))
        {
            return "a challenger needs a selected candidate other than itself";
        }

        int offset = HeaderLength;
        for (int i = 0; i < k; i++)
        {
            double scored = state[offset];
            double recent = state[offset + 1];
            if (!IsWhole(scored, count) || scored > count)
            {
                return string.Create(CultureInfo.InvariantCulture, $"candidate {i}'s scored periods must be a whole number no larger than the period count");
            }

            if (recent < 0 || (scored == 0 && recent != 0))
            {
                return string.Create(CultureInfo.InvariantCulture, $"candidate {i}'s recent error must be ≥ 0, and 0 before its first scored period");
            }

            if (state[offset + PerCandidateLength] != count)
            {
                return string.Create(CultureInfo.InvariantCulture, $"candidate {i}'s forecaster has seen a different number of actuals than the selector");
            }

            offset += PerCandidateLength + _forecasters[i].StateLength;
        }

        return null;
    }

    private void CheckIndex(int index)
    {
        if ((uint)index >= (uint)_forecasters.Length)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(index), index, string.Create(CultureInfo.InvariantCulture, $"the candidate index must be between 0 and {_forecasters.Length - 1}"));
        }
    }

    private static bool IsWhole(double value, double max) => value >= 0 && value <= max && value == Math.Floor(value);

    [DoesNotReturn]
    private static void ThrowInvalidState(string reason) =>
        SelectionThrowHelper.ThrowArgument("state", $"The state does not fit this method selector: {reason}. Nothing was imported.");

    [DoesNotReturn]
    private void ThrowNotWarm() =>
        throw new InvalidOperationException(string.Create(CultureInfo.InvariantCulture,
            $"None of the {_forecasters.Length} candidate methods can forecast yet; check IsWarm or call TryForecast."));
}
