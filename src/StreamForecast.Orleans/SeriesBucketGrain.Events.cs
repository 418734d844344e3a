using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <content>Known events declared at run time: applied through the series set, stored with the bucket's series.</content>
internal sealed partial class SeriesBucketGrain<TKey>
{
    public Task<KnownEventReceipt> DeclareEventAsync(Guid callId, KnownEvent<TKey> knownEvent) =>
        ApplyEventAsync(callId, knownEvent, withdraw: false);

    public Task<KnownEventReceipt> WithdrawEventAsync(Guid callId, KnownEvent<TKey> knownEvent) =>
        ApplyEventAsync(callId, knownEvent, withdraw: true);

    public Task<EventLift[]> GetEventLiftAsync()
    {
        ThrowIfBroken();
        return Task.FromResult(_table.GetEventLift());
    }

    private async Task<KnownEventReceipt> ApplyEventAsync(Guid callId, KnownEvent<TKey> knownEvent, bool withdraw)
    {
        ArgumentNullException.ThrowIfNull(knownEvent);
        ThrowIfBroken();
        if (!_calls.Contains(callId))
        {
            // Refused before anything changes: an exception inside the apply step is taken for a defect and drops the state.
            if (knownEvent.Scope == EventScope.Series && _map.BucketOf(knownEvent.Key!) != _bucket)
            {
                throw new ArgumentException($"The event's key belongs to bucket {_map.BucketOf(knownEvent.Key!)}, not {_bucket}: every client and silo must use the same ForecastClusterOptions.BucketCount and key codec.", nameof(knownEvent));
            }

            if (!withdraw && knownEvent.Scope == EventScope.Group && _options.Events?.GroupOf is null)
            {
                throw new ArgumentException("A group event needs a group function: give the silos' ForecastEngineOptions (AddForecastBuckets) an EventCalendar with GroupOf set.", nameof(knownEvent));
            }
        }

        var call = new EventCall(knownEvent, withdraw);
        await ApplyAsync(callId, call, static (grain, c) => c.Receipt = c.Withdraw
            ? grain._table.WithdrawEvent(c.Event, grain)
            : grain._table.DeclareEvent(c.Event, grain)).ConfigureAwait(true);
        return call.Receipt;
    }

    /// <summary>One declaration or withdrawal and what it did (left zero when the call is recognised as a repeat).</summary>
    private sealed class EventCall(KnownEvent<TKey> knownEvent, bool withdraw)
    {
        public KnownEvent<TKey> Event { get; } = knownEvent;

        public bool Withdraw { get; } = withdraw;

        public KnownEventReceipt Receipt { get; set; }
    }
}
