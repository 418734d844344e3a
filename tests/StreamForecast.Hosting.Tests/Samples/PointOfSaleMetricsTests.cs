using System.Diagnostics.Metrics;
using System.Net;
using System.Net.Http.Json;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Time.Testing;
using OpenTelemetry;
using OpenTelemetry.Metrics;
using StreamForecast.Samples.PointOfSale;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Samples;

/// <summary>The point-of-sale server's OpenTelemetry metrics, read back through OpenTelemetry's in-memory exporter.</summary>
/// <remarks>
/// Every engine in the process publishes instruments of the same names on a meter of the same name, and OpenTelemetry
/// merges same-named instruments into one metric (an observable counter reports the last engine it asked). So this
/// class runs alone, after the parallel tests, and each exported value is compared with the values of the engines
/// alive in the process, read one by one with a <see cref="MeterListener"/>: with no other engine alive (the normal
/// case) that is exactly this server's engine, whose values are also checked against its own counters.
/// </remarks>
[Collection(nameof(PointOfSaleMetricsTests))]
public sealed class PointOfSaleMetricsTests
{
    private static readonly DateTimeOffset s_now = new(2025, 10, 20, 12, 0, 0, TimeSpan.Zero);

    [Fact]
    public async Task Metrics_AfterSalesCloseADay_ExportTheEngineInstrumentsWithTheEngineCounts()
    {
        using var temp = new TempPath();
        var exported = new List<MetricSnapshot>();
        await using WebApplication app = PointOfSaleApp.Build(
            ["--StreamForecast:Checkpoints:File=" + temp.File("pos.db"), "--Logging:LogLevel:Default=Warning"],
            b =>
            {
                b.WebHost.UseTestServer();
                b.Services.AddSingleton<TimeProvider>(new FakeTimeProvider(s_now));
                b.Services.ConfigureOpenTelemetryMeterProvider(m => m.AddInMemoryExporter(exported));
            });
        await app.StartAsync();
        using HttpClient http = app.GetTestClient();

        // Two sales on the 19th, one on the 20th late enough to close the 19th, and a resent one (a duplicate).
        SaleEvent[] sales =
        [
            new("mill-lane", "rye-roll", s_now.AddDays(-1), 3, "a"),
            new("mill-lane", "rye-roll", s_now.AddDays(-1).AddHours(1), 4, "b"),
            new("mill-lane", "rye-roll", s_now.AddHours(-1), 5, "c"),
            new("mill-lane", "rye-roll", s_now.AddHours(-1), 5, "c"),
        ];
        foreach (SaleEvent sale in sales)
        {
            using HttpResponseMessage response = await http.PostAsJsonAsync("/sales", sale);
            Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
        }

        // GET /status is queued behind every sale taken, so the counters include them when it answers.
        await http.GetFromJsonAsync<ServerStatus>("/status");
        EngineCounters counters = app.Services.GetRequiredService<HostedForecastEngine<string>>().Engine.GetCounters();
        Assert.True(app.Services.GetRequiredService<MeterProvider>().ForceFlush(10_000));

        Dictionary<string, MetricSnapshot> last = [];
        foreach (MetricSnapshot metric in exported)
        {
            if (metric.MeterName == ForecastEngine<string>.MeterName)
            {
                last[metric.Name] = metric;
            }
        }

        Assert.Equal(
            [
                "streamforecast.active_series", "streamforecast.alerts_cleared", "streamforecast.alerts_raised", "streamforecast.dropped",
                "streamforecast.duplicates", "streamforecast.evictions", "streamforecast.late", "streamforecast.observations",
                "streamforecast.periods_closed", "streamforecast.periods_skipped", "streamforecast.queue_depth", "streamforecast.rejected",
                "streamforecast.restated",
            ],
            last.Keys.Order(StringComparer.Ordinal));
        Assert.Equal(3, counters.Observations);
        Assert.Equal(1, counters.Duplicates);
        Assert.Equal(1, counters.PeriodsClosed);
        ForecastEngine<string> engine = app.Services.GetRequiredService<HostedForecastEngine<string>>().Engine;
        foreach ((string name, long expected) in new (string, long)[]
        {
            ("streamforecast.observations", counters.Observations),
            ("streamforecast.duplicates", counters.Duplicates),
            ("streamforecast.periods_closed", counters.PeriodsClosed),
            ("streamforecast.rejected", 0),
            ("streamforecast.active_series", 1),
        })
        {
            Dictionary<object, long> live = LiveValues(name);
            Assert.Equal(expected, live[engine]);
            Assert.Contains(Sum(last[name]), live.Values);
        }

        Assert.Equal(MetricType.LongSum, last["streamforecast.observations"].MetricType);
        Assert.Equal(MetricType.LongSumNonMonotonic, last["streamforecast.active_series"].MetricType);

        await app.StopAsync();
    }

    // The current value of one instrument on every live engine, by engine (the meter's scope).
    private static Dictionary<object, long> LiveValues(string instrumentName)
    {
        var values = new Dictionary<object, long>(ReferenceEqualityComparer.Instance);
        using var listener = new MeterListener
        {
            InstrumentPublished = (instrument, l) =>
            {
                if (instrument.Meter.Name == ForecastEngine<string>.MeterName && instrument.Name == instrumentName && instrument.Meter.Scope is not null)
                {
                    l.EnableMeasurementEvents(instrument);
                }
            },
        };
        listener.SetMeasurementEventCallback<long>((instrument, value, _, _) => values[instrument.Meter.Scope!] = value);
        listener.Start();
        listener.RecordObservableInstruments();
        return values;
    }

    private static long Sum(MetricSnapshot metric)
    {
        long sum = 0;
        foreach (MetricPoint point in metric.MetricPoints)
        {
            sum += point.GetSumLong();
        }

        return sum;
    }
}

/// <summary>Runs <see cref="PointOfSaleMetricsTests"/> after the parallel tests, alone.</summary>
[CollectionDefinition(nameof(PointOfSaleMetricsTests), DisableParallelization = true)]
public sealed class PointOfSaleMetricsCollection;
