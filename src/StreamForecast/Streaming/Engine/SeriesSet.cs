using System.Runtime.InteropServices;
using System.Text;

namespace StreamForecast.Streaming;

/// <summary>
/// The series of one single-writer owner, with the rules for creating, routing, closing, evicting and snapshotting
/// them: what one engine partition runs, and what a cluster bucket runs. Host it to keep series anywhere else (a grain
/// of another actor runtime, a serverless function that loads and stores its share of the keys); everything a series
/// produces goes to the <see cref="ISeriesSink{TKey}"/> given with each call, exactly as the engine would publish it.
/// </summary>
/// <typeparam name="TKey">The series key type; equality comes from <see cref="ForecastEngineOptions{TKey}.KeyComparer"/>.</typeparam>
/// <remarks>
/// <para><b>What it uses from the options.</b> <see cref="ForecastEngineOptions{TKey}.Resolve"/> (series options per new
/// key), <see cref="ForecastEngineOptions{TKey}.KeyComparer"/>, <see cref="ForecastEngineOptions{TKey}.MaxSeries"/> (a
/// limit for this set alone), <see cref="ForecastEngineOptions{TKey}.EvictAfterQuietPeriods"/>,
/// <see cref="ForecastEngineOptions{TKey}.MaxEventTimeAhead"/> and <see cref="ForecastEngineOptions{TKey}.TimeProvider"/>.
/// Partitions, queues and publishing options do not apply: the caller is the queue and the sink is the publisher.</para>
/// <para><b>Cost.</b> A post is one dictionary lookup and the series' O(1) per-period work (see
/// <see cref="SeriesStep{TKey}"/>); no allocation in the steady state except a new key's series (about 0.6 KB for a
/// moving average with error tracking). <see cref="Advance"/>, <see cref="Flush"/> and <see cref="CheckIdle(ISeriesSink{TKey})"/> visit
/// every series: O(series).</para>
/// <para><b>Warm-up.</b> A new series starts cold, as in the engine: its method and its drift rules warm up over their
/// documented number of periods. A restored series continues exactly where its snapshot left it.</para>
/// <para><b>Thread safety.</b> Single writer: exactly one thread at a time may call the methods that change the set
/// (post, advance, flush, idle check, acknowledge, restore, snapshot), and the sink is called on that thread, inside the
/// call. <see cref="Count"/> and <see cref="GetCounters"/> may be read from other threads (relaxed reads).</para>
/// </remarks>
public sealed partial class SeriesSet<TKey>
    where TKey : notnull
{
    private readonly Dictionary<TKey, SeriesState<TKey>> _series;
    private readonly ForecastEngineOptions<TKey> _options;
    private readonly ISeriesBudget? _budget;
    private readonly Output _output = new();
    private readonly List<TKey> _evict = [];
    private int _idleSeries;
    private int _count;
    private long _rejected;

    /// <summary>Creates an empty set of series.</summary>
    /// <param name="options">Validated engine options (see the remarks for the ones that apply).</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public SeriesSet(ForecastEngineOptions<TKey> options)
        : this(options, null)
    {
    }

    /// <summary>Creates a set whose series limit is shared with others (an engine's partitions).</summary>
    internal SeriesSet(ForecastEngineOptions<TKey> options, ISeriesBudget? budget)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _budget = budget;
        _series = new Dictionary<TKey, SeriesState<TKey>>(options.KeyComparer);
    }

    /// <summary>How many series the set holds.</summary>
    /// <remarks>O(1); safe to read from any thread (a relaxed read).</remarks>
    public int Count => Volatile.Read(ref _count);

    /// <summary>Whether some series has an idle timeout, so that <see cref="CheckIdle(ISeriesSink{TKey})"/> has work to do.</summary>
    /// <remarks>O(1). Single writer: read it on the owning thread.</remarks>
    public bool HasIdleSeries => _idleSeries > 0;

    /// <summary>The series held, in no particular order (the engine's snapshots and status reads).</summary>
    internal Dictionary<TKey, SeriesState<TKey>>.ValueCollection Series => _series.Values;

    /// <summary>Takes over a series restored from a snapshot (its slot of the series limit is already counted by the caller).</summary>
    internal void Adopt(SeriesState<TKey> state)
    {
        state.SetMarks(MarksFor(state.Key, state.Options));
        _series.Add(state.Key, state);
        _count = _series.Count;
        if (state.Options.IdleTimeout is not null)
        {
            _idleSeries++;
        }
    }

    /// <summary>Applies one observation to its series, creating the series on first sight.</summary>
    /// <param name="observation">The observation; checked as the engine checks a post (a key, a finite quantity within
    /// <see cref="NumericDomain.MaxMagnitude"/>, an event time not beyond <see cref="ForecastEngineOptions{TKey}.MaxEventTimeAhead"/>).</param>
    /// <param name="sink">Receives the outputs of this call (a late observation can restate closed periods).</param>
    /// <exception cref="ArgumentNullException"><paramref name="sink"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">The observation is invalid; nothing was applied.</exception>
    /// <remarks>
    /// What the engine would count rather than refuse (late, duplicate, outside the calendar, series limit reached, a
    /// period total beyond the numeric domain) is counted in <see cref="GetCounters"/> and, when it has a reason,
    /// reported to the sink as a <see cref="SeriesFaultKind.ObservationRejected"/> fault; the series stays as it was.
    /// Cost: see the type's remarks. Single writer.
    /// </remarks>
    public void Post(in Observation<TKey> observation, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        if (ObservationRules.FindProblem(observation, ObservationRules.LatestEventTime(_options.MaxEventTimeAhead, _options.TimeProvider)) is { } problem)
        {
            throw new ArgumentOutOfRangeException(nameof(observation), $"The observation is invalid ({problem}); nothing was applied.");
        }

        Observe(observation, _options.TimeProvider.GetTimestamp(), sink);
    }

    /// <summary>Applies a batch of observations in order, after checking all of them.</summary>
    /// <param name="batch">The observations, each checked as in <see cref="Post(in Observation{TKey}, ISeriesSink{TKey})"/> before any is applied.</param>
    /// <param name="sink">Receives the outputs of this call.</param>
    /// <exception cref="ArgumentNullException"><paramref name="sink"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">An observation is invalid; nothing was applied.</exception>
    /// <remarks>O(batch) plus the per-series work; the clock is read once for the whole batch. Single writer.</remarks>
    public void Post(ReadOnlySpan<Observation<TKey>> batch, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        DateTimeOffset? latest = ObservationRules.LatestEventTime(_options.MaxEventTimeAhead, _options.TimeProvider);
        for (int i = 0; i < batch.Length; i++)
        {
            if (ObservationRules.FindProblem(batch[i], latest) is { } problem)
            {
                throw new ArgumentOutOfRangeException(nameof(batch), $"Observation {i} of the batch is invalid ({problem}); nothing was applied.");
            }
        }

        long arrival = _options.TimeProvider.GetTimestamp();
        for (int i = 0; i < batch.Length; i++)
        {
            Observe(batch[i], arrival, sink);
        }
    }

    /// <summary>
    /// The series of <paramref name="key"/>, or null when there is none; a read that changes nothing. A partition resolves a
    /// run of observations' series this way before applying them, so that their lookups' cache misses overlap instead of
    /// following one another (issue 15, end to end at 100k keys and more).
    /// </summary>
    internal SeriesState<TKey>? Find(TKey key) => _series.TryGetValue(key, out SeriesState<TKey>? state) ? state : null;

    /// <summary>Routes one checked observation to its series (the engine's partitions check at their door).</summary>
    /// <param name="observation">The observation.</param>
    /// <param name="arrival">When it arrived (<see cref="TimeProvider.GetTimestamp"/>).</param>
    /// <param name="sink">Receives the outputs.</param>
    /// <param name="known">
    /// Its series when the caller has already found it with <see cref="Find"/> since the last call that can remove a series
    /// (a sweep or an idle check; applying an observation removes none but a new series' own key); null to look it up here.
    /// </param>
    internal void Observe(in Observation<TKey> observation, long arrival, ISeriesSink<TKey> sink, SeriesState<TKey>? known = null)
    {
        ISeriesOutput<TKey> output = Use(sink);
        SeriesState<TKey>? state = known ?? FindOrCreate(observation, arrival, sink);
        if (state is null)
        {
            return;
        }

        if (!state.Options.Calendar.TryPeriodOf(observation.Timestamp, out long period))
        {
            Rejected(observation.Key, "The event time is outside the range the series' calendar supports.", sink);
            return;
        }

        if (state.Observe(observation.Timestamp, period, observation.Quantity, observation.EventId, arrival, output) is { } refused)
        {
            Rejected(observation.Key, refused, sink);
        }
    }

    /// <summary>The observation's series, created when it has none; null when a new series is refused (reported to the sink).</summary>
    private SeriesState<TKey>? FindOrCreate(in Observation<TKey> observation, long arrival, ISeriesSink<TKey> sink)
    {
        ref SeriesState<TKey>? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(_series, observation.Key, out bool exists);
        if (!exists)
        {
            SeriesOptions options;
            try
            {
                options = _options.Resolve(observation.Key);
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                _series.Remove(observation.Key);
                Rejected(observation.Key, "The series options could not be resolved: " + ex.Message, sink);
                return null;
            }

            if (!TryReserveSeries())
            {
                _series.Remove(observation.Key);
                Rejected(observation.Key, null, sink);
                return null;
            }

            if (!TryMarksFor(observation.Key, options, sink, out EventMarks? marks))
            {
                return null;
            }

            slot = new SeriesState<TKey>(observation.Key, options, arrival);
            slot.SetMarks(marks);
            _count = _series.Count;
            if (options.IdleTimeout is not null)
            {
                _idleSeries++;
            }
        }

        return slot!;
    }

    /// <summary>Closes, in every series, each period that ends at or before the watermark; then evicts quiet series.</summary>
    /// <param name="watermark">Event time up to which every period is complete.</param>
    /// <param name="sink">Receives a forecast update per closed period and any alert transitions.</param>
    /// <exception cref="ArgumentNullException"><paramref name="sink"/> is null.</exception>
    /// <remarks>O(series + closed periods). A watermark behind an earlier one closes nothing. Single writer.</remarks>
    public void Advance(DateTimeOffset watermark, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        ISeriesOutput<TKey> output = Use(sink);
        long ticks = watermark.UtcTicks;
        foreach (SeriesState<TKey> s in _series.Values)
        {
            s.CloseThrough(ticks, output);
        }

        EvictQuiet();
    }

    /// <summary>Closes every open period of every series (end of input); then evicts quiet series.</summary>
    /// <param name="sink">Receives a forecast update per closed period and any alert transitions.</param>
    /// <exception cref="ArgumentNullException"><paramref name="sink"/> is null.</exception>
    /// <remarks>O(series + closed periods). Single writer.</remarks>
    public void Flush(ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        ISeriesOutput<TKey> output = Use(sink);
        foreach (SeriesState<TKey> s in _series.Values)
        {
            s.CloseAll(output);
        }

        EvictQuiet();
    }

    /// <summary>
    /// Closes the open periods of series that have had no observation for their <see cref="SeriesOptions.IdleTimeout"/>,
    /// measured on <see cref="ForecastEngineOptions{TKey}.TimeProvider"/>; then evicts quiet series.
    /// </summary>
    /// <param name="sink">Receives a forecast update per closed period and any alert transitions.</param>
    /// <exception cref="ArgumentNullException"><paramref name="sink"/> is null.</exception>
    /// <remarks>O(series) when some series has an idle timeout (<see cref="HasIdleSeries"/>), else only the eviction pass. Call it on a timer. Single writer.</remarks>
    public void CheckIdle(ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        CheckIdle(_options.TimeProvider.GetTimestamp(), sink);
    }

    /// <summary>The idle check at a clock reading taken by the caller (the engine's timer).</summary>
    internal void CheckIdle(long nowTimestamp, ISeriesSink<TKey> sink)
    {
        ISeriesOutput<TKey> output = Use(sink);
        if (_idleSeries > 0)
        {
            foreach (SeriesState<TKey> s in _series.Values)
            {
                s.Idle(nowTimestamp, _options.TimeProvider, output);
            }
        }

        EvictQuiet();
    }

    /// <summary>Acknowledges the drift of one series (see <see cref="IForecastEngine{TKey}.AcknowledgeAsync"/>).</summary>
    /// <param name="key">The series; nothing happens for a key the set does not hold.</param>
    /// <param name="sink">Receives the transitions of the episodes this closes.</param>
    /// <exception cref="ArgumentNullException">An argument is null.</exception>
    /// <remarks>O(rules of the series). Single writer.</remarks>
    public void Acknowledge(TKey key, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(key);
        ArgumentNullException.ThrowIfNull(sink);
        if (_series.TryGetValue(key, out SeriesState<TKey>? series))
        {
            series.Acknowledge(Use(sink));
        }
    }

    /// <summary>The set's counters: the series-level fields, <see cref="EngineCounters.Rejected"/> and <see cref="EngineCounters.ActiveSeries"/>.</summary>
    /// <returns>The counters now; the engine-level fields (dropped, queue depth, subscribers) are 0.</returns>
    /// <remarks>O(1); safe to call from any thread (relaxed reads, so the fields may straddle a post).</remarks>
    public EngineCounters GetCounters() =>
        _output.Counters.ToEngineCounters() with { Rejected = Volatile.Read(ref _rejected), ActiveSeries = Count };

    /// <summary>Sets the counters to values stored earlier with the set's series (a host that reloads its state).</summary>
    /// <param name="counters">Counters from <see cref="GetCounters"/>; the series-level fields and <see cref="EngineCounters.Rejected"/> are taken, the rest ignored.</param>
    /// <exception cref="ArgumentOutOfRangeException">A counter taken is negative; nothing was changed.</exception>
    /// <remarks>O(1). Single writer.</remarks>
    public void RestoreCounters(in EngineCounters counters)
    {
        if (counters.Rejected < 0 || !_output.Counters.TryLoad(counters))
        {
            throw new ArgumentOutOfRangeException(nameof(counters), "A counter cannot be negative; nothing was changed.");
        }

        Volatile.Write(ref _rejected, counters.Rejected);
    }

    private Output Use(ISeriesSink<TKey> sink)
    {
        // Compared first: an engine partition passes the same sink every time, and a reference store costs a write barrier.
        Output output = _output;
        if (!ReferenceEquals(output.Sink, sink))
        {
            output.Sink = sink;
        }

        return output;
    }

    private bool TryReserveSeries() => _budget?.TryReserveSeries() ?? _count < _options.MaxSeries;

    private void Rejected(TKey key, string? reason, ISeriesSink<TKey> sink)
    {
        Volatile.Write(ref _rejected, _rejected + 1);
        if (reason is not null)
        {
            sink.Fault(new SeriesFault<TKey>(key, 0, SeriesFaultKind.ObservationRejected, reason));
        }
    }

    /// <summary>The caller's sink with the set's counters: what a series writes to.</summary>
    private sealed class Output : ISeriesOutput<TKey>
    {
        public ISeriesSink<TKey> Sink { get; set; } = null!;

        public SeriesCounters Counters { get; } = new();

        public void Forecast(in ForecastUpdate<TKey> update) => Sink.Forecast(update);

        public void Alert(in DriftAlert<TKey> alert) => Sink.Alert(alert);

        public void Fault(in SeriesFault<TKey> fault) => Sink.Fault(fault);
    }
}
