using Microsoft.Extensions.DependencyInjection;
using Orleans.Serialization;
using StreamForecast.Alerts;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans.Tests;

public sealed class WireFormatTests
{
    private static readonly Serializer Serializer = new ServiceCollection().AddSerializer().BuildServiceProvider().GetRequiredService<Serializer>();

    private static T RoundTrip<T>(T value) => Serializer.Deserialize<T>(Serializer.SerializeToArray(value))!;

    [Fact]
    public void ForecastUpdate_RoundTrip_EqualsOriginal()
    {
        var errors = new ErrorSummary(12, -3.5, 2.25, 2.1, 7.5, -0.29, double.NaN, 0.8, -1.55, 0.4, 2.8);
        var update = new ForecastUpdate<string>(
            "north/rye", 41, new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.FromHours(1)), 17, false, 15.5, 1.5,
            new ForecastPoint(1, 16, 12.1, 19.9, StreamForecast.Tracking.IntervalKind.Normal, 0.8), new ForecastPoint(4, 16, 9.2, 22.8, StreamForecast.Tracking.IntervalKind.Empirical, 0.8), errors, "MA(4)", true);

        Assert.Equal(update, RoundTrip(update));
    }

    [Fact]
    public void DriftAlert_RoundTrip_EqualsOriginal()
    {
        var transition = new DriftTransition(DriftTransitionKind.Raised, DriftRuleKind.Cusum, 3, DriftDirection.UnderForecast, DriftSeverity.Warning, 5.2, 5, 30, DriftCloseReason.None);
        var alert = new DriftAlert<long>(77, 9, DateTimeOffset.UnixEpoch, 1, "CUSUM(k=0.5,h=5)", transition, default);

        Assert.Equal(alert, RoundTrip(alert));
    }

    [Fact]
    public void ObservationAndFault_RoundTrip_EqualOriginals()
    {
        var observation = new Observation<string>("dock-a", DateTimeOffset.UnixEpoch.AddHours(3), 12.5, "evt-9");
        var fault = new SeriesFault<string>("dock-a", 4, SeriesFaultKind.ActualRejected, "negative");

        Assert.Equal(observation, RoundTrip(observation));
        Assert.Equal(fault, RoundTrip(fault));
    }

    [Fact]
    public void KnownEventsLiftAndMarkedUpdate_RoundTrip_EqualOriginals()
    {
        var start = new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.FromHours(1));
        KnownEvent<string>[] events =
        [
            KnownEvent.ForSeries("north/rye", EventKind.Promotion, start, start.AddDays(7)),
            KnownEvent.ForGroup<string>("north", EventKind.Named("street market"), start, start.AddHours(5), keepOutOfModel: false),
            KnownEvent.ForAllSeries<string>(EventKind.Closure, start.AddDays(1), start.AddDays(2)),
        ];
        var lift = new EventLift(EventKind.Named("street market"), 5, 120.5, 80.25);
        var receipt = new KnownEventReceipt(3, 4, 5);
        var update = new ForecastUpdate<string>(
            "north/rye", 41, start, 17, false, 15.5, 1.5, new ForecastPoint(1, 16, 12.1, 19.9), new ForecastPoint(1, 16, 12.1, 19.9), default, "MA(4)", false)
        { Event = EventKind.Named("street market") };

        foreach (KnownEvent<string> e in events)
        {
            Assert.Equal(e, RoundTrip(e));
        }

        Assert.Equal(lift, RoundTrip(lift));
        Assert.Equal(receipt, RoundTrip(receipt));
        Assert.Equal(update, RoundTrip(update));
        Assert.Equal("street market", RoundTrip(update).Event!.Name);
    }
}
