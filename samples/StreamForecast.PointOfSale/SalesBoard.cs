using System.Collections.Concurrent;
using StreamForecast.Alerts;
using StreamForecast.Hosting;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// The current view the API serves: the latest forecast of each shop and item and the drift alerts now open. It
/// subscribes to the engine's push streams when the host starts (each with its own buffer, so reading the board never
/// slows ingestion), then reads what the engine already holds, so that after a restart the restored series are served
/// before any day closes again.
/// </summary>
public sealed class SalesBoard(HostedForecastEngine<string> engine, TimeZoneInfo zone) : IHostedService, IDisposable
{
    private readonly ConcurrentDictionary<string, Entry> _latest = new(StringComparer.Ordinal);
    private readonly Lock _alertGate = new();
    private readonly Dictionary<(string Key, int Rule), OpenAlert> _open = [];
    private readonly HashSet<(string Key, int Rule)> _alertsSeen = [];
    private readonly SortedDictionary<(string Key, string Kind, DateOnly Day), (double Sold, double Forecast)> _marked = [];
    private readonly List<(string Key, DateOnly Day)> _raised = [];
    private IDisposable? _forecasts;
    private IDisposable? _alerts;

    /// <summary>The latest forecasts of a shop (all items) or of one item.</summary>
    /// <param name="shop">The shop.</param>
    /// <param name="item">The item, or null for all.</param>
    /// <returns>The forecasts, by item.</returns>
    public List<ItemForecast> Forecasts(string shop, string? item)
    {
        var list = new List<ItemForecast>();
        foreach (Entry e in _latest.Values)
        {
            if (e.View.Shop == shop && (item is null || e.View.Item == item))
            {
                list.Add(e.View);
            }
        }

        list.Sort((a, b) => string.CompareOrdinal(a.Item, b.Item));
        return list;
    }

    /// <summary>The drift alerts now open, optionally of one shop.</summary>
    /// <param name="shop">The shop, or null for all.</param>
    /// <returns>The open alerts.</returns>
    public List<OpenAlert> OpenAlerts(string? shop)
    {
        var list = new List<OpenAlert>();
        lock (_alertGate)
        {
            foreach (OpenAlert a in _open.Values)
            {
                if (shop is null || a.Shop == shop)
                {
                    list.Add(a);
                }
            }
        }

        list.Sort((a, b) => string.CompareOrdinal(a.Shop + a.Item + a.Rule, b.Shop + b.Item + b.Rule));
        return list;
    }

    /// <summary>The known events seen on closed days since the server started, by item and kind (see <see cref="EventReport"/>).</summary>
    /// <returns>The reports, by shop, item and kind.</returns>
    public List<EventReport> Events()
    {
        var list = new List<EventReport>();
        lock (_alertGate)
        {
            foreach (var group in _marked.GroupBy(m => (m.Key.Key, m.Key.Kind)))
            {
                DateOnly first = group.First().Key.Day, last = group.Last().Key.Day;
                double sold = group.Sum(m => m.Value.Sold), forecast = group.Where(m => !double.IsNaN(m.Value.Forecast)).Sum(m => m.Value.Forecast);
                int raised = _raised.Count(r => r.Key == group.Key.Key && r.Day >= first && r.Day <= last.AddDays(7));
                (string shop, string item) = Split(group.Key.Key);
                list.Add(new EventReport(shop, item, group.Key.Kind, first, last, group.Count(), forecast > 0 ? Rounded(sold / forecast, 2) : null, raised));
            }
        }

        return list;
    }

