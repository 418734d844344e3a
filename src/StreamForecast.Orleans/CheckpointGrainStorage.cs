using System.Collections.Concurrent;
using System.Globalization;
using Microsoft.Extensions.Logging;
using Orleans.Serialization;
using Orleans.Storage;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>
/// Orleans grain storage on top of the project's checkpoint-store abstraction: each grain's state (named state + grain
/// id) is one stream of checkpoints in a store every silo reaches. The state is written with the Orleans serializer; the
/// checkpoint's input position is the state's version and serves as the ETag.
/// </summary>
/// <remarks>
/// <para><b>Concurrency.</b> A write names the version it replaces. When the store implements
/// <see cref="IConditionalCheckpointStore"/> (the SQLite and PostgreSQL stores do) the check and the write are one transaction; with
/// any other store the check is a read just before the write, which Orleans' single activation per grain makes
/// sufficient in practice but not airtight. A mismatch throws <see cref="InconsistentStateException"/>.</para>
/// <para><b>Clearing.</b> A checkpoint store keeps history and has no delete: clearing writes a one-byte tombstone that
/// reads back as "no state".</para>
/// <para><b>Thread safety.</b> Thread-safe; Orleans calls it from many grains at once.</para>
/// </remarks>
internal sealed partial class CheckpointGrainStorage : IGrainStorage, IDisposable
{
    private const byte Tombstone = 0;
    private const byte StateFollows = 1;

    private readonly string _name;
    private readonly Func<string, ICheckpointStore> _storeFor;
    private readonly Serializer _serializer;
    private readonly ILogger _logger;
    private readonly ConcurrentDictionary<string, ICheckpointStore> _stores = new(StringComparer.Ordinal);

    public CheckpointGrainStorage(string name, Func<string, ICheckpointStore> storeFor, Serializer serializer, ILogger<CheckpointGrainStorage> logger)
    {
        _name = name;
        _storeFor = storeFor;
        _serializer = serializer;
        _logger = logger;
    }

    /// <summary>The stream name a grain's state is kept under: the state name and the grain id.</summary>
    public static string StreamOf(string stateName, GrainId grainId) => stateName + "/" + grainId.ToString();

    public async Task ReadStateAsync<T>(string stateName, GrainId grainId, IGrainState<T> grainState)
    {
        ICheckpointStore store = StoreOf(stateName, grainId);
        Checkpoint? checkpoint = await store.LoadLatestAsync().ConfigureAwait(false);
        if (checkpoint is null)
        {
            grainState.ETag = null;
            grainState.RecordExists = false;
            return;
        }

        foreach (CheckpointRejection rejected in checkpoint.Rejected)
        {
            LogDamaged(_logger, _name, rejected.Location, rejected.Reason);
        }

        ReadOnlyMemory<byte> bytes = checkpoint.Snapshot;
        grainState.ETag = checkpoint.InputPosition.ToString(CultureInfo.InvariantCulture);
        if (bytes.Length == 1 && bytes.Span[0] == Tombstone)
        {
            grainState.RecordExists = false;
            return;
        }

        if (bytes.Length < 2 || bytes.Span[0] != StateFollows)
        {
            throw new InvalidDataException($"The stored state at {checkpoint.Location} is not a grain state written by this storage.");
        }

        grainState.State = _serializer.Deserialize<T>(bytes[1..]);
        grainState.RecordExists = true;
    }

    public async Task WriteStateAsync<T>(string stateName, GrainId grainId, IGrainState<T> grainState)
    {
        byte[] body = _serializer.SerializeToArray(grainState.State);
        byte[] bytes = new byte[body.Length + 1];
        bytes[0] = StateFollows;
        body.CopyTo(bytes, 1);
        await SaveAsync(stateName, grainId, grainState, bytes).ConfigureAwait(false);
        grainState.RecordExists = true;
    }

    public async Task ClearStateAsync<T>(string stateName, GrainId grainId, IGrainState<T> grainState)
    {
        await SaveAsync(stateName, grainId, grainState, [Tombstone]).ConfigureAwait(false);
        grainState.RecordExists = false;
    }

    public void Dispose()
    {
        foreach (ICheckpointStore store in _stores.Values)
        {
            (store as IDisposable)?.Dispose();
        }

        _stores.Clear();
    }

    private async Task SaveAsync<T>(string stateName, GrainId grainId, IGrainState<T> grainState, byte[] bytes)
    {
        ICheckpointStore store = StoreOf(stateName, grainId);
        long? expected = grainState.ETag is null ? null : long.Parse(grainState.ETag, NumberStyles.None, CultureInfo.InvariantCulture);
        long version = (expected ?? 0) + 1;
        if (store is IConditionalCheckpointStore conditional)
        {
            if (!await conditional.TrySaveAsync(bytes, version, expected).ConfigureAwait(false))
            {
                throw Conflict(stateName, grainId, grainState.ETag);
            }
        }
        else
        {
            Checkpoint? latest = await store.LoadLatestAsync().ConfigureAwait(false);
            if (latest?.InputPosition != expected)
            {
                throw Conflict(stateName, grainId, grainState.ETag);
            }

            await store.SaveAsync(bytes, version).ConfigureAwait(false);
        }

        grainState.ETag = version.ToString(CultureInfo.InvariantCulture);
    }

    private InconsistentStateException Conflict(string stateName, GrainId grainId, string? etag) =>
        new($"Grain storage '{_name}': the stored '{stateName}' of {grainId} is not the version this activation read (ETag {etag ?? "none"}); another activation wrote it. Nothing was written.");

    private ICheckpointStore StoreOf(string stateName, GrainId grainId) =>
        _stores.GetOrAdd(StreamOf(stateName, grainId), _storeFor);

    [LoggerMessage(Level = LogLevel.Warning, Message = "Grain storage {Storage} skipped a damaged checkpoint at {Location}: {Reason}")]
    private static partial void LogDamaged(ILogger logger, string storage, string location, string reason);
}
