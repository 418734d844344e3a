using StreamForecast.Streaming;

namespace StreamForecast.ContractSuites;

/// <summary>
/// The behaviour every <see cref="ICheckpointStore"/> promises, whatever it stores checkpoints in: what a save stores a
/// load returns exactly, the newest save wins, the newest N are kept, damaged or foreign data is detected and never
/// returned, stores of different streams do not see each other, a cancelled or refused save stores nothing, and a
/// disposed store refuses saves while its checkpoints stay for the next instance.
/// </summary>
/// <typeparam name="TStore">The store type under test.</typeparam>
/// <remarks>
/// An inheriting class supplies the store and three views of its storage that only it can have (damage one checkpoint,
/// count a stream's checkpoints, plant data no store wrote). Each test instance gets a fresh location (directory, file,
/// database schema): stores the test creates with the same stream name share checkpoints, stores with different names
/// do not. Stores made with <see cref="CreateStore"/> are disposed after the test.
/// </remarks>
public abstract class CheckpointStoreContractTests<TStore> : IAsyncLifetime
    where TStore : class, ICheckpointStore
{
    private readonly List<TStore> _created = [];

    /// <summary>Creates a store over this test's location for <paramref name="stream"/>, keeping <paramref name="retainCount"/> checkpoints.</summary>
    protected abstract TStore CreateStoreCore(string stream, int retainCount);

    /// <summary>Damages the checkpoint stored at <paramref name="location"/> (a <see cref="Checkpoint.Location"/>) so that it fails validation.</summary>
    protected abstract Task DamageAsync(string location);

    /// <summary>How many checkpoints of <paramref name="stream"/> are stored, valid or not.</summary>
    protected abstract Task<int> CountStoredAsync(string stream);

    /// <summary>Puts data that no checkpoint store wrote where a store for <paramref name="stream"/> looks for its checkpoints.</summary>
    protected abstract Task PlantForeignDataAsync(string stream);

    /// <summary>
    /// How an error message that lists unusable checkpoints names the one at <paramref name="location"/>; the whole
    /// location unless the store names a shared part (a directory) once and each checkpoint by the rest.
    /// </summary>
    protected virtual string NameInMessage(string location) => location;

    /// <inheritdoc/>
    public virtual Task InitializeAsync() => Task.CompletedTask;

    /// <inheritdoc/>
    public virtual async Task DisposeAsync()
    {
        foreach (TStore store in _created)
        {
            await DisposeStoreAsync(store);
        }
    }

    /// <summary>Creates a store (see <see cref="CreateStoreCore"/>) that is disposed after the test.</summary>
    protected TStore CreateStore(string stream = "", int retainCount = 3) => Track(CreateStoreCore(stream, retainCount));

    /// <summary>Has <paramref name="store"/> disposed after the test (for stores a test makes with other settings).</summary>
    protected TStore Track(TStore store)
    {
        _created.Add(store);
        return store;
    }

    /// <summary>Disposes a store through whichever of the disposal interfaces it implements (async first).</summary>
    protected static async ValueTask DisposeStoreAsync(ICheckpointStore store)
    {
        if (store is IAsyncDisposable asyncDisposable)
        {
            await asyncDisposable.DisposeAsync();
        }
        else
        {
            (store as IDisposable)?.Dispose();
        }
    }

    /// <summary>The bytes of an invented snapshot: deterministic for a seed, never all zeros.</summary>
    protected static byte[] Bytes(int length, int seed)
    {
        var bytes = new byte[length];
        new Random(seed).NextBytes(bytes);
        bytes[0] = (byte)(seed | 1);
        return bytes;
    }

    [Fact]
    public async Task LoadLatestAsync_NothingSaved_ReturnsNull()
    {
        ICheckpointStore store = CreateStore("empty");

        Assert.Null(await store.LoadLatestAsync());
    }

    [Fact]
    public async Task SaveAsync_ThenLoadLatestAsync_ReturnsExactlyTheBytesAndPosition()
    {
        ICheckpointStore store = CreateStore("round-trip");
        byte[] small = [0, 255, 1, 128];
        byte[] large = Bytes(256 * 1024, seed: 7); // larger than a database page, so stored out of line where that applies

        await store.SaveAsync(small, 0);
        Checkpoint? first = await store.LoadLatestAsync();
        await store.SaveAsync(large, long.MaxValue);
        Checkpoint? second = await store.LoadLatestAsync();

        Assert.NotNull(first);
        Assert.Equal(small, first.Snapshot.ToArray());
        Assert.Equal(0, first.InputPosition);
        Assert.Empty(first.Rejected);
        Assert.NotNull(second);
        Assert.Equal(large, second.Snapshot.ToArray());
        Assert.Equal(long.MaxValue, second.InputPosition);
        Assert.Empty(second.Rejected);
        Assert.NotEqual(first.Location, second.Location);
    }

    [Fact]
    public async Task SaveAsync_LowerPositionAfterHigher_TheLastSavedIsTheNewest()
    {
        ICheckpointStore store = CreateStore("order");
        await store.SaveAsync(new byte[] { 1 }, 500);
        await store.SaveAsync(new byte[] { 2 }, 20); // positions need not grow: save order decides

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.Equal(20, loaded!.InputPosition);
        Assert.Equal(new byte[] { 2 }, loaded.Snapshot.ToArray());
    }

    [Fact]
    public async Task SaveAsync_MoreThanRetainCount_KeepsOnlyTheNewestAsFallbacks()
    {
        ICheckpointStore store = CreateStore("retention", retainCount: 2);
        var locations = new List<string>();
        for (int i = 1; i <= 5; i++)
        {
            await store.SaveAsync(new[] { (byte)i }, i * 100);
            locations.Add((await store.LoadLatestAsync())!.Location);
        }

        Assert.Equal(2, await CountStoredAsync("retention"));

        // Only the newest two remain: damaging them leaves nothing to fall back on.
        await DamageAsync(locations[4]);
        Checkpoint? fallback = await store.LoadLatestAsync();
        Assert.Equal(400, fallback!.InputPosition);
        Assert.Equal(locations[3], fallback.Location);
        await DamageAsync(locations[3]);
        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());
        Assert.Contains("None of the 2", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_NewestDamaged_FallsBackToThePreviousAndReportsTheSkippedOne()
    {
        ICheckpointStore store = CreateStore("damaged");
        await store.SaveAsync(new byte[] { 1, 2, 3 }, 10);
        string older = (await store.LoadLatestAsync())!.Location;
        await store.SaveAsync(new byte[] { 4, 5, 6 }, 20);
        string newest = (await store.LoadLatestAsync())!.Location;

        await DamageAsync(newest);
        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.Equal(10, loaded.InputPosition);
        Assert.Equal(new byte[] { 1, 2, 3 }, loaded.Snapshot.ToArray());
        Assert.Equal(older, loaded.Location);
        CheckpointRejection rejection = Assert.Single(loaded.Rejected);
        Assert.Equal(newest, rejection.Location);
        Assert.False(string.IsNullOrWhiteSpace(rejection.Reason));
    }

    [Fact]
    public async Task LoadLatestAsync_EveryCheckpointDamaged_ThrowsInvalidDataNamingEach()
    {
        ICheckpointStore store = CreateStore("all-damaged");
        await store.SaveAsync(new byte[] { 1 }, 1);
        string first = (await store.LoadLatestAsync())!.Location;
        await store.SaveAsync(new byte[] { 2 }, 2);
        string second = (await store.LoadLatestAsync())!.Location;
        await DamageAsync(first);
        await DamageAsync(second);

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());

        Assert.Contains("None of the 2", ex.Message, StringComparison.Ordinal);
        Assert.Contains(NameInMessage(first), ex.Message, StringComparison.Ordinal);
        Assert.Contains(NameInMessage(second), ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_ForeignDataWhereCheckpointsBelong_ThrowsInvalidDataInsteadOfReturningIt()
    {
        await PlantForeignDataAsync("foreign");
        ICheckpointStore store = CreateStore("foreign");

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());

        Assert.False(string.IsNullOrWhiteSpace(ex.Message));
    }

    [Fact]
    public async Task LoadLatestAsync_TwoStreams_EachSeesOnlyItsOwnAndPrunesOnItsOwn()
    {
        ICheckpointStore a = CreateStore("bucket-a", retainCount: 2);
        ICheckpointStore b = CreateStore("bucket-b", retainCount: 3);
        ICheckpointStore unused = CreateStore("bucket-c");
        for (int i = 1; i <= 5; i++)
        {
            await a.SaveAsync(new[] { (byte)i }, i);
            await b.SaveAsync(new[] { (byte)(10 + i) }, 10 + i);
        }

        Checkpoint? fromA = await a.LoadLatestAsync();
        Checkpoint? fromB = await b.LoadLatestAsync();

        Assert.Equal(5, fromA!.InputPosition);
        Assert.Equal(new byte[] { 5 }, fromA.Snapshot.ToArray());
        Assert.Equal(15, fromB!.InputPosition);
        Assert.Equal(new byte[] { 15 }, fromB.Snapshot.ToArray());
        Assert.NotEqual(fromA.Location, fromB.Location);
        Assert.Null(await unused.LoadLatestAsync());
        Assert.Equal(2, await CountStoredAsync("bucket-a"));
        Assert.Equal(3, await CountStoredAsync("bucket-b"));
    }

    [Fact]
    public async Task LoadLatestAsync_StreamWhoseCheckpointsAreAllDamaged_LeavesOtherStreamsUsable()
    {
        ICheckpointStore a = CreateStore("broken");
        ICheckpointStore b = CreateStore("healthy");
        await a.SaveAsync(new byte[] { 1 }, 1);
        await b.SaveAsync(new byte[] { 2 }, 2);
        await DamageAsync((await a.LoadLatestAsync())!.Location);

        await Assert.ThrowsAsync<InvalidDataException>(async () => await a.LoadLatestAsync());
        Assert.Equal(2, (await b.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task SaveAsync_NewInstanceOnTheSameStream_ContinuesAfterTheFirstInstancesCheckpoints()
    {
        ICheckpointStore first = CreateStore("handover");
        await first.SaveAsync(new byte[] { 1 }, 10);
        await first.SaveAsync(new byte[] { 2 }, 20);
        await DisposeStoreAsync(first);

        ICheckpointStore second = CreateStore("handover");
        Assert.Equal(20, (await second.LoadLatestAsync())!.InputPosition);
        await second.SaveAsync(new byte[] { 3 }, 30);

        Assert.Equal(30, (await second.LoadLatestAsync())!.InputPosition);
        Assert.Equal(3, await CountStoredAsync("handover"));
    }

    [Fact]
    public async Task SaveAsync_Cancelled_LeavesStoredCheckpointsUnchanged()
    {
        ICheckpointStore store = CreateStore("cancel");
        await store.SaveAsync(new byte[] { 1 }, 10);
        using var cancelled = new CancellationTokenSource();
        await cancelled.CancelAsync();

        await Assert.ThrowsAnyAsync<OperationCanceledException>(async () => await store.SaveAsync(new byte[] { 2 }, 20, cancelled.Token));

        Assert.Equal(1, await CountStoredAsync("cancel"));
        Assert.Equal(10, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task SaveAsync_NegativePosition_ThrowsAndStoresNothing()
    {
        ICheckpointStore store = CreateStore("negative");

        var ex = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(async () => await store.SaveAsync(new byte[] { 1 }, -1));

        Assert.Equal("inputPosition", ex.ParamName);
        Assert.Null(await store.LoadLatestAsync());
        Assert.Equal(0, await CountStoredAsync("negative"));
    }

    [Fact]
    public async Task SaveAsync_ConcurrentSavesOnOneInstance_EachIsStoredWhole()
    {
        ICheckpointStore store = CreateStore("concurrent", retainCount: 10);

        await Task.WhenAll(Enumerable.Range(1, 8).Select(i => store.SaveAsync(Bytes(1000, i), i).AsTask()));

        Assert.Equal(8, await CountStoredAsync("concurrent"));
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.NotNull(loaded);
        Assert.Empty(loaded.Rejected);
        Assert.Equal(Bytes(1000, (int)loaded.InputPosition), loaded.Snapshot.ToArray());
    }

    [Fact]
    public async Task Dispose_ThenSave_ThrowsObjectDisposedAndTheCheckpointsStayForTheNextInstance()
    {
        ICheckpointStore store = CreateStore("disposed");
        await store.SaveAsync(new byte[] { 1 }, 10);

        await DisposeStoreAsync(store);
        await DisposeStoreAsync(store); // idempotent

        await Assert.ThrowsAsync<ObjectDisposedException>(async () => await store.SaveAsync(new byte[] { 2 }, 20));
        ICheckpointStore next = CreateStore("disposed");
        Checkpoint? loaded = await next.LoadLatestAsync();
        Assert.Equal(10, loaded!.InputPosition);
        Assert.Equal(1, await CountStoredAsync("disposed"));
    }
}
