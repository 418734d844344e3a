using System.Text;
using StreamForecast.ContractSuites;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

// The checkpoint-store contract (each stream a directory of its own under the test's folder), then what only the file
// store has: its file names and envelope, temporary files, truncation and trailing bytes, size limits.
public sealed class FileCheckpointStoreTests : CheckpointStoreContractTests<FileCheckpointStore>
{
    private readonly string _directory = Path.Combine(Path.GetTempPath(), "sf-checkpoints-" + Guid.NewGuid().ToString("N"));

    public override async Task DisposeAsync()
    {
        await base.DisposeAsync();
        if (Directory.Exists(_directory))
        {
            Directory.Delete(_directory, recursive: true);
        }
    }

    protected override FileCheckpointStore CreateStoreCore(string stream, int retainCount) =>
        new(StreamDirectory(stream), new FileCheckpointStoreOptions(retainCount: retainCount));

    protected override async Task DamageAsync(string location)
    {
        // One flipped bit in the last byte before the 32-byte SHA-256: same length, wrong checksum.
        byte[] bytes = await File.ReadAllBytesAsync(location);
        bytes[^33] ^= 0x01;
        await File.WriteAllBytesAsync(location, bytes);
    }

    protected override Task<int> CountStoredAsync(string stream)
    {
        string directory = StreamDirectory(stream);
        return Task.FromResult(Directory.Exists(directory) ? Directory.GetFiles(directory, "checkpoint-*.sfsnap").Length : 0);
    }

    protected override async Task PlantForeignDataAsync(string stream)
    {
        Directory.CreateDirectory(StreamDirectory(stream));
        await File.WriteAllTextAsync(Path.Combine(StreamDirectory(stream), "checkpoint-000000000001.sfsnap"), "bakery till export, not a checkpoint");
    }

    // The message names the directory once, then each file by name.
    protected override string NameInMessage(string location) => Path.GetFileName(location);

    private string StreamDirectory(string stream) => Path.Combine(_directory, "stream-" + stream);

    [Fact]
    public async Task SaveAsync_ThenLoadLatestAsync_ReturnsSnapshotAndPosition()
    {
        using var store = new FileCheckpointStore(_directory);
        byte[] snapshot = Encoding.UTF8.GetBytes("engine state at offset 1200");

        await store.SaveAsync(snapshot, 1200);
        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.Equal(snapshot, loaded.Snapshot.ToArray());
        Assert.Equal(1200, loaded.InputPosition);
        Assert.Equal(Path.Combine(_directory, "checkpoint-000000000001.sfsnap"), loaded.Location);
        Assert.Empty(loaded.Rejected);
    }

    [Fact]
    public async Task SaveAsync_File_IsOneSectionSnapshotEnvelope()
    {
        using var store = new FileCheckpointStore(_directory);
        await store.SaveAsync(new byte[] { 1, 2, 3 }, 77);

        byte[] file = await File.ReadAllBytesAsync(Path.Combine(_directory, "checkpoint-000000000001.sfsnap"));
        SnapshotContent content = SnapshotFormat.Read(new MemoryStream(file));

        Assert.Equal(77, content.InputPosition);
        Assert.Equal([1, 2, 3], Assert.Single(content.Sections).ToArray());
        Assert.Equal(3 + FileCheckpointStore.FramingLength, file.Length);
    }

    [Fact]
    public async Task SaveAsync_EmptySnapshot_RoundTrips()
    {
        using var store = new FileCheckpointStore(_directory);
        await store.SaveAsync(ReadOnlyMemory<byte>.Empty, 0);

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.True(loaded.Snapshot.IsEmpty);
        Assert.Equal(0, loaded.InputPosition);
    }

