using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging.Abstractions;
using Orleans.Runtime;
using Orleans.Serialization;
using Orleans.Storage;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans.Tests;

public sealed class CheckpointGrainStorageTests : IDisposable
{
    private static readonly Serializer Serializer = new ServiceCollection().AddSerializer().BuildServiceProvider().GetRequiredService<Serializer>();
    private static readonly GrainId Grain = GrainId.Create("bucket", "7");
    private readonly string _directory = Path.Combine(Path.GetTempPath(), "sf-storage-" + Guid.NewGuid().ToString("N"));

    public CheckpointGrainStorageTests() => Directory.CreateDirectory(_directory);

    private string DatabasePath => Path.Combine(_directory, "grains.db");

    public void Dispose()
    {
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        Directory.Delete(_directory, recursive: true);
    }

    [Fact]
    public async Task ReadStateAsync_NothingStored_LeavesStateAndReportsNoRecord()
    {
        using CheckpointGrainStorage storage = Sqlite();
        var state = new GrainState<List<int>>([9]);

        await storage.ReadStateAsync("bucket", Grain, state);

        Assert.False(state.RecordExists);
        Assert.Null(state.ETag);
        Assert.Equal([9], state.State);
    }

    [Fact]
    public async Task WriteStateAsync_ThenReadOnAnotherSilo_ReturnsTheStateAndItsVersion()
    {
        using CheckpointGrainStorage first = Sqlite();
        using CheckpointGrainStorage second = Sqlite();
        var written = new GrainState<List<int>>([1, 2, 3]);

        await first.WriteStateAsync("bucket", Grain, written);
        await first.WriteStateAsync("bucket", Grain, written);
        var read = new GrainState<List<int>>([]);
        await second.ReadStateAsync("bucket", Grain, read);

        Assert.True(read.RecordExists);
        Assert.Equal([1, 2, 3], read.State);
        Assert.Equal("2", written.ETag);
        Assert.Equal("2", read.ETag);
    }

    [Fact]
    public async Task WriteStateAsync_StaleETag_ThrowsInconsistentStateAndKeepsTheNewerState()
    {
        using CheckpointGrainStorage oldActivation = Sqlite();
        using CheckpointGrainStorage newActivation = Sqlite();
        var stale = new GrainState<List<int>>([1]);
        await oldActivation.WriteStateAsync("bucket", Grain, stale);
        var fresh = new GrainState<List<int>>([]);
        await newActivation.ReadStateAsync("bucket", Grain, fresh);
        fresh.State = [2];
        await newActivation.WriteStateAsync("bucket", Grain, fresh);

        stale.State = [99];
        await Assert.ThrowsAsync<InconsistentStateException>(() => oldActivation.WriteStateAsync("bucket", Grain, stale));

        var read = new GrainState<List<int>>([]);
        await newActivation.ReadStateAsync("bucket", Grain, read);
        Assert.Equal([2], read.State);
        Assert.Equal("1", stale.ETag);
    }

    [Fact]
    public async Task WriteStateAsync_StoreWithoutConditionalSave_StillRefusesAStaleETag()
    {
        var stores = new Dictionary<string, PlainStore>();
        using var storage = new CheckpointGrainStorage("test", s => stores.TryGetValue(s, out PlainStore? p) ? p : stores[s] = new PlainStore(), Serializer, NullLogger<CheckpointGrainStorage>.Instance);
        var a = new GrainState<List<int>>([1]);
        var b = new GrainState<List<int>>([2]);
        await storage.WriteStateAsync("bucket", Grain, a);

        await Assert.ThrowsAsync<InconsistentStateException>(() => storage.WriteStateAsync("bucket", Grain, b));

        var read = new GrainState<List<int>>([]);
        await storage.ReadStateAsync("bucket", Grain, read);
        Assert.Equal([1], read.State);
    }

    [Fact]
    public async Task ClearStateAsync_AfterWrite_ReadsBackAsNoRecordAndNextWriteContinuesTheVersion()
    {
        using CheckpointGrainStorage storage = Sqlite();
        var state = new GrainState<List<int>>([5]);
        await storage.WriteStateAsync("bucket", Grain, state);

        await storage.ClearStateAsync("bucket", Grain, state);
        var read = new GrainState<List<int>>([0]);
        await storage.ReadStateAsync("bucket", Grain, read);

        Assert.False(read.RecordExists);
        Assert.Equal([0], read.State);
        Assert.Equal("2", read.ETag);
        read.State = [6];
        await storage.WriteStateAsync("bucket", Grain, read);
        Assert.Equal("3", read.ETag);
    }

    [Fact]
    public async Task ReadStateAsync_TwoGrainsAndTwoStateNames_KeepSeparateStreams()
    {
        using CheckpointGrainStorage storage = Sqlite();
        GrainId other = GrainId.Create("bucket", "8");
        await storage.WriteStateAsync("bucket", Grain, new GrainState<List<int>>([1]));
        await storage.WriteStateAsync("bucket", other, new GrainState<List<int>>([2]));
        await storage.WriteStateAsync("extra", Grain, new GrainState<List<int>>([3]));

        var a = new GrainState<List<int>>([]);
        var b = new GrainState<List<int>>([]);
        var c = new GrainState<List<int>>([]);
        await storage.ReadStateAsync("bucket", Grain, a);
        await storage.ReadStateAsync("bucket", other, b);
        await storage.ReadStateAsync("extra", Grain, c);

        Assert.Equal([1], a.State);
        Assert.Equal([2], b.State);
        Assert.Equal([3], c.State);
    }

    [Fact]
    public async Task ReadStateAsync_BytesNotWrittenByThisStorage_ThrowsInvalidData()
    {
        string stream = CheckpointGrainStorage.StreamOf("bucket", Grain);
        using (var raw = new SqliteCheckpointStore(DatabasePath, new SqliteCheckpointStoreOptions(streamName: stream)))
        {
            await raw.SaveAsync(new byte[] { 7, 7, 7 }, 1);
        }

        using CheckpointGrainStorage storage = Sqlite();
        await Assert.ThrowsAsync<InvalidDataException>(() => storage.ReadStateAsync("bucket", Grain, new GrainState<List<int>>([])));
    }

    private CheckpointGrainStorage Sqlite() =>
        new("test", stream => new SqliteCheckpointStore(DatabasePath, new SqliteCheckpointStoreOptions(2, streamName: stream)), Serializer, NullLogger<CheckpointGrainStorage>.Instance);

    /// <summary>A store with only the plain interface (no conditional save), in memory.</summary>
    private sealed class PlainStore : ICheckpointStore
    {
        private Checkpoint? _latest;

        public ValueTask SaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, CancellationToken cancellationToken = default)
        {
            _latest = new Checkpoint(snapshot.ToArray(), inputPosition, "memory");
            return ValueTask.CompletedTask;
        }

        public ValueTask<Checkpoint?> LoadLatestAsync(CancellationToken cancellationToken = default) => ValueTask.FromResult(_latest);
    }
}
