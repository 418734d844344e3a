using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Periods;

namespace StreamForecast.Tests.Periods;

public sealed class LatenessPolicyTests
{
    private static readonly PeriodCalendar s_berlinDays = PeriodCalendar.Daily(Zones.Berlin);

    private static long Day(int year, int month, int day) => new DateOnly(year, month, day).DayNumber - PeriodReference.EpochDayNumber;

    [Fact]
    public void Constructor_NegativeArguments_ThrowWithAllowedValues()
    {
        var lateness = Assert.Throws<ArgumentOutOfRangeException>(() => new LatenessPolicy(TimeSpan.FromTicks(-1)));
        Assert.Equal("allowedLateness", lateness.ParamName);
        Assert.Contains("zero or more", lateness.Message, StringComparison.Ordinal);
        var periods = Assert.Throws<ArgumentOutOfRangeException>(() => new LatenessPolicy(TimeSpan.Zero, -1));
        Assert.Equal("restatementPeriods", periods.ParamName);
        Assert.Contains("zero or more", periods.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Default_NoArguments_IsZeroLatenessWithoutRestatement()
    {
        LatenessPolicy policy = default;
        Assert.Equal(TimeSpan.Zero, policy.AllowedLateness);
        Assert.Equal(0, policy.RestatementPeriods);
        Assert.Equal(new LatenessPolicy(TimeSpan.Zero), policy);
    }

    [Fact]
    public void LastClosedPeriod_ZeroLateness_ClosesAPeriodWhenTheNextBegins()
    {
        var policy = new LatenessPolicy(TimeSpan.Zero);
        long day = Day(2026, 12, 2);
        Assert.Equal(day - 1, policy.LastClosedPeriod(s_berlinDays, s_berlinDays.StartOf(day)));
        Assert.Equal(day - 2, policy.LastClosedPeriod(s_berlinDays, s_berlinDays.StartOf(day).AddTicks(-1)));
    }

    [Fact]
    public void LastClosedPeriod_TwoHoursLateness_WaitsTwoHoursPastTheEnd()
    {
        var policy = new LatenessPolicy(TimeSpan.FromHours(2));
        Assert.Equal(Day(2026, 11, 30), policy.LastClosedPeriod(s_berlinDays, Dst.At(2026, 12, 2, 1, 59, 1)));
        Assert.Equal(Day(2026, 12, 1), policy.LastClosedPeriod(s_berlinDays, Dst.At(2026, 12, 2, 2, 0, 1)));
        Assert.Equal(Dst.Utc(2026, 12, 1, 23), policy.WatermarkOf(Dst.At(2026, 12, 2, 2, 0, 1)));
        Assert.Equal(TimeSpan.Zero, policy.WatermarkOf(Dst.At(2026, 12, 2, 2, 0, 1)).Offset);
    }

    [Fact]
    public void LastClosedPeriod_WatermarkOutsideCalendarRange_SaturatesWithoutThrowing()
    {
        var policy = new LatenessPolicy(TimeSpan.FromDays(1));
        Assert.Equal(s_berlinDays.MinPeriod - 1, policy.LastClosedPeriod(s_berlinDays, DateTimeOffset.MinValue));
        Assert.Equal(s_berlinDays.MaxPeriod, policy.LastClosedPeriod(s_berlinDays, DateTimeOffset.MaxValue));
        PeriodCalendar seconds = PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(1));
        Assert.Equal(seconds.MinPeriod - 1, new LatenessPolicy(TimeSpan.Zero).LastClosedPeriod(seconds, DateTimeOffset.MinValue));
        Assert.Equal(seconds.MaxPeriod, new LatenessPolicy(TimeSpan.Zero).LastClosedPeriod(seconds, DateTimeOffset.MaxValue));
        Assert.Equal(DateTimeOffset.MinValue, policy.WatermarkOf(DateTimeOffset.MinValue.AddHours(1)));
        Assert.Throws<ArgumentNullException>(() => policy.LastClosedPeriod(null!, DateTimeOffset.UnixEpoch));
    }

    [Property(MaxTest = 300)]
    public Property LastClosedPeriod_RandomTimes_IsTheLatestPeriodEndingAtOrBeforeTheWatermark() =>
        Prop.ForAll(
            PeriodReference.Ticks(new DateTime(1950, 1, 1).Ticks, new DateTime(2090, 1, 1).Ticks).ToArbitrary(),
            Gen.Choose(0, 10 * 24 * 60).ToArbitrary(),
            (maxTicks, latenessMinutes) =>
            {
                // The definition, checked directly: EndOf(last) ≤ watermark < EndOf(last + 1).
                var policy = new LatenessPolicy(TimeSpan.FromMinutes(latenessMinutes));
                var max = new DateTimeOffset(maxTicks, TimeSpan.Zero);
                DateTimeOffset watermark = max - policy.AllowedLateness;
                long last = policy.LastClosedPeriod(s_berlinDays, max);
                return (s_berlinDays.EndOf(last) <= watermark && watermark < s_berlinDays.EndOf(last + 1))
                    .Label($"max {max:O}, lateness {latenessMinutes} min → last closed {last}");
            });

    [Fact]
    public void Classify_PeriodsAroundLastClosed_SplitsIntoOnTimeLateAndTooLate()
    {
        var policy = new LatenessPolicy(TimeSpan.Zero, restatementPeriods: 2);
        Assert.Equal(EventTiming.OnTime, policy.Classify(101, 100));
        Assert.Equal(EventTiming.Late, policy.Classify(100, 100));
        Assert.Equal(EventTiming.Late, policy.Classify(99, 100));
        Assert.Equal(EventTiming.TooLate, policy.Classify(98, 100));
        Assert.Equal(99, policy.OldestRestatablePeriod(100));

        var noRestatement = new LatenessPolicy(TimeSpan.Zero);
        Assert.Equal(EventTiming.OnTime, noRestatement.Classify(101, 100));
        Assert.Equal(EventTiming.TooLate, noRestatement.Classify(100, 100));
        Assert.Equal(101, noRestatement.OldestRestatablePeriod(100));
    }

    [Fact]
    public void Classify_ExtremePeriodIndices_IsExact()
    {
        var wide = new LatenessPolicy(TimeSpan.Zero, int.MaxValue);
        Assert.Equal(EventTiming.TooLate, wide.Classify(long.MinValue, long.MaxValue));
        Assert.Equal(EventTiming.Late, wide.Classify(long.MaxValue - int.MaxValue + 1, long.MaxValue));
        Assert.Equal(EventTiming.TooLate, wide.Classify(long.MaxValue - int.MaxValue, long.MaxValue));
        Assert.Equal(EventTiming.OnTime, wide.Classify(long.MaxValue, long.MinValue));
        Assert.Equal(long.MinValue, wide.OldestRestatablePeriod(long.MinValue + 5));
        Assert.Equal(long.MaxValue, new LatenessPolicy(TimeSpan.Zero).OldestRestatablePeriod(long.MaxValue));
    }

    [Fact]
    public void Classify_EventTimes_UsesWatermarkAndCalendar()
    {
        // Watermark 2026-12-02 23:30 Berlin (max 2026-12-03 00:30, lateness 1 h): 2026-12-01 is the last closed day.
        var policy = new LatenessPolicy(TimeSpan.FromHours(1), restatementPeriods: 1);
        DateTimeOffset max = Dst.At(2026, 12, 3, 0, 30, 1);
        Assert.Equal(EventTiming.OnTime, policy.Classify(s_berlinDays, max, Dst.At(2026, 12, 2, 10, 0, 1)));
        Assert.Equal(EventTiming.OnTime, policy.Classify(s_berlinDays, max, Dst.At(2026, 12, 3, 0, 15, 1)));
        Assert.Equal(EventTiming.Late, policy.Classify(s_berlinDays, max, Dst.At(2026, 12, 1, 23, 59, 1)));
        Assert.Equal(EventTiming.TooLate, policy.Classify(s_berlinDays, max, Dst.At(2026, 11, 30, 12, 0, 1)));
        Assert.Throws<ArgumentOutOfRangeException>(() => policy.Classify(s_berlinDays, max, DateTimeOffset.MinValue));
    }

    [Fact]
    public void Classify_StreamOfEvents_MatchesPlainRecomputation()
    {
        // Batch reference: for each event, recompute which periods are closed by scanning every day's end against the
        // watermark (the obvious O(n) loop), then classify by counting closed days after the event's day.
        var rng = new Random(7);
        var policy = new LatenessPolicy(TimeSpan.FromHours(6), restatementPeriods: 3);
        DateTimeOffset max = DateTimeOffset.MinValue;
        var t0 = Dst.Utc(2026, 3, 1, 0);
        long firstDay = Day(2026, 2, 1);
        for (int i = 0; i < 400; i++)
        {
            DateTimeOffset eventTime = t0.AddHours(i * 1.5).AddHours(-rng.NextDouble() * 120);
            if (eventTime > max)
            {
                max = eventTime;
            }

            DateTimeOffset watermark = max - policy.AllowedLateness;
            long eventDay = s_berlinDays.PeriodOf(eventTime);
            int closedAtOrAfterEvent = 0;
            bool eventClosed = false;
            for (long d = firstDay; d < firstDay + 120; d++)
            {
                bool closed = s_berlinDays.EndOf(d) <= watermark;
                eventClosed |= closed && d == eventDay;
                closedAtOrAfterEvent += closed && d >= eventDay ? 1 : 0;
            }

            EventTiming expected = !eventClosed ? EventTiming.OnTime
                : closedAtOrAfterEvent <= policy.RestatementPeriods ? EventTiming.Late
                : EventTiming.TooLate;
            Assert.Equal(expected, policy.Classify(s_berlinDays, max, eventTime));
        }
    }

    [Fact]
    public void Classify_WarmCalls_DoNotAllocate()
    {
        var policy = new LatenessPolicy(TimeSpan.FromHours(1), 2);
        DateTimeOffset max = Dst.Utc(2026, 12, 3, 0);
        long sink = (long)policy.Classify(s_berlinDays, max, max.AddHours(-30));
        long before = GC.GetAllocatedBytesForCurrentThread();
        for (int i = 0; i < 10_000; i++)
        {
            sink += (long)policy.Classify(s_berlinDays, max, max.AddMinutes(-i));
            sink += policy.LastClosedPeriod(s_berlinDays, max.AddMinutes(i));
            sink += (long)policy.Classify(i, 5_000);
        }

        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);
        Assert.NotEqual(0, sink);
    }
}
