using System.Globalization;

namespace StreamForecast.Periods;

/// <summary>Fixed intervals of elapsed time aligned to the Unix epoch. Create through <see cref="PeriodCalendar.FixedInterval"/>.</summary>
/// <remarks>Pure integer arithmetic on UTC ticks; immutable and thread-safe.</remarks>
internal sealed class FixedIntervalCalendar : PeriodCalendar
{
    private readonly long _lengthTicks;

    public FixedIntervalCalendar(TimeSpan length)
        : base(PeriodKind.FixedInterval, TimeZoneInfo.Utc, 0, length,
            string.Create(CultureInfo.InvariantCulture, $"FixedInterval({length:c})"))
    {
        _lengthTicks = length.Ticks;

        // The length divides a day, and both DateTime.MinValue and the tick after DateTime.MaxValue are UTC midnights,
        // so both ends of the range fall on interval bounds. The last interval ends one tick past DateTime.MaxValue,
        // which cannot be represented, so it is left out.
        long first = -((PeriodMath.UnixEpochTicks - DateTime.MinValue.Ticks) / _lengthTicks);
        long pastLast = (DateTime.MaxValue.Ticks + 1 - PeriodMath.UnixEpochTicks) / _lengthTicks;
        SetRange(first, pastLast - 2);
    }

    private protected override long PeriodOfCore(long utcTicks) =>
        PeriodMath.FloorDiv(utcTicks - PeriodMath.UnixEpochTicks, _lengthTicks);

    private protected override DateTimeOffset StartOfCore(long period) =>
        new(PeriodMath.UnixEpochTicks + (period * _lengthTicks), TimeSpan.Zero);

    private protected override DateOnly DateOfCore(long period) =>
        DateOnly.FromDateTime(new DateTime(PeriodMath.UnixEpochTicks + (period * _lengthTicks), DateTimeKind.Utc));
}
