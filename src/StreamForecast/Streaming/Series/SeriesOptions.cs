using System.Collections.Immutable;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Internal;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <summary>
/// How the engine treats one series: the forecasting method, the period calendar, lateness and restatement, gaps,
/// duplicates, error tracking and drift rules. Resolved once, when a series is first seen.
/// </summary>
/// <remarks>Immutable and thread-safe; validated at construction. Every parameter has a documented default.</remarks>
public sealed record SeriesOptions
{
    /// <summary>The default number of remembered event ids per series.</summary>
    public const int DefaultDuplicateWindow = 1024;

    /// <summary>The default of <see cref="MaxCatchUpPeriods"/>: 10,000 periods (about a week of minutes, 27 years of days).</summary>
    public const int DefaultMaxCatchUpPeriods = 10_000;

    /// <summary>Creates series options.</summary>
    /// <param name="method">The forecasting method.</param>
    /// <param name="calendar">How event times map to periods.</param>
    /// <param name="lateness">
    /// How long after a period's end events may still arrive before it closes, and how many closed periods may be
    /// restated by a late event (default: no lateness, no restatement: late events are dropped and counted).
    /// </param>
    /// <param name="gaps">What an empty period means (default <see cref="GapPolicy.Zero"/>).</param>
    /// <param name="tracking">Error-tracking options (default <see cref="ErrorTrackerOptions.Default"/>).</param>
    /// <param name="rules">Drift rules evaluated on each scored period (default: none).</param>
    /// <param name="horizon">The further horizon h reported with each update besides the next period (default 1, 1 to 10,000).</param>
    /// <param name="intervalMultiplier">The normal multiplier z of the prediction intervals (default 1.2816, an 80% interval; above 0, at most 10).</param>
    /// <param name="idleTimeout">
    /// After this much quiet (measured with the engine's <see cref="TimeProvider"/>), the series' periods up to its last
    /// event time plus the quiet time, less the lateness, are closed (default: never).
    /// </param>
    /// <param name="duplicateWindow">
    /// The most event ids per series remembered for de-duplication (default 1024, 0 to 1,000,000; 0 turns it off). Ids are
    /// kept only while their event's period is open or restatable (a repeat of an older event is late anyway), so memory
    /// follows the ids actually held: roughly 60 bytes each plus the id strings.
    /// </param>
    /// <param name="maxCatchUpPeriods">
    /// The most periods of one series that one step (an observation, an advance of the watermark, an idle check) closes
    /// and publishes (default 10,000, 1 to 10,000,000). When an event or a watermark lies further ahead, the periods that
    /// hold data are still closed, and the empty stretch after them is skipped without feeding the model: the series
    /// continues at the watermark's period, the skipped periods are counted in <see cref="EngineCounters.SkippedPeriods"/>
    /// and reported as a <see cref="SeriesFaultKind.PeriodsSkipped"/> fault, and periods before them can no longer be
    /// restated. This bounds the work of one event (a stray time stamp years ahead cannot close millions of periods).
    /// </param>
    /// <param name="referenceMethod">
    /// A second, slower method run beside <paramref name="method"/> on the same actuals, whose forecasts are never
    /// published: its one-step errors feed the drift rules that watch it (<see cref="DriftRuleOptions.Watches"/> =
    /// <see cref="WatchedModel.Reference"/>), so a lasting shift that a fast-adapting method follows is still reported.
    /// Default: none (nothing changes, outputs and snapshots are as without it).
    /// <see cref="Forecasting.ReferenceMethods.Slower"/> derives one from common methods. Costs one more forecaster and
    /// error tracker per series, in memory and per period.
    /// </param>
    /// <param name="empiricalIntervals">
    /// Intervals from the series' own recent errors instead of normal ones (default null: normal intervals with
    /// <paramref name="intervalMultiplier"/>, as before). While a horizon warms up its interval is the normal one of the
    /// same nominal coverage; every published point says which kind it carries (<see cref="ForecastPoint.Kind"/>). The
    /// multiplier is then not used.
    /// </param>
    /// <param name="nonNegative">
    /// Whether the series cannot go below zero (counts, sales, demand): point forecasts and interval bounds are clipped at
    /// zero, and the forecast scored against each actual is the clipped one, so the error statistics describe what was
    /// published (default false). Actuals are not changed or checked: a negative actual is taken as it is.
    /// </param>
    /// <exception cref="ArgumentNullException"><paramref name="method"/> or <paramref name="calendar"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A number is out of its stated range.</exception>
    /// <exception cref="ArgumentException">
    /// A rule is null, or a rule watches the reference model while <paramref name="referenceMethod"/> is null.
    /// </exception>
    public SeriesOptions(
        ForecasterOptions method,
        PeriodCalendar calendar,
        LatenessPolicy lateness = default,
        GapPolicy gaps = GapPolicy.Zero,
        ErrorTrackerOptions? tracking = null,
        ImmutableArray<DriftRuleOptions> rules = default,
        int horizon = 1,
        double intervalMultiplier = NormalMultiplier.Coverage80,
        TimeSpan? idleTimeout = null,
        int duplicateWindow = DefaultDuplicateWindow,
        int maxCatchUpPeriods = DefaultMaxCatchUpPeriods,
        ForecasterOptions? referenceMethod = null,
        EmpiricalIntervalOptions? empiricalIntervals = null,
        bool nonNegative = false)
    {
        ArgumentNullException.ThrowIfNull(method);
        ArgumentNullException.ThrowIfNull(calendar);
        if (gaps is not (GapPolicy.Zero or GapPolicy.Missing or GapPolicy.CarryForward))
        {
            ThrowHelper.ThrowOutOfRange(nameof(gaps), gaps, "the gap policy must be Zero, Missing or CarryForward");
        }

        if (horizon is < 1 or > 10_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(horizon), horizon, "the horizon must be between 1 and 10,000 periods");
        }

