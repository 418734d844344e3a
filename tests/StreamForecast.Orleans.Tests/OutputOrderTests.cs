using StreamForecast.Streaming;

namespace StreamForecast.Orleans.Tests;

/// <summary>The client's handling of bucket outputs that arrive out of order, twice, or never (no cluster needed).</summary>
public sealed class OutputOrderTests
{
    [Fact]
    public async Task OnOutputAsync_OutOfOrderRepeatedAndMissing_DeliversInNumberOrderOnceAndCountsTheGap()
    {
        var client = new ForecastClusterClient<string>(null!, new ForecastClusterOptions(bucketCount: 2), SnapshotKeyCodecs.Utf8String, TimeProvider.System, Timeout.InfiniteTimeSpan, null);
        var periods = new List<long>();
        using IDisposable subscription = client.Forecasts.Subscribe(new Sink(periods));
        ISeriesBucketObserver<string> observer = client;

        await observer.OnOutputAsync(Output(number: 2));
        await observer.OnOutputAsync(Output(number: 1));
        await observer.OnOutputAsync(Output(number: 3));
        await observer.OnOutputAsync(Output(number: 3));
        await observer.OnOutputAsync(Output(number: 5)); // 4 never comes
        await client.DisposeAsync(); // gives up the gap and completes the observables

        Assert.Equal([1, 2, 3, 5], periods);
        Assert.Equal(1, client.MissedOutputs);
        Assert.Equal(1, client.RepeatedOutputs);
    }

    private static BucketOutput<string> Output(long number)
    {
        var update = new ForecastUpdate<string>("dock-a", number, DateTimeOffset.UnixEpoch, 1, false, 1, 0, default, default, default, "naive", false);
        return new BucketOutput<string>(1, number, number, [update], [], []);
    }

    private sealed class Sink(List<long> periods) : IObserver<ForecastUpdate<string>>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<string> value)
        {
            lock (periods)
            {
                periods.Add(value.Period);
            }
        }
    }
}
