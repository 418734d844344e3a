using System.Globalization;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary>
/// Turns observations into one history per key: each event goes to its period by the engine's own
/// <see cref="PeriodCalendar.PeriodOf"/>, quantities are summed per period, and periods without events count as zero
/// (as the engine's <see cref="GapPolicy.Zero"/>). A repeated event id within a key is counted once. A period total
/// outside ±<see cref="NumericDomain.MaxMagnitude"/> is a data error naming the row that took it there.
/// </summary>
internal static class SeriesHistories
{
    public static List<KeyValuePair<string, double[]>> Build(CsvReadResult read, PeriodCalendar calendar, out long firstPeriod)
    {
        var sums = new Dictionary<string, SortedDictionary<long, double>>(StringComparer.Ordinal);
        var seen = new HashSet<(string, string)>();
        long first = long.MaxValue, last = long.MinValue;
        for (int i = 0; i < read.Rows.Count; i++)
        {
            Observation<string> row = read.Rows[i];
            if (row.EventId is not null && !seen.Add((row.Key, row.EventId)))
            {
                continue;
            }

            if (!calendar.TryPeriodOf(row.Timestamp, out long period))
            {
                throw new DataException($"{read.Path}, line {read.Lines[i]}: {row.Timestamp:O} ({row.Key}) is outside the range the calendar {calendar.Name} supports.");
            }

            if (!sums.TryGetValue(row.Key, out SortedDictionary<long, double>? perKey))
            {
                perKey = [];
                sums.Add(row.Key, perKey);
            }

            double total = perKey.GetValueOrDefault(period) + row.Quantity;
            if (!NumericDomain.Contains(total))
            {
                throw new DataException(
                    $"{read.Path}, line {read.Lines[i]}, {read.QuantityColumn}: this row takes the total of '{row.Key}' for the period starting " +
                    string.Create(CultureInfo.InvariantCulture, $"{calendar.StartOf(period):O} to {total:R}, outside ±{NumericDomain.MaxMagnitude:0.#e0} (NumericDomain.MaxMagnitude)."));
            }

            perKey[period] = total;
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
