using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <content>Restoring the remembered event ids of a series, with their checks.</content>
internal sealed partial class SeriesState<TKey>
{
    private void ReadEventIds(SnapshotPayloadReader reader, long latest)
    {
        int ids = reader.ReadInt32();
        if (ids < 0 || ids > Options.DuplicateWindow)
        {
            throw Invalid(Invariant($"it remembers {ids} event ids; the duplicate window for this key holds at most {Options.DuplicateWindow}"));
        }

        if (!_started && ids != 0)
        {
            throw Invalid("it has seen no event, yet it remembers event ids");
        }

        if (ids == 0)
        {
            return;
        }

        var window = new EventIdWindow(Options.DuplicateWindow);
        (_extras ??= new Extras()).Ids = window;
        long min = Options.Calendar.MinPeriod;
        for (int i = 0; i < ids; i++)
        {
            string id = reader.ReadString();
            long period = reader.ReadInt64();
            if (period < min || period > latest)
            {
                throw Invalid(Invariant($"event id '{id}' belongs to period {period}, outside the calendar's periods up to the latest event's period {latest}"));
            }

            if (!window.TryAdd(id, period))
            {
                throw Invalid(Invariant($"it remembers event id '{id}' twice"));
            }
        }
    }
}
