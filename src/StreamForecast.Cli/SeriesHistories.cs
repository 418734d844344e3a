using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary>
/// Turns observations into one history per key: each event goes to its period by the engine's own
/// <see cref="PeriodCalendar.PeriodOf"/>, quantities are summed per period, and periods without events count as zero
/// (as the engine's <see cref="GapPolicy.Zero"/>). A repeated event id within a key is counted once.
/// </summary>
internal static class SeriesHistories
{
    public static List<KeyValuePair<string, double[]>> Build(IReadOnlyList<Observation<string>> rows, PeriodCalendar calendar, out long firstPeriod)
    {
        var sums = new Dictionary<string, SortedDictionary<long, double>>(StringComparer.Ordinal);
        var seen = new HashSet<(string, string)>();
        long first = long.MaxValue, last = long.MinValue;
        foreach (Observation<string> row in rows)
        {
            if (row.EventId is not null && !seen.Add((row.Key, row.EventId)))
            {
                continue;
            }

            if (!calendar.TryPeriodOf(row.Timestamp, out long period))
            {
                throw new DataException($"{row.Timestamp:O} ({row.Key}) is outside the range the calendar {calendar.Name} supports.");
            }

            if (!sums.TryGetValue(row.Key, out SortedDictionary<long, double>? perKey))
            {
                perKey = [];
                sums.Add(row.Key, perKey);
            }

            perKey[period] = perKey.GetValueOrDefault(period) + row.Quantity;
            first = Math.Min(first, period);
            last = Math.Max(last, period);
        }

        firstPeriod = first;
        var result = new List<KeyValuePair<string, double[]>>(sums.Count);
        foreach (var (key, perKey) in sums.OrderBy(kv => kv.Key, StringComparer.Ordinal))
        {
            long start = perKey.Keys.First();
            var history = new double[last - start + 1];
            foreach (var (period, sum) in perKey)
            {
                history[period - start] = sum;
            }

            result.Add(new(key, history));
        }

        return result;
    }
}
