using System.Globalization;
using System.Text.RegularExpressions;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Periods;

namespace StreamForecast.Tests.Periods;

/// <summary>
/// What every period calendar guarantees. Each calendar kind and zone under test inherits this suite and supplies the
/// calendar; the properties run on random instants across the whole supported range, densely over 1900–2100, and
/// within 36 hours of the zone's clock changes.
/// </summary>
public abstract class PeriodCalendarContractTests
{
    private static readonly long s_denseFrom = new DateTime(1900, 1, 1).Ticks;
    private static readonly long s_denseTo = new DateTime(2100, 1, 1).Ticks;
    private PeriodCalendar? _calendar;

    /// <summary>Creates a new instance of the calendar under test (each call a fresh object with an empty cache).</summary>
    protected abstract PeriodCalendar CreateCalendar();

    /// <summary>The calendar under test, created once per test.</summary>
    protected PeriodCalendar Calendar => _calendar ??= CreateCalendar();

    private Gen<DateTimeOffset> Instants
    {
        get
        {
            PeriodCalendar calendar = Calendar;
            long from = calendar.SupportedStart.UtcTicks;
            long to = calendar.SupportedEnd.UtcTicks;
            var choices = new List<(int, Gen<long>)>
            {
                (1, PeriodReference.Ticks(from, to)),
                (2, PeriodReference.Ticks(s_denseFrom, s_denseTo)),
                (1, DensePeriods.Zip(Gen.Choose(-2, 2), (p, d) => calendar.StartOf(p).UtcTicks + d)),
            };
            long[] transitions = calendar.Kind == PeriodKind.FixedInterval ? [] : PeriodReference.TransitionsNear(calendar.Zone);
            if (transitions.Length > 0)
            {
                long window = 36 * TimeSpan.TicksPerHour;
                choices.Add((3, Gen.Elements(transitions).SelectMany(t => PeriodReference.Ticks(t - window, t + window))));
            }

            return Gen.Frequency([.. choices]).Zip(Gen.Choose(-14 * 60, 14 * 60), WrittenWithOffset);
        }
    }

    private Gen<long> DensePeriods
    {
        get
        {
            PeriodCalendar calendar = Calendar;
            return PeriodReference.Whole(
                calendar.PeriodOf(new DateTimeOffset(s_denseFrom, TimeSpan.Zero)),
                calendar.PeriodOf(new DateTimeOffset(s_denseTo, TimeSpan.Zero)));
        }
    }

    private Gen<long> Periods => Gen.Frequency(
        (1, PeriodReference.Whole(Calendar.MinPeriod, Calendar.MaxPeriod)),
        (3, DensePeriods));

    /// <summary>The instant <paramref name="utcTicks"/> written with an offset of <paramref name="minutes"/> where representable.</summary>
    private static DateTimeOffset WrittenWithOffset(long utcTicks, int minutes)
    {
        long local = utcTicks + (minutes * TimeSpan.TicksPerMinute);
        return local >= 0 && local <= DateTime.MaxValue.Ticks
            ? new DateTimeOffset(local, TimeSpan.FromMinutes(minutes))
            : new DateTimeOffset(utcTicks, TimeSpan.Zero);
    }

    [Property(MaxTest = 400)]
    public Property PeriodOf_RandomInstant_LiesInsideItsPeriod() =>
        Prop.ForAll(Instants.ToArbitrary(), x =>
        {
            long p = Calendar.PeriodOf(x);
            bool tried = Calendar.TryPeriodOf(x, out long q);
            return (tried && p == q && Calendar.StartOf(p) <= x && x < Calendar.EndOf(p))
                .Label($"{x:O} → {p} [{Calendar.StartOf(p):O}, {Calendar.EndOf(p):O}), Try → {tried} {q}");
        });

    [Property(MaxTest = 300)]
    public Property PeriodOf_StartOfRandomPeriod_ReturnsThatPeriod() =>
        Prop.ForAll(Periods.ToArbitrary(), p =>
        {
            DateTimeOffset start = Calendar.StartOf(p);
            DateTimeOffset end = Calendar.EndOf(p);
            return (start < end && Calendar.PeriodOf(start) == p && Calendar.PeriodOf(end.AddTicks(-1)) == p)
                .Label($"{p}: [{start:O}, {end:O}) → {Calendar.PeriodOf(start)}, {Calendar.PeriodOf(end.AddTicks(-1))}");
        });