    [Fact]
    public async Task LoadLatestAsync_NoDirectoryOrNoFiles_ReturnsNull()
    {
        using var store = new FileCheckpointStore(_directory);
        Assert.Null(await store.LoadLatestAsync());

        Directory.CreateDirectory(_directory);
        await File.WriteAllTextAsync(Path.Combine(_directory, "notes.txt"), "not a checkpoint");
        await File.WriteAllTextAsync(Path.Combine(_directory, "checkpoint-abc.sfsnap"), "not a checkpoint name");
        Assert.Null(await store.LoadLatestAsync());
    }

    [Fact]
    public async Task LoadLatestAsync_NewestBitFlipped_RejectionNamesTheChecksum()
    {
        using var store = new FileCheckpointStore(_directory);
        await store.SaveAsync(new byte[] { 1 }, 10);
        await store.SaveAsync(new byte[] { 2 }, 20);
        string newest = Path.Combine(_directory, "checkpoint-000000000002.sfsnap");
        byte[] bytes = await File.ReadAllBytesAsync(newest);
        bytes[30] ^= 0x01;
        await File.WriteAllBytesAsync(newest, bytes);

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.Equal(10, loaded!.InputPosition);
        Assert.Contains("SHA-256 checksum", Assert.Single(loaded.Rejected).Reason, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_NewestTruncated_FallsBack()
    {
        using var store = new FileCheckpointStore(_directory);
        await store.SaveAsync(new byte[100], 10);
        await store.SaveAsync(new byte[100], 20);
        string newest = Path.Combine(_directory, "checkpoint-000000000002.sfsnap");
        byte[] bytes = await File.ReadAllBytesAsync(newest);
        await File.WriteAllBytesAsync(newest, bytes[..(bytes.Length / 2)]);

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.Equal(10, loaded.InputPosition);
        Assert.Contains("truncated", Assert.Single(loaded.Rejected).Reason, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_NewestHasTrailingBytes_FallsBack()
    {
        using var store = new FileCheckpointStore(_directory);
        await store.SaveAsync(new byte[] { 1 }, 10);
        await store.SaveAsync(new byte[] { 2 }, 20);
        await File.AppendAllTextAsync(Path.Combine(_directory, "checkpoint-000000000002.sfsnap"), "x");

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.Equal(10, loaded.InputPosition);
        Assert.Contains("unexpected bytes", Assert.Single(loaded.Rejected).Reason, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_InterruptedWriteLeftTempFile_IgnoredAndCleanedUpByNextSave()
    {
        using var store = new FileCheckpointStore(_directory);
        await store.SaveAsync(new byte[] { 1 }, 10);
        await store.SaveAsync(new byte[] { 2 }, 20);

        // A save that died before its rename: a complete, valid envelope still under the temporary name, and a
        // half-written one under another.
        string leftover = Path.Combine(_directory, "checkpoint-000000000003.sfsnap.tmp");
        using (var file = File.Create(leftover))
        {
            SnapshotFormat.Write(file, 999, [new byte[] { 9 }]);
        }

        await File.WriteAllBytesAsync(Path.Combine(_directory, "checkpoint-000000000004.sfsnap.tmp"), "SFSN"u8.ToArray());

        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.NotNull(loaded);
        Assert.Equal(20, loaded.InputPosition);
        Assert.Empty(loaded.Rejected);

        await store.SaveAsync(new byte[] { 3 }, 30);
        Assert.Equal(
            ["checkpoint-000000000001.sfsnap", "checkpoint-000000000002.sfsnap", "checkpoint-000000000003.sfsnap"],
            FileNames());
        loaded = await store.LoadLatestAsync();
        Assert.NotNull(loaded);
        Assert.Equal(30, loaded.InputPosition);
    }

    [Fact]
    public async Task SaveAsync_MoreThanRetainCount_KeepsNewest()
    {
        using var store = new FileCheckpointStore(_directory, new FileCheckpointStoreOptions(retainCount: 3));
        for (int i = 1; i <= 6; i++)
        {
            await store.SaveAsync(new byte[] { (byte)i }, i * 100);
        }

        Assert.Equal(
            ["checkpoint-000000000004.sfsnap", "checkpoint-000000000005.sfsnap", "checkpoint-000000000006.sfsnap"],
            FileNames());
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.NotNull(loaded);
        Assert.Equal(600, loaded.InputPosition);
    }

    [Fact]
    public async Task SaveAsync_NewStoreOnSameDirectory_ContinuesNumbering()
    {
        using (var first = new FileCheckpointStore(_directory))
        {
            await first.SaveAsync(new byte[] { 1 }, 10);
            await first.SaveAsync(new byte[] { 2 }, 20);
        }

        using var second = new FileCheckpointStore(_directory);
        await second.SaveAsync(new byte[] { 3 }, 5); // positions need not grow; numbering does

        Checkpoint? loaded = await second.LoadLatestAsync();
        Assert.NotNull(loaded);
        Assert.Equal(5, loaded.InputPosition);
        Assert.EndsWith("checkpoint-000000000003.sfsnap", loaded.Location, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_FileAboveLimit_RejectedWithoutReading()
    {
        using (var writer = new FileCheckpointStore(_directory))
        {
            await writer.SaveAsync(new byte[10], 1);
            await writer.SaveAsync(new byte[1000], 2);
        }

        using var store = new FileCheckpointStore(_directory, new FileCheckpointStoreOptions(maxFileLength: 500));
        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.Equal(1, loaded.InputPosition);
        Assert.Contains("more than the limit of 500 bytes", Assert.Single(loaded.Rejected).Reason, StringComparison.Ordinal);
    }

    [Fact]
    public async Task SaveAsync_SnapshotAboveLimit_ThrowsAndWritesNothing()
    {
        using var store = new FileCheckpointStore(_directory, new FileCheckpointStoreOptions(maxFileLength: 100));

        var ex = await Assert.ThrowsAsync<ArgumentException>(() => store.SaveAsync(new byte[100], 1).AsTask());

        Assert.Contains("more than the limit of 100 bytes", ex.Message, StringComparison.Ordinal);
        Assert.False(Directory.Exists(_directory) && Directory.EnumerateFileSystemEntries(_directory).Any());
    }

    [Fact]
    public async Task SaveAsync_Cancelled_LeavesNoFile()
    {
        using var store = new FileCheckpointStore(_directory);
        await store.SaveAsync(new byte[] { 1 }, 10);
        using var cancel = new CancellationTokenSource();
        await cancel.CancelAsync();

        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => store.SaveAsync(new byte[] { 2 }, 20, cancel.Token).AsTask());

        Assert.Equal(["checkpoint-000000000001.sfsnap"], FileNames());
    }

    [Fact]
    public void Options_OutOfRange_ThrowWithAllowedRange()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new FileCheckpointStoreOptions(retainCount: 0));
        Assert.Contains("between 1 and 1,000", ex.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentOutOfRangeException>(() => new FileCheckpointStoreOptions(maxFileLength: FileCheckpointStore.FramingLength - 1));
        Assert.Equal(3, FileCheckpointStoreOptions.Default.RetainCount);
        Assert.Throws<ArgumentException>(() => new FileCheckpointStore(" "));
    }

    [Theory]
    [InlineData("checkpoint-000000000042.sfsnap", true, 42)]
    [InlineData("checkpoint-000000000000.sfsnap", false, 0)]
    [InlineData("checkpoint-42.sfsnap", false, 0)]
    [InlineData("checkpoint-00000000004x.sfsnap", false, 0)]
    [InlineData("checkpoint-000000000042.sfsnap.tmp", false, 0)]
    public void TryParseFileName_Names_OnlyExactPatternAccepted(string name, bool accepted, long sequence)
    {
        Assert.Equal(accepted, FileCheckpointStore.TryParseFileName(name, out long parsed));
        Assert.Equal(sequence, parsed);
        if (accepted)
        {
            Assert.Equal(name, FileCheckpointStore.FileName(parsed));
        }
    }

    private string[] FileNames() =>
        Directory.GetFiles(_directory).Select(p => Path.GetFileName(p)!).Order(StringComparer.Ordinal).ToArray();
}
