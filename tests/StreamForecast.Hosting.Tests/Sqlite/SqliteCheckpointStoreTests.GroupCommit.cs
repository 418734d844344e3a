using Microsoft.Data.Sqlite;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Sqlite;

// Group commit: saves of one process that wait for the file are written together in one transaction, each keeping
// its own outcome (behaviour only; the speed is measured by ClusterThroughputBenchmarks).
public sealed partial class SqliteCheckpointStoreTests
{
    [Fact]
    public async Task TrySaveAsync_ManySavesQueuedBehindOneTransaction_EachKeepsItsOwnOutcome()
    {
        string path = _temp.File("group.db");
        SqliteCheckpointStore[] stores = Enumerable.Range(0, 6)
            .Select(i => new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(retainCount: 2, streamName: $"bucket-{i}")))
            .ToArray();
        using var withdrawnStore = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: "withdrawn"));
        try
        {
            Assert.True(await stores[0].TrySaveAsync(new byte[] { 1 }, 1, null)); // the schema exists now
            using var holder = new SqliteConnection($"Data Source={path};Pooling=False");
            holder.Open();
            using SqliteTransaction held = holder.BeginTransaction(deferred: false); // BEGIN IMMEDIATE: the write lock

            // The first save takes the process's writer gate and waits for the file; the rest queue behind it.
            Task<bool> first = Task.Run(async () => await stores[0].TrySaveAsync(new byte[] { 2 }, 2, 1));
            await Task.Delay(200);
            var right = new List<Task<bool>>();
            var wrong = new List<Task<bool>>();
            for (int i = 1; i < stores.Length; i++)
            {
                SqliteCheckpointStore store = stores[i];
                long position = 10 * i;
                byte[] snapshot = [(byte)i];
                right.Add(Task.Run(async () => await store.TrySaveAsync(snapshot, position, null)));
                wrong.Add(Task.Run(async () => await store.TrySaveAsync(new byte[] { 99 }, position + 1, 999)));
            }

            using var cancel = new CancellationTokenSource();
            Task<bool> withdrawn = Task.Run(async () => await withdrawnStore.TrySaveAsync(new byte[] { 7 }, 7, null, cancel.Token));
            await Task.Delay(200);
            await cancel.CancelAsync();
            await Assert.ThrowsAnyAsync<OperationCanceledException>(() => withdrawn);
            bool anyDoneWhileLocked = first.IsCompleted || right.Any(t => t.IsCompleted) || wrong.Any(t => t.IsCompleted);
            held.Rollback();

            Assert.False(anyDoneWhileLocked);
            Assert.True(await first);
            Assert.All(await Task.WhenAll(right), b => Assert.True(b));
            Assert.All(await Task.WhenAll(wrong), b => Assert.False(b));
            Assert.Equal(2, (await stores[0].LoadLatestAsync())!.InputPosition);
            for (int i = 1; i < stores.Length; i++)
            {
                Checkpoint latest = (await stores[i].LoadLatestAsync())!;
                Assert.Equal(10 * i, latest.InputPosition);
                Assert.Equal(new byte[] { (byte)i }, latest.Snapshot.ToArray());
                Assert.Single(StreamSequences(path, $"bucket-{i}"));
            }

            Assert.Null(await withdrawnStore.LoadLatestAsync());
        }
        finally
        {
            foreach (SqliteCheckpointStore store in stores)
            {
                store.Dispose();
            }
        }
    }
}
