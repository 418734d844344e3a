using System.Collections.Concurrent;
using StreamForecast.Alerts;
using StreamForecast.Hosting;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// The current view the API serves: the latest forecast of each shop and item and the drift alerts now open. It
/// subscribes to the engine's push streams when the host starts (each with its own buffer, so reading the board never
/// slows ingestion).
/// </summary>
public sealed class SalesBoard(HostedForecastEngine<string> engine, TimeZoneInfo zone) : IHostedService, IDisposable
{
    private readonly ConcurrentDictionary<string, ForecastUpdate<string>> _latest = new(StringComparer.Ordinal);
    private readonly ConcurrentDictionary<(string Key, int Rule), DriftAlert<string>> _open = new();
    private IDisposable? _forecasts;
    private IDisposable? _alerts;

    /// <summary>The latest forecasts of a shop (all items) or of one item.</summary>
    /// <param name="shop">The shop.</param>
    /// <param name="item">The item, or null for all.</param>
    /// <returns>The forecasts, by item.</returns>
    public List<ItemForecast> Forecasts(string shop, string? item)
    {
        var list = new List<ItemForecast>();
        foreach (ForecastUpdate<string> u in _latest.Values)
        {
            (string s, string i) = Split(u.Key);
            if (s == shop && (item is null || i == item))
            {
                list.Add(new ItemForecast(
                    s, i, Day(u.PeriodStart), u.Actual,
                    u.Next.IsValid ? Rounded(u.Next.Value, 1) : null,
                    Rounded(u.Next.Lower, 1),
                    Rounded(u.Next.Upper, 1),
                    u.Method, Rounded(u.Errors.Mad, 2), Rounded(u.Errors.TrackingSignal, 2)));
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
        foreach (DriftAlert<string> a in _open.Values)
        {
            (string s, string i) = Split(a.Key);
            if (shop is null || s == shop)
            {
                list.Add(new OpenAlert(s, i, a.RuleName, a.Transition.EpisodeId, a.Transition.Direction.ToString(), a.Transition.Severity.ToString(), Day(a.PeriodStart)));
            }
        }

        list.Sort((a, b) => string.CompareOrdinal(a.Shop + a.Item + a.Rule, b.Shop + b.Item + b.Rule));
        return list;
    }

    /// <inheritdoc/>
    public async Task StartAsync(CancellationToken cancellationToken)
    {
        ForecastEngine<string> e = await engine.WaitUntilStartedAsync(cancellationToken);
        _forecasts = e.Forecasts.Subscribe(new Sink<ForecastUpdate<string>>(u =>
            _latest.AddOrUpdate(u.Key, u, (_, old) => u.Period >= old.Period ? u : old)));
        _alerts = e.Alerts.Subscribe(new Sink<DriftAlert<string>>(a =>
        {
            if (a.Transition.Kind == DriftTransitionKind.Cleared)
            {
                _open.TryRemove((a.Key, a.RuleIndex), out _);
            }
            else
            {
                _open[(a.Key, a.RuleIndex)] = a;
            }
        }));
    }

    /// <inheritdoc/>
    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;

    /// <inheritdoc/>
    public void Dispose()
    {
        _forecasts?.Dispose();
        _alerts?.Dispose();
    }

    /// <summary>A statistic for JSON: rounded when it is a number, null when it is undefined (NaN) or infinite.</summary>
    private static double? Rounded(double value, int digits) => double.IsFinite(value) ? Math.Round(value, digits) : null;

    private static (string Shop, string Item) Split(string key)
    {
        int slash = key.IndexOf('/', StringComparison.Ordinal);
        return (key[..slash], key[(slash + 1)..]);
    }

    private DateOnly Day(DateTimeOffset periodStart) => DateOnly.FromDateTime(TimeZoneInfo.ConvertTime(periodStart, zone).DateTime);

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
