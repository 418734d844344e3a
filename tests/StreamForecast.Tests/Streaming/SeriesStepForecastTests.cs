using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Streaming;

/// <summary><see cref="SeriesStep{TKey}.GetForecast"/>: the points the step publishes, readable at every horizon.</summary>
public sealed class SeriesStepForecastTests
{
    private static readonly PeriodCalendar s_days = PeriodCalendar.Daily(TimeZoneInfo.Utc);

    private sealed class LastUpdate : ISeriesSink<string>
    {
        public ForecastUpdate<string> Update { get; private set; }

        public void Forecast(in ForecastUpdate<string> update) => Update = update;

        public void Alert(in DriftAlert<string> alert)
        {
        }

        public void Fault(in SeriesFault<string> fault) => throw new InvalidOperationException(fault.Message);
    }

    [Fact]
    public void GetForecast_AfterEachPeriod_EqualsThePublishedNextAndHorizonPoints()
    {
        var options = new SeriesOptions(new HoltOptions(0.4, 0.2), s_days, horizon: 3, empiricalIntervals: new EmpiricalIntervalOptions(0.8, 12, 9), nonNegative: true);
        var step = new SeriesStep<string>("mill/bun", options);
        var sink = new LastUpdate();
        double[] totals = [12, 15, 11, 0, 9, 14, 13, 16, 12, 10, 11, 15, 17, 12, 14, 9, 13, 18, 16, 12, 11, 14, 15, 13, 12];
        for (int t = 0; t < totals.Length; t++)
        {
            step.Close(t, hasData: true, totals[t], sink);
            Assert.Equal(sink.Update.Next, step.GetForecast(1));
            Assert.Equal(sink.Update.AtHorizon, step.GetForecast(3));
            Assert.Equal(2, step.GetForecast(2).Horizon);
        }

        Assert.Equal(IntervalKind.Empirical, step.GetForecast(1).Kind); // 25 periods give the one-step window its 9 errors
    }

    [Theory]
    [InlineData(0)]
    [InlineData(4)]
    public void GetForecast_HorizonOutsideOneToTheOptionsHorizon_Throws(int horizon)
    {
        var step = new SeriesStep<string>("mill/bun", new SeriesOptions(new NaiveOptions(), s_days, horizon: 3));
        Assert.Throws<ArgumentOutOfRangeException>(() => step.GetForecast(horizon));
    }
}