    [Property(MaxTest = 300)]
    public Property EndOf_RandomPeriod_IsStartOfNextPeriod() =>
        Prop.ForAll(Periods.ToArbitrary(), p =>
        {
            long q = Math.Min(p, Calendar.MaxPeriod - 1);
            return (Calendar.EndOf(q) == Calendar.StartOf(q + 1) && Calendar.EndOf(q).UtcTicks == Calendar.StartOf(q + 1).UtcTicks)
                .Label($"{q}: end {Calendar.EndOf(q):O}, next start {Calendar.StartOf(q + 1):O}");
        });

    [Property(MaxTest = 400)]
    public Property PeriodOf_OrderedInstants_IsMonotonic() =>
        Prop.ForAll(Instants.ToArbitrary(), Instants.ToArbitrary(), Gen.Choose(0, 3 * 24 * 60).ToArbitrary(), (a, b, minutes) =>
        {
            DateTimeOffset x = a <= b ? a : b;
            DateTimeOffset y = a <= b ? b : a;
            long nearTicks = Math.Min(x.UtcTicks + (minutes * TimeSpan.TicksPerMinute), Calendar.SupportedEnd.UtcTicks - 1);
            var near = new DateTimeOffset(nearTicks, TimeSpan.Zero);
            return (Calendar.PeriodOf(x) <= Calendar.PeriodOf(y) && Calendar.PeriodOf(x) <= Calendar.PeriodOf(near))
                .Label($"{x:O} → {Calendar.PeriodOf(x)}, {y:O} → {Calendar.PeriodOf(y)}, {near:O} → {Calendar.PeriodOf(near)}");
        });

    [Fact]
    public void PeriodOf_WalkInStepsShorterThanAnyPeriod_AdvancesOneAtATimeAtPeriodEnds()
    {
        // Steps of a third of the nominal length are shorter than any period of the tested zones (23 h days, 167 h weeks).
        long step = Calendar.NominalLength.Ticks / 3;
        var x = new DateTimeOffset(2025, 12, 1, 0, 0, 0, TimeSpan.Zero);
        long previous = Calendar.PeriodOf(x);
        for (int i = 0; i < 3000; i++)
        {
            x = x.AddTicks(step);
            long p = Calendar.PeriodOf(x);
            Assert.True(p == previous || p == previous + 1, $"{x:O}: {previous} → {p}");
            Assert.Equal(p != previous, x >= Calendar.EndOf(previous));
            previous = p;
        }
    }

    [Fact]
    public void PeriodOf_WarmLookupsInAndAcrossPeriods_DoNotAllocate()
    {
        PeriodCalendar calendar = CreateCalendar();
        long step = calendar.NominalLength.Ticks / 5;
        var start = new DateTimeOffset(2026, 1, 1, 0, 0, 0, TimeSpan.Zero);
        long sink = Walk(calendar, start, step, 20_000); // JIT every path and warm the zone's own caches over the same years first
        long before = GC.GetAllocatedBytesForCurrentThread();
        sink += Walk(calendar, start, step, 20_000);
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.NotEqual(0, sink);
        Assert.Equal(0, allocated);

        static long Walk(PeriodCalendar calendar, DateTimeOffset start, long step, int count)
        {
            long sum = 0;
            for (int i = 0; i < count; i++)
            {
                // Forward through time, and every fourth lookup back a few periods, so both cache hits and misses occur.
                DateTimeOffset x = start.AddTicks(step * (i % 4 == 3 ? i - 40 : i));
                sum += calendar.PeriodOf(x);
                sum += calendar.TryPeriodOf(x, out long p) ? p : 0;
                sum += calendar.StartOf(p).UtcTicks & 1;
                sum += calendar.EndOf(p).UtcTicks & 1;
            }

            return sum;
        }
    }

    [Fact]
    public void PeriodOf_SupportedRangeEdges_MapToFirstAndLastPeriod()
    {
        Assert.Equal(Calendar.MinPeriod, Calendar.PeriodOf(Calendar.SupportedStart));
        Assert.Equal(Calendar.MaxPeriod, Calendar.PeriodOf(Calendar.SupportedEnd.AddTicks(-1)));
        Assert.Equal(Calendar.SupportedStart, Calendar.StartOf(Calendar.MinPeriod));
        Assert.Equal(Calendar.SupportedEnd, Calendar.EndOf(Calendar.MaxPeriod));
    }

