namespace StreamForecast.Streaming;

/// <summary>
/// The known-event section of a snapshot (format version 3, <see cref="SnapshotFormat.EventsVersion"/>): the events
/// declared at run time and the lift sums of every series that has any. Written only when there is such state, so an
/// engine without known events writes exactly the version 2 bytes. Layout (through <see cref="SnapshotPayloadWriter"/>):
///   declared count, then per event: scope (byte: 0 series, 1 group, 2 all), kind name, start UTC ticks, start offset
///   minutes (int32), end UTC ticks, end offset minutes, keep-out flag, then the key (series) or group name (group);
///   series count, then per series: key, the live step's lift list, a flag for the lagged step's, and that list;
///   a lift list is a count, then (kind name, periods, actual total, forecast total) per kind.
/// </summary>
internal static class SnapshotEvents
{
    /// <summary>What one partition holds, copied on its loop so the snapshot is consistent.</summary>
    internal sealed class Part<TKey>
        where TKey : notnull
    {
        public List<KnownEvent<TKey>> Declared { get; } = [];

        public List<(TKey Key, EventLift[] Live, EventLift[]? Lag)> Lifts { get; } = [];

        /// <summary>Copies a table's declared events (group and all-series events only from the first partition: every partition holds them) and lifts.</summary>
        public void Capture(SeriesSet<TKey> table, bool first)
        {
            foreach (KnownEvent<TKey> e in table.Declared)
            {
                if (first || e.Scope == EventScope.Series)
                {
                    Declared.Add(e);
                }
            }

            foreach (SeriesState<TKey> s in table.Series)
            {
                EventLift[] live = s.Step.GetEventLift();
                EventLift[]? lag = s.LagStep?.GetEventLift();
                if (live.Length > 0 || lag is { Length: > 0 })
                {
                    Lifts.Add((s.Key, live, lag));
                }
            }
        }
    }

    /// <summary>The section's bytes for the parts, or null when they hold nothing (the snapshot stays version 2).</summary>
    public static byte[]? Write<TKey>(IReadOnlyList<Part<TKey>> parts, ISnapshotKeyCodec<TKey> codec)
        where TKey : notnull
    {
        int declared = 0, lifts = 0;
        foreach (Part<TKey> p in parts)
        {
            declared += p.Declared.Count;
            lifts += p.Lifts.Count;
        }

        if (declared == 0 && lifts == 0)
        {
            return null;
        }

        var w = new SnapshotPayloadWriter();
        w.WriteInt32(declared);
        foreach (Part<TKey> p in parts)
        {
            foreach (KnownEvent<TKey> e in p.Declared)
            {
                w.WriteByte(e.Scope switch { EventScope.Series => 0, EventScope.Group => 1, _ => 2 });
                w.WriteString(e.Kind.Name);
                w.WriteInt64(e.Start.UtcTicks);
                w.WriteInt32((int)e.Start.Offset.TotalMinutes);
                w.WriteInt64(e.End.UtcTicks);
                w.WriteInt32((int)e.End.Offset.TotalMinutes);
                w.WriteBoolean(e.KeepOutOfModel);
                if (e.Scope == EventScope.Series)
                {
                    w.WriteKey(codec, e.Key!);
                }
                else if (e.Scope == EventScope.Group)
                {
                    w.WriteString(e.Group!);
                }
            }
        }

        w.WriteInt32(lifts);
        foreach (Part<TKey> p in parts)
        {
            foreach ((TKey key, EventLift[] live, EventLift[]? lag) in p.Lifts)
            {
                w.WriteKey(codec, key);
                WriteLifts(w, live);
                w.WriteBoolean(lag is not null);
                if (lag is not null)
                {
                    WriteLifts(w, lag);
                }
            }
        }

        return w.WrittenMemory.ToArray();
    }

    /// <summary>What the section holds, read and checked before the series are (their marks depend on the declared events).</summary>
    internal sealed class Content<TKey>
        where TKey : notnull
    {
        public List<KnownEvent<TKey>> Declared { get; } = [];

        public List<(TKey Key, EventLiftSums? Live, bool HasLag, EventLiftSums? Lag)> Lifts { get; } = [];

        /// <summary>Gives each restored series its lift sums.</summary>
        /// <exception cref="InvalidDataException">A lift names a series the snapshot does not hold, twice, or does not fit its restatement window.</exception>
        public void ApplyLifts(List<SeriesState<TKey>> series, IEqualityComparer<TKey> comparer)
        {
            var byKey = new Dictionary<TKey, SeriesState<TKey>>(comparer);
            foreach (SeriesState<TKey> s in series)
            {
                byKey.TryAdd(s.Key, s);
            }

            foreach ((TKey key, EventLiftSums? live, bool hasLag, EventLiftSums? lag) in Lifts)
            {
                if (!byKey.Remove(key, out SeriesState<TKey>? state))
                {
                    throw new InvalidDataException($"The snapshot's event lift names series {key}, which it does not hold (or names it twice).");
                }

                if (hasLag != (state.LagStep is not null))
                {
                    throw new InvalidDataException($"The snapshot's event lift of series {key} does not fit its restatement window.");
                }

                state.Step.SetLift(live);
                state.LagStep?.SetLift(lag);
            }
        }
    }