        if (!(intervalMultiplier > 0 && intervalMultiplier <= 10))
        {
            ThrowHelper.ThrowOutOfRange(nameof(intervalMultiplier), intervalMultiplier, "the interval multiplier z must be above 0 and at most 10 (1.2816 for 80%, 1.96 for 95%)");
        }

        if (idleTimeout is { } idle && idle <= TimeSpan.Zero)
        {
            ThrowHelper.ThrowOutOfRange(nameof(idleTimeout), idle, "the idle timeout must be positive, or null for never");
        }

        if (duplicateWindow is < 0 or > 1_000_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(duplicateWindow), duplicateWindow, "the duplicate window must be between 0 and 1,000,000 event ids");
        }

        if (maxCatchUpPeriods is < 1 or > 10_000_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(maxCatchUpPeriods), maxCatchUpPeriods, "the most periods closed in one step must be between 1 and 10,000,000");
        }

        ImmutableArray<DriftRuleOptions> ruleList = rules.IsDefault ? [] : rules;
        foreach (DriftRuleOptions rule in ruleList)
        {
            if (rule is null)
            {
                ThrowHelper.ThrowArgument(nameof(rules), "The drift rules must not contain null.");
            }

            if (rule.Watches == WatchedModel.Reference && referenceMethod is null)
            {
                ThrowHelper.ThrowArgument(nameof(rules), $"The drift rule {rule.RuleName} watches the reference model, but no reference method is set; give one (referenceMethod) or let the rule watch the published model.");
            }
        }

        Method = method;
        MethodLabel = method.MethodName;
        RuleLabels = ruleList.Select(static r => r.RuleName).ToImmutableArray();
        Calendar = calendar;
        Lateness = lateness;
        Gaps = gaps;
        Tracking = tracking ?? ErrorTrackerOptions.Default;
        Rules = ruleList;
        Horizon = horizon;
        IntervalMultiplier = intervalMultiplier;
        IdleTimeout = idleTimeout;
        DuplicateWindow = duplicateWindow;
        MaxCatchUpPeriods = maxCatchUpPeriods;
        ReferenceMethod = referenceMethod;
        if (referenceMethod is not null)
        {
            ReferenceLabel = referenceMethod.MethodName;
            StateLabel = MethodLabel + " with reference " + ReferenceLabel;
        }
        else
        {
            StateLabel = MethodLabel;
        }
        EmpiricalIntervals = empiricalIntervals;
        NonNegative = nonNegative;
        Intervals = new IntervalSettings(intervalMultiplier, empiricalIntervals, horizon, nonNegative);
    }

    /// <summary>The forecasting method.</summary>
    public ForecasterOptions Method { get; }

    /// <summary>The method's label, formatted once (it goes into every forecast update).</summary>
    internal string MethodLabel { get; }

    /// <summary>
    /// The slower method run beside <see cref="Method"/> whose errors feed the rules that watch it; null (the default)
    /// for none. Its forecasts are never published.
    /// </summary>
    public ForecasterOptions? ReferenceMethod { get; }

    /// <summary>The reference method's label, formatted once; null without one.</summary>
    internal string? ReferenceLabel { get; }

    /// <summary>The label a snapshot carries for the series' models: the method's, plus the reference method's when set.</summary>
    internal string StateLabel { get; }

    /// <summary>The rules' labels, formatted once.</summary>
    internal ImmutableArray<string> RuleLabels { get; }

    /// <summary>How event times map to periods.</summary>
    public PeriodCalendar Calendar { get; }

    /// <summary>Allowed lateness and restatement horizon.</summary>
    public LatenessPolicy Lateness { get; }

    /// <summary>What an empty period means.</summary>
    public GapPolicy Gaps { get; }

    /// <summary>Error-tracking options.</summary>
    public ErrorTrackerOptions Tracking { get; }

    /// <summary>Drift rules evaluated on each scored period, in order.</summary>
    public ImmutableArray<DriftRuleOptions> Rules { get; }

    /// <summary>The further horizon h reported with each update.</summary>
    public int Horizon { get; }

    /// <summary>The normal multiplier z of the prediction intervals.</summary>
    public double IntervalMultiplier { get; }

    /// <summary>The empirical-interval settings; null for normal intervals (the default).</summary>
    public EmpiricalIntervalOptions? EmpiricalIntervals { get; }

    /// <summary>Whether point forecasts and interval bounds are clipped at zero (see the constructor).</summary>
    public bool NonNegative { get; }

    /// <summary>
    /// The nominal coverage of the published intervals: the empirical coverage, or for normal intervals 2Φ(z) − 1 of
    /// <see cref="IntervalMultiplier"/> (0.8 for the default z = 1.2816).
    /// </summary>
    public double IntervalCoverage => Intervals.Coverage;

    /// <summary>The interval settings resolved once for every series of these options.</summary>
    internal IntervalSettings Intervals { get; }

    /// <summary>The quiet time after which a series' periods are closed without new events; null for never.</summary>
    public TimeSpan? IdleTimeout { get; }

    /// <summary>How many event ids per series are remembered for de-duplication; 0 turns it off.</summary>
    public int DuplicateWindow { get; }

    /// <summary>The most periods one step closes for this series before an empty stretch is skipped (see the constructor).</summary>
    public int MaxCatchUpPeriods { get; }

    /// <summary>Equal when every setting is equal (rules compared element by element).</summary>
    /// <param name="other">The other options.</param>
    /// <returns>Whether both describe the same treatment.</returns>
    public bool Equals(SeriesOptions? other) =>
        other is not null
        && Method.Equals(other.Method)
        && Calendar.Equals(other.Calendar)
        && Lateness.Equals(other.Lateness)
        && Gaps == other.Gaps
        && Tracking.Equals(other.Tracking)
        && Rules.SequenceEqual(other.Rules)
        && Horizon == other.Horizon
        && IntervalMultiplier.Equals(other.IntervalMultiplier)
        && IdleTimeout == other.IdleTimeout
        && DuplicateWindow == other.DuplicateWindow
        && MaxCatchUpPeriods == other.MaxCatchUpPeriods
        && Equals(ReferenceMethod, other.ReferenceMethod)
        && Equals(EmpiricalIntervals, other.EmpiricalIntervals)
        && NonNegative == other.NonNegative;

    /// <inheritdoc/>
    public override int GetHashCode() => HashCode.Combine(Method, Calendar, Lateness, Gaps, Tracking, Rules.Length, Horizon, IdleTimeout);
}