    [Fact]
    public void PeriodOf_OutsideSupportedRange_ThrowsWithTheRange()
    {
        var outside = new List<DateTimeOffset> { Calendar.SupportedEnd, DateTimeOffset.MaxValue };
        if (Calendar.SupportedStart > DateTimeOffset.MinValue)
        {
            outside.Add(Calendar.SupportedStart.AddTicks(-1));
            outside.Add(DateTimeOffset.MinValue);
        }

        foreach (DateTimeOffset x in outside)
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => Calendar.PeriodOf(x));
            Assert.Equal("instant", ex.ParamName);
            Assert.Contains("up to (not including)", ex.Message, StringComparison.Ordinal);
            Assert.Contains(Calendar.Name, ex.Message, StringComparison.Ordinal);
            Assert.False(Calendar.TryPeriodOf(x, out long none));
            Assert.Equal(0, none);
        }
    }

    [Fact]
    public void StartOfAndEndOf_PeriodOutsideSupportedRange_Throw()
    {
        foreach (long p in new[] { Calendar.MinPeriod - 1, Calendar.MaxPeriod + 1, long.MinValue, long.MaxValue })
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => Calendar.StartOf(p));
            Assert.Contains("supports periods", ex.Message, StringComparison.Ordinal);
            Assert.Throws<ArgumentOutOfRangeException>(() => Calendar.EndOf(p));
            Assert.Throws<ArgumentOutOfRangeException>(() => Calendar.LabelOf(p));
        }
    }

    [Fact]
    public void PeriodOf_ConcurrentLookupsOnOneCalendar_MatchSequentialResults()
    {
        // Instants spread over 2026 so that threads keep replacing each other's cached period.
        var rng = new Random(2026);
        var instants = new DateTimeOffset[97];
        var expected = new long[instants.Length];
        PeriodCalendar reference = CreateCalendar();
        var start = new DateTimeOffset(2026, 1, 1, 0, 0, 0, TimeSpan.Zero);
        for (int i = 0; i < instants.Length; i++)
        {
            instants[i] = start.AddTicks((long)(rng.NextDouble() * 40 * Calendar.NominalLength.Ticks));
            expected[i] = reference.PeriodOf(instants[i]);
        }

        PeriodCalendar shared = CreateCalendar();
        int mismatches = 0;
        using var ready = new Barrier(4);
        Thread[] workers = [.. Enumerable.Range(0, 4).Select(w => new Thread(() =>
        {
            ready.SignalAndWait();
            for (int i = 0; i < 20_000; i++)
            {
                int k = ((i * 31) + (w * 17)) % instants.Length;
                if (shared.PeriodOf(instants[k]) != expected[k])
                {
                    Interlocked.Increment(ref mismatches);
                }
            }
        }))];
        foreach (Thread worker in workers)
        {
            worker.Start();
        }

        foreach (Thread worker in workers)
        {
            worker.Join();
        }

        Assert.Equal(0, mismatches);
    }

    [Fact]
    public void LabelOf_RandomPeriods_AgreesWithBoundsAndIsoWeekOracle()
    {
        var rng = new Random(49);
        long first = Calendar.PeriodOf(new DateTimeOffset(1950, 1, 1, 0, 0, 0, TimeSpan.Zero));
        long last = Calendar.PeriodOf(new DateTimeOffset(2080, 1, 1, 0, 0, 0, TimeSpan.Zero));
        string pattern = Calendar.Kind switch
        {
            PeriodKind.Daily => @"^\d{4}-\d{2}-\d{2}$",
            PeriodKind.IsoWeekly => @"^\d{4}-W\d{2}$",
            _ => @"^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z$",
        };
        for (int i = 0; i < 200; i++)
        {
            long p = first + (long)(rng.NextDouble() * (last - first));
            PeriodLabel label = Calendar.LabelOf(p);
            Assert.Equal(p, label.Period);
            Assert.Equal(Calendar.Kind, label.Kind);
            Assert.Equal(Calendar.StartOf(p), label.Start);
            Assert.Equal(Calendar.EndOf(p), label.End);
            Assert.Equal(label.End - label.Start, label.Length);
            // System.Globalization.ISOWeek as the oracle for the week numbering.
            DateTime day = label.Date.ToDateTime(TimeOnly.MinValue);
            Assert.Equal(ISOWeek.GetYear(day), label.IsoWeekYear);
            Assert.Equal(ISOWeek.GetWeekOfYear(day), label.IsoWeek);
            Assert.Matches(new Regex(pattern, RegexOptions.CultureInvariant, TimeSpan.FromSeconds(1)), label.ToString());
        }
    }

    [Fact]
    public void Name_AnyCalendar_IsDescriptiveAndIsToString()
    {
        Assert.False(string.IsNullOrWhiteSpace(Calendar.Name));
        Assert.Equal(Calendar.Name, Calendar.ToString());
        Assert.Equal(Calendar, CreateCalendar());
        Assert.Equal(Calendar.GetHashCode(), CreateCalendar().GetHashCode());
    }
}