    /// <inheritdoc/>
    public async Task StartAsync(CancellationToken cancellationToken)
    {
        ForecastEngine<string> e = await engine.WaitUntilStartedAsync(cancellationToken);
        _forecasts = e.Forecasts.Subscribe(new Sink<ForecastUpdate<string>>(u =>
        {
            (string shop, string item) = Split(u.Key);
            Keep(u.Key, new Entry(u.Period, View(shop, item, Day(u.PeriodStart), u.Actual, u.Next, u.Method, u.Errors)), updateWinsTie: true);
            if (u.Event is { } kind)
            {
                lock (_alertGate)
                {
                    _marked[(u.Key, kind.Name, Day(u.PeriodStart))] = (u.Actual, u.ForecastForPeriod); // a restated day replaces its first figures
                }
            }
        }));
        _alerts = e.Alerts.Subscribe(new Sink<DriftAlert<string>>(a =>
        {
            lock (_alertGate)
            {
                _alertsSeen.Add((a.Key, a.RuleIndex));
                if (a.Transition.Kind == DriftTransitionKind.Raised)
                {
                    _raised.Add((a.Key, Day(a.PeriodStart)));
                }
                if (a.Transition.Kind == DriftTransitionKind.Cleared)
                {
                    _open.Remove((a.Key, a.RuleIndex));
                }
                else
                {
                    (string shop, string item) = Split(a.Key);
                    _open[(a.Key, a.RuleIndex)] = new OpenAlert(
                        shop, item, a.RuleName, a.Transition.EpisodeId, a.Transition.Direction.ToString(), a.Transition.Severity.ToString(), Day(a.PeriodStart));
                }
            }
        }));

        // After a restart no day has closed since the restore, so nothing has been published yet: read what the engine
        // holds (restored and replayed). Anything published meanwhile is newer, or the same day, and wins.
        foreach (SeriesStatus<string> s in await e.GetSeriesStatusAsync(cancellationToken))
        {
            (string shop, string item) = Split(s.Key);
            if (!double.IsNaN(s.LastActual) && s.OpenPeriodStart != default)
            {
                DateOnly lastClosed = Day(s.OpenPeriodStart).AddDays(-1);
                Keep(s.Key, new Entry(s.OpenPeriod - 1, View(shop, item, lastClosed, s.LastActual, s.Next, s.Method, s.Errors)), updateWinsTie: false);
            }

            lock (_alertGate)
            {
                foreach (DriftEpisodeStatus episode in s.OpenEpisodes)
                {
                    if (!_alertsSeen.Contains((s.Key, episode.RuleIndex)))
                    {
                        _open.TryAdd((s.Key, episode.RuleIndex), new OpenAlert(
                            shop, item, episode.RuleName, episode.EpisodeId, episode.Direction.ToString(), episode.Severity.ToString(), Since: null));
                    }
                }
            }
        }
    }

    /// <inheritdoc/>
    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;

    /// <inheritdoc/>
    public void Dispose()
    {
        _forecasts?.Dispose();
        _alerts?.Dispose();
    }

    private static ItemForecast View(string shop, string item, DateOnly lastClosedDay, double sold, ForecastPoint next, string method, ErrorSummary errors) =>
        new(
            shop, item, lastClosedDay, sold,
            next.IsValid ? Rounded(next.Value, 1) : null,
            Rounded(next.Lower, 1),
            Rounded(next.Upper, 1),
            method, Rounded(errors.Mad, 2), Rounded(errors.TrackingSignal, 2));

    /// <summary>A statistic for JSON: rounded when it is a number, null when it is undefined (NaN) or infinite.</summary>
    private static double? Rounded(double value, int digits) => double.IsFinite(value) ? Math.Round(value, digits) : null;

    private static (string Shop, string Item) Split(string key)
    {
        int slash = key.IndexOf('/', StringComparison.Ordinal);
        return (key[..slash], key[(slash + 1)..]);
    }

    private void Keep(string key, Entry entry, bool updateWinsTie) =>
        _latest.AddOrUpdate(key, entry, (_, old) => entry.Period > old.Period || (updateWinsTie && entry.Period == old.Period) ? entry : old);

    private DateOnly Day(DateTimeOffset periodStart) => DateOnly.FromDateTime(TimeZoneInfo.ConvertTime(periodStart, zone).DateTime);

    private readonly record struct Entry(long Period, ItemForecast View);

    private sealed class Sink<T>(Action<T> onNext) : IObserver<T>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(T value) => onNext(value);
    }
}