    /// <summary>Reads and checks the section.</summary>
    /// <exception cref="InvalidDataException">The section is malformed.</exception>
    public static Content<TKey> Read<TKey>(ReadOnlyMemory<byte> bytes, ISnapshotKeyCodec<TKey> codec)
        where TKey : notnull
    {
        var content = new Content<TKey>();
        var r = new SnapshotPayloadReader(bytes);
        int count = r.ReadInt32();
        if (count < 0 || count > r.Remaining)
        {
            throw new InvalidDataException("The snapshot holds an impossible number of declared events.");
        }

        for (int i = 0; i < count; i++)
        {
            byte scope = r.ReadByte();
            EventKind kind = ReadKind(r);
            DateTimeOffset start = ReadTime(r);
            DateTimeOffset end = ReadTime(r);
            bool keepOut = r.ReadBoolean();
            content.Declared.Add(scope switch
            {
                0 => KnownEvent.ForSeries(r.ReadKey(codec), kind, start, end, keepOut),
                1 => KnownEvent.ForGroup<TKey>(r.ReadString(), kind, start, end, keepOut),
                2 => KnownEvent.ForAllSeries<TKey>(kind, start, end, keepOut),
                _ => throw new InvalidDataException($"The snapshot holds a declared event of unknown scope {scope}."),
            });
        }

        int lifts = r.ReadInt32();
        if (lifts < 0 || lifts > r.Remaining)
        {
            throw new InvalidDataException("The snapshot holds an impossible number of series with event lift.");
        }

        for (int i = 0; i < lifts; i++)
        {
            TKey key = r.ReadKey(codec);
            EventLiftSums? live = ReadLifts(r);
            bool hasLag = r.ReadBoolean();
            content.Lifts.Add((key, live, hasLag, hasLag ? ReadLifts(r) : null));
        }

        r.EnsureAtEnd();
        return content;
    }

    private static void WriteLifts(SnapshotPayloadWriter w, EventLift[] lifts)
    {
        w.WriteInt32(lifts.Length);
        foreach (EventLift l in lifts)
        {
            w.WriteString(l.Kind.Name);
            w.WriteInt64(l.Periods);
            w.WriteDouble(l.ActualTotal);
            w.WriteDouble(l.ForecastTotal);
        }
    }

    private static EventLiftSums? ReadLifts(SnapshotPayloadReader r)
    {
        int n = r.ReadInt32();
        if (n < 0 || n > r.Remaining)
        {
            throw new InvalidDataException("The snapshot holds an impossible number of event kinds.");
        }

        if (n == 0)
        {
            return null;
        }

        var sums = new EventLiftSums();
        for (int i = 0; i < n; i++)
        {
            EventKind kind = ReadKind(r);
            long periods = r.ReadInt64();
            double actual = r.ReadDouble();
            double forecast = r.ReadDouble();
            if (periods < 1 || !double.IsFinite(actual) || !double.IsFinite(forecast))
            {
                throw new InvalidDataException($"The snapshot holds an impossible event lift for kind '{kind.Name}'.");
            }

            for (int j = 0; j < sums.Count; j++)
            {
                if (sums[j].Kind.Equals(kind))
                {
                    throw new InvalidDataException($"The snapshot holds the event lift of kind '{kind.Name}' twice for one series.");
                }
            }

            sums.Append(new EventLift(kind, periods, actual, forecast));
        }

        return sums;
    }

    private static EventKind ReadKind(SnapshotPayloadReader r)
    {
        string name = r.ReadString();
        if (EventKind.Problem(name) is { } problem)
        {
            throw new InvalidDataException("The snapshot holds an invalid event kind: " + problem);
        }

        return EventKind.Named(name);
    }

    private static DateTimeOffset ReadTime(SnapshotPayloadReader r)
    {
        long ticks = r.ReadInt64();
        int offset = r.ReadInt32();
        if (ticks < DateTimeOffset.MinValue.UtcTicks || ticks > DateTimeOffset.MaxValue.UtcTicks || offset is < -14 * 60 or > 14 * 60)
        {
            throw new InvalidDataException("The snapshot holds an impossible event time.");
        }

        try
        {
            return new DateTimeOffset(ticks, TimeSpan.Zero).ToOffset(TimeSpan.FromMinutes(offset));
        }
        catch (ArgumentOutOfRangeException ex)
        {
            throw new InvalidDataException("The snapshot holds an impossible event time.", ex);
        }
    }
}
