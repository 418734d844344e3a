using StreamForecast.Streaming;

namespace StreamForecast.ContractSuites;

/// <summary>
/// The behaviour every <see cref="IConditionalCheckpointStore"/> promises on top of <see cref="CheckpointStoreContractTests{TStore}"/>:
/// a conditional save stores only when the newest valid checkpoint is the one expected, compares with exactly what a
/// load would return (skipping damaged checkpoints), writes nothing when it refuses, and of several instances racing
/// with the same expectation exactly one wins.
/// </summary>
/// <typeparam name="TStore">The store type under test.</typeparam>
public abstract class ConditionalCheckpointStoreContractTests<TStore> : CheckpointStoreContractTests<TStore>
    where TStore : class, IConditionalCheckpointStore
{
    [Fact]
    public async Task TrySaveAsync_EmptyStreamExpectingNothing_SavesAndReturnsTrue()
    {
        IConditionalCheckpointStore store = CreateStore("first");

        bool saved = await store.TrySaveAsync(new byte[] { 1, 2 }, 12, expectedLatestPosition: null);

        Assert.True(saved);
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.Equal(12, loaded!.InputPosition);
        Assert.Equal(new byte[] { 1, 2 }, loaded.Snapshot.ToArray());
    }

    [Fact]
    public async Task TrySaveAsync_ExpectingEachNewestPositionInTurn_SavesEveryTimeAndPrunesToTheRetainCount()
    {
        IConditionalCheckpointStore store = CreateStore("chain", retainCount: 2);
        long? expected = null;
        for (int i = 1; i <= 4; i++)
        {
            Assert.True(await store.TrySaveAsync(new[] { (byte)i }, 10 * i, expected));
            expected = 10 * i;
        }

        Assert.Equal(2, await CountStoredAsync("chain"));
        Assert.Equal(40, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task TrySaveAsync_ExpectationDoesNotMatch_ReturnsFalseAndWritesNothing()
    {
        IConditionalCheckpointStore store = CreateStore("contended", retainCount: 1);
        IConditionalCheckpointStore empty = CreateStore("untouched");
        await store.SaveAsync(new byte[] { 1 }, 10);
        await store.SaveAsync(new byte[] { 2 }, 20);
        string before = (await store.LoadLatestAsync())!.Location;

        Assert.False(await store.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: null)); // the stream is not empty
        Assert.False(await store.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: 10));   // a stale position
        Assert.False(await store.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: 21));   // a position never saved
        Assert.False(await empty.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: 20));   // another stream's position

        Assert.Equal(1, await CountStoredAsync("contended"));
        Assert.Equal(0, await CountStoredAsync("untouched"));
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.Equal(20, loaded!.InputPosition);
        Assert.Equal(new byte[] { 2 }, loaded.Snapshot.ToArray());
        Assert.Equal(before, loaded.Location);
    }

    [Fact]
    public async Task TrySaveAsync_NewestDamaged_ComparesWithTheNewestValidCheckpointAsLoadLatestDoes()
    {
        IConditionalCheckpointStore store = CreateStore("damaged-newest");
        await store.SaveAsync(new byte[] { 1, 2, 3 }, 10);
        await store.SaveAsync(new byte[] { 4, 5, 6 }, 20);
        await DamageAsync((await store.LoadLatestAsync())!.Location);
        long loadedPosition = (await store.LoadLatestAsync())!.InputPosition;

        bool againstDamaged = await store.TrySaveAsync(new byte[] { 7 }, 30, expectedLatestPosition: 20);
        bool againstLoaded = await store.TrySaveAsync(new byte[] { 7 }, 30, expectedLatestPosition: loadedPosition);

        Assert.Equal(10, loadedPosition);
        Assert.False(againstDamaged);
        Assert.True(againstLoaded);
        Assert.Equal(30, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task TrySaveAsync_EveryCheckpointDamaged_MatchesOnlyTheExpectationOfNoCheckpoint()
    {
        IConditionalCheckpointStore store = CreateStore("damaged-all");
        await store.SaveAsync(new byte[] { 1 }, 10);
        await DamageAsync((await store.LoadLatestAsync())!.Location);
        await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());

        bool againstDamaged = await store.TrySaveAsync(new byte[] { 2 }, 20, expectedLatestPosition: 10);
        bool againstNothing = await store.TrySaveAsync(new byte[] { 2 }, 20, expectedLatestPosition: null);

        Assert.False(againstDamaged);
        Assert.True(againstNothing);
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.Equal(20, loaded!.InputPosition);
        Assert.Empty(loaded.Rejected); // the damaged one is now older than the newest, so it is not reached
        Assert.Equal(2, await CountStoredAsync("damaged-all"));
    }

    [Fact]
    public async Task TrySaveAsync_NegativeExpectation_ThrowsAndWritesNothing()
    {
        IConditionalCheckpointStore store = CreateStore("negative-expectation");
        await store.SaveAsync(new byte[] { 1 }, 10);

        var ex = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(async () => await store.TrySaveAsync(new byte[] { 2 }, 20, expectedLatestPosition: -1));

        Assert.Equal("expectedLatestPosition", ex.ParamName);
        Assert.Equal(1, await CountStoredAsync("negative-expectation"));
    }

    [Fact]
    public async Task TrySaveAsync_Cancelled_LeavesStoredCheckpointsUnchanged()
    {
        IConditionalCheckpointStore store = CreateStore("cancel-conditional");
        await store.SaveAsync(new byte[] { 1 }, 10);
        using var cancelled = new CancellationTokenSource();
        await cancelled.CancelAsync();

        await Assert.ThrowsAnyAsync<OperationCanceledException>(async () => await store.TrySaveAsync(new byte[] { 2 }, 20, 10, cancelled.Token));

        Assert.Equal(1, await CountStoredAsync("cancel-conditional"));
        Assert.Equal(10, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task TrySaveAsync_AfterDispose_ThrowsObjectDisposed()
    {
        IConditionalCheckpointStore store = CreateStore("disposed-conditional");
        await DisposeStoreAsync(store);

        await Assert.ThrowsAsync<ObjectDisposedException>(async () => await store.TrySaveAsync(new byte[] { 1 }, 1, null));
    }

    [Fact]
    public async Task TrySaveAsync_InstancesRacingWithTheSameExpectation_ExactlyOneWinsEachRound()
    {
        // Four instances (as four silos would hold) race each round on dedicated threads released together; every one
        // expects the position the previous round's winner saved. The compare and the insert must be one atomic step.
        const int racers = 4;
        const int rounds = 20;
        TStore[] stores = [.. Enumerable.Range(0, racers).Select(_ => CreateStore("raced", retainCount: 2))];
        long? expected = null;
        for (int round = 0; round < rounds; round++)
        {
            using var start = new Barrier(racers);
            long? expectation = expected;
            var tries = new Task<bool>[racers];
            for (int r = 0; r < racers; r++)
            {
                TStore store = stores[r];
                long position = (round * racers) + r + 1000;
                byte marker = (byte)r;
                tries[r] = Task.Factory.StartNew(
                    () =>
                    {
                        start.SignalAndWait();
                        return store.TrySaveAsync(new[] { marker }, position, expectation).AsTask().GetAwaiter().GetResult();
                    },
                    CancellationToken.None,
                    TaskCreationOptions.LongRunning,
                    TaskScheduler.Default);
            }

            bool[] outcomes = await Task.WhenAll(tries);

            int winner = Array.IndexOf(outcomes, true);
            Assert.True(winner >= 0 && Array.LastIndexOf(outcomes, true) == winner, $"Round {round}: [{string.Join(", ", outcomes)}]; exactly one must win.");
            Checkpoint? newest = await stores[(round + 1) % racers].LoadLatestAsync();
            Assert.Equal((round * racers) + winner + 1000, newest!.InputPosition);
            Assert.Equal(new[] { (byte)winner }, newest.Snapshot.ToArray());
            Assert.Empty(newest.Rejected);
            expected = newest.InputPosition;
        }

        Assert.Equal(2, await CountStoredAsync("raced"));
    }

    [Fact]
    public async Task SaveAsync_ManyInstancesOnManyStreamsInParallel_AllSucceedAndEachStreamEndsAtItsLastSave()
    {
        const int streams = 8;
        const int savesPerStream = 25;
        var writers = new Task[streams];
        for (int s = 0; s < streams; s++)
        {
            // Two instances per stream, alternating, as separate silos would hold them.
            TStore first = CreateStore("bucket-" + s, retainCount: 2);
            TStore second = CreateStore("bucket-" + s, retainCount: 2);
            int stream = s;
            writers[s] = Task.Run(async () =>
            {
                for (int i = 1; i <= savesPerStream; i++)
                {
                    TStore store = i % 2 == 0 ? second : first;
                    await store.SaveAsync(new[] { (byte)stream, (byte)i }, (stream * 1000) + i);
                }
            });
        }

        await Task.WhenAll(writers);

        for (int s = 0; s < streams; s++)
        {
            Checkpoint? newest = await CreateStore("bucket-" + s).LoadLatestAsync();
            Assert.NotNull(newest);
            Assert.Equal((s * 1000) + savesPerStream, newest.InputPosition);
            Assert.Equal(new[] { (byte)s, (byte)savesPerStream }, newest.Snapshot.ToArray());
            Assert.Empty(newest.Rejected);
            Assert.Equal(2, await CountStoredAsync("bucket-" + s));
        }
    }
}
