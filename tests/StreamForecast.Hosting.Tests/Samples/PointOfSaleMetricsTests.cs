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
/// merges same-named instruments into one metric; so this class runs alone (no other test's engine is running), and
/// the exported values are compared with this server's own engine counters.
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
        Assert.Equal(counters.Observations, Sum(last["streamforecast.observations"]));
        Assert.Equal(counters.Duplicates, Sum(last["streamforecast.duplicates"]));
        Assert.Equal(counters.PeriodsClosed, Sum(last["streamforecast.periods_closed"]));
        Assert.Equal(0, Sum(last["streamforecast.rejected"]));
        Assert.Equal(1, Sum(last["streamforecast.active_series"]));
        Assert.Equal(MetricType.LongSum, last["streamforecast.observations"].MetricType);
        Assert.Equal(MetricType.LongSumNonMonotonic, last["streamforecast.active_series"].MetricType);

        await app.StopAsync();
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
