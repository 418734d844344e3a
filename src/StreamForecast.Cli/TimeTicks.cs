using System.Globalization;

namespace StreamForecast.Cli;

/// <summary>
/// The x-axis ticks of a chart, in local (wall-clock) time of the chart's zone: a step chosen from a fixed ladder (1 h,
/// 2 h, 3 h, 6 h, 12 h, 1 day, 2 days, 1 week, 2 weeks, 1, 2, 3, 6 and 12 months) as the smallest that keeps the labels
/// from crowding, aligned to whole hours, midnights, Mondays or the first of a month. Labels are ISO 8601: yyyy-MM-dd,
/// with HH:mm for a tick that is not at midnight.
/// </summary>
internal static class TimeTicks
{
    /// <summary>A tick step: a fixed length, or a number of calendar months.</summary>
    internal readonly record struct Step(TimeSpan Length, int Months)
    {
        public override string ToString() => Months > 0 ? $"{Months} month(s)" : Length.ToString();
    }

    private static readonly Step[] s_ladder =
    [
        new(TimeSpan.FromHours(1), 0), new(TimeSpan.FromHours(2), 0), new(TimeSpan.FromHours(3), 0), new(TimeSpan.FromHours(6), 0),
        new(TimeSpan.FromHours(12), 0), new(TimeSpan.FromDays(1), 0), new(TimeSpan.FromDays(2), 0), new(TimeSpan.FromDays(7), 0),
        new(TimeSpan.FromDays(14), 0), new(default, 1), new(default, 2), new(default, 3), new(default, 6), new(default, 12),
    ];

    /// <summary>
    /// The smallest step of the ladder that gives at most <paramref name="maxTicks"/> ticks between
    /// <paramref name="first"/> and <paramref name="last"/> and is not shorter than one period.
    /// </summary>
    public static Step Choose(DateTime first, DateTime last, TimeSpan period, int maxTicks)
    {
        TimeSpan span = last - first;
        foreach (Step step in s_ladder)
        {
            TimeSpan length = step.Months > 0 ? TimeSpan.FromDays(30.44 * step.Months) : step.Length;
            if (length >= period && span.Ticks / length.Ticks + 1 <= maxTicks)
            {
                return step;
            }
        }

        int years = (int)Math.Ceiling(span.TotalDays / 365.25 / Math.Max(1, maxTicks - 1));
        return new Step(default, 12 * Math.Max(1, years));
    }

    /// <summary>The tick times from the first aligned one at or after <paramref name="first"/> to <paramref name="last"/>.</summary>
    public static List<DateTime> Positions(DateTime first, DateTime last, Step step)
    {
        var ticks = new List<DateTime>();
        DateTime t = Align(first, step);
        while (t < first)
        {
            t = Next(t, step);
        }

        while (t <= last)
        {
            ticks.Add(t);
            t = Next(t, step);
        }

        return ticks;
    }

    /// <summary>yyyy-MM-dd at midnight, yyyy-MM-dd HH:mm otherwise.</summary>
    public static string Label(DateTime tick) =>
        tick.TimeOfDay == TimeSpan.Zero
            ? tick.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)
            : tick.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture);

    /// <summary>The most labels that fit across <paramref name="widthPixels"/>: about 95 pixels a date, 135 a date and time.</summary>
    public static int MaxTicks(int widthPixels, bool intraday) => Math.Max(2, widthPixels / (intraday ? 135 : 95));

    private static DateTime Align(DateTime t, Step step)
    {
        if (step.Months > 0)
        {
            int month = (t.Month - 1) / step.Months * step.Months; // 3 months: Jan, Apr, Jul, Oct
            return new DateTime(t.Year, month + 1, 1, 0, 0, 0, DateTimeKind.Unspecified);
        }

        if (step.Length.TotalDays >= 7)
        {
            int sinceMonday = ((int)t.DayOfWeek + 6) % 7;
            return t.Date.AddDays(-sinceMonday);
        }

        if (step.Length.TotalDays >= 1)
        {
            return t.Date;
        }

        int hours = (int)step.Length.TotalHours;
        return t.Date.AddHours(t.Hour / hours * hours);
    }

    private static DateTime Next(DateTime t, Step step)
    {
        if (step.Months > 0)
        {
            return t.AddMonths(step.Months);
        }

        if (step.Length.TotalDays < 1)
        {
            // Hour steps restart at each midnight, so a 3-hour step shows 00, 03, 06 ... every day.
            DateTime next = t.Add(step.Length);
            return next.Date != t.Date ? next.Date : next;
        }

        return t.Add(step.Length);
    }
}
