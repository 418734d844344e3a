using System.Globalization;
using System.Text;

namespace StreamForecast.Streaming;

/// <summary>
/// Keeps checkpoints as files in one directory: each save writes a temporary file, flushes it to disk and renames it
/// into place, so a checkpoint file is either complete or absent; the newest few are kept.
/// </summary>
/// <remarks>
/// <para><b>Files.</b> Checkpoint <c>n</c> is <c>checkpoint-</c><i>n as 12 digits</i><c>.sfsnap</c>, numbered
/// 1, 2, 3… in save order. Its content is a snapshot envelope (magic, version, input position, the saved bytes as
/// one section, SHA-256), so a damaged or truncated file is detected on load. A save in progress writes
/// <c>….sfsnap.tmp</c>; such files are never loaded, and leftovers from an interrupted save are deleted by the next
/// save. Other files in the directory are ignored.</para>
/// <para><b>Loading</b> tries the newest checkpoint first and falls back to older ones when it fails validation;
/// <see cref="Checkpoint.Rejected"/> reports what was skipped and why, and <see cref="Checkpoint.Location"/> which
/// file was used.</para>
/// <para><b>Durability.</b> The file's bytes are flushed to the device before the rename, and the rename is atomic
/// on local file systems. The directory entry itself is not flushed (.NET has no portable call for it), so right
/// after a power failure the newest save may be missing, in which case the previous checkpoint loads.</para>
/// <para><b>Thread safety.</b> Thread-safe within one instance: saves run one at a time, loads run alongside them.
/// Use one instance (one process) per directory. Dispose the store when done with it (<see cref="DisposeAsync"/> or
/// <see cref="Dispose"/>, like the other stores); saving after that throws <see cref="ObjectDisposedException"/>.</para>
/// </remarks>
public sealed class FileCheckpointStore : ICheckpointStore, IAsyncDisposable, IDisposable
{
    /// <summary>The bytes a checkpoint file adds around the snapshot: the envelope's header, one section length, the checksum.</summary>
    public const int FramingLength = SnapshotFormat.MinLength + 4;

    private const string Prefix = "checkpoint-";
    private const string Extension = ".sfsnap";
    private const string TempSuffix = ".tmp";
    private const int SequenceDigits = 12;

    private readonly FileCheckpointStoreOptions _options;
    private readonly SemaphoreSlim _saveGate = new(1, 1);
    private int _disposed;

    /// <summary>Creates a store over a directory, which is created on the first save if missing.</summary>
    /// <param name="directoryPath">The directory that holds the checkpoints; used only by this store.</param>
    /// <param name="options">Retention and size limit; <see cref="FileCheckpointStoreOptions.Default"/> when null.</param>
    /// <exception cref="ArgumentException"><paramref name="directoryPath"/> is null, empty or white space.</exception>
    public FileCheckpointStore(string directoryPath, FileCheckpointStoreOptions? options = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(directoryPath);
        DirectoryPath = Path.GetFullPath(directoryPath);
        _options = options ?? FileCheckpointStoreOptions.Default;
    }

    /// <summary>The full path of the checkpoint directory.</summary>
    public string DirectoryPath { get; }

    /// <summary>The store's settings.</summary>
    public FileCheckpointStoreOptions Options => _options;

    /// <summary>
    /// Saves a checkpoint as the next numbered file: writes <c>….sfsnap.tmp</c>, flushes it to disk, renames it,
    /// then deletes all but the newest <see cref="FileCheckpointStoreOptions.RetainCount"/> checkpoints and any
    /// leftover temporary files.
    /// </summary>
    /// <param name="snapshot">The snapshot's bytes.</param>
    /// <param name="inputPosition">The input position the snapshot accounts for, ≥ 0.</param>
    /// <param name="cancellationToken">Cancels the save before the rename; the temporary file is then removed.</param>
    /// <returns>A task that completes once the checkpoint file is in place.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <exception cref="ArgumentException">The file would be larger than <see cref="FileCheckpointStoreOptions.MaxFileLength"/>.</exception>
    /// <exception cref="IOException">The file system failed; no new checkpoint was added.</exception>
    /// <exception cref="ObjectDisposedException">The store has been disposed.</exception>
    /// <remarks>Cost: one sequential write of the snapshot, one flush to the device, a directory listing. Saves are serialised.</remarks>
    public async ValueTask SaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, CancellationToken cancellationToken = default)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        long fileLength = snapshot.Length + (long)FramingLength;
        if (fileLength > _options.MaxFileLength)
        {
            throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"The checkpoint file would be {fileLength} bytes, more than the limit of {_options.MaxFileLength} bytes (FileCheckpointStoreOptions.MaxFileLength)."),
                nameof(snapshot));
        }

        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        await _saveGate.WaitAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            Directory.CreateDirectory(DirectoryPath);
            List<(long Sequence, string Path)> existing = ListCheckpoints();
            long sequence = existing.Count == 0 ? 1 : existing[0].Sequence + 1;
            string finalPath = Path.Combine(DirectoryPath, FileName(sequence));
            string tempPath = finalPath + TempSuffix;
            try
            {
                var stream = new FileStream(tempPath, FileMode.Create, FileAccess.Write, FileShare.None, bufferSize: 0, FileOptions.Asynchronous);
                await using (stream.ConfigureAwait(false))
                {
                    await SnapshotFormat.WriteAsync(stream, inputPosition, [snapshot], cancellationToken: cancellationToken).ConfigureAwait(false);
                    stream.Flush(flushToDisk: true);
                }

                cancellationToken.ThrowIfCancellationRequested();
                File.Move(tempPath, finalPath, overwrite: false);
            }
            catch
            {
                TryDelete(tempPath);
                throw;
            }

            Prune();
        }
        finally
        {
            _saveGate.Release();
        }
    }

    /// <summary>
    /// Loads the newest checkpoint file that passes validation (magic, version, length, SHA-256, exactly one section,
    /// nothing after the snapshot), falling back to older files; temporary files are never considered.
    /// </summary>
    /// <param name="cancellationToken">Cancels the load.</param>
    /// <returns>The checkpoint, with the file used and any newer files skipped; null if the directory holds no checkpoint file.</returns>
    /// <exception cref="InvalidDataException">Checkpoint files exist but none is usable; the message lists each file and why.</exception>
    /// <remarks>Reads each candidate whole (up to <see cref="FileCheckpointStoreOptions.MaxFileLength"/>); usually only the newest.</remarks>
    public async ValueTask<Checkpoint?> LoadLatestAsync(CancellationToken cancellationToken = default)
    {
        if (!Directory.Exists(DirectoryPath))
        {
            return null;
        }

        List<(long Sequence, string Path)> candidates = ListCheckpoints();
        var rejected = new List<CheckpointRejection>();
        foreach ((_, string path) in candidates)
        {
            cancellationToken.ThrowIfCancellationRequested();
            byte[] bytes;
            try
            {
                long length = new FileInfo(path).Length;
                if (length > _options.MaxFileLength)
                {
                    rejected.Add(new CheckpointRejection(path, string.Create(CultureInfo.InvariantCulture,
                        $"The file is {length} bytes, more than the limit of {_options.MaxFileLength} bytes.")));
                    continue;
                }

                bytes = await File.ReadAllBytesAsync(path, cancellationToken).ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                rejected.Add(new CheckpointRejection(path, "The file could not be read: " + ex.Message));
                continue;
            }

            if (!SnapshotFormat.TryParse(bytes, out SnapshotContent? content, out string? problem, _options.MaxFileLength))
            {
                rejected.Add(new CheckpointRejection(path, problem));
                continue;
            }

            if (content.Sections.Count != 1)
            {
                rejected.Add(new CheckpointRejection(path, string.Create(CultureInfo.InvariantCulture,
                    $"The snapshot holds {content.Sections.Count} sections; a checkpoint file holds exactly one.")));
                continue;
            }

            return new Checkpoint(content.Sections[0], content.InputPosition, path, rejected);
        }

        if (rejected.Count == 0)
        {
            return null;
        }

        var message = new StringBuilder();
        message.Append(CultureInfo.InvariantCulture, $"None of the {rejected.Count} checkpoint files in '{DirectoryPath}' is usable:");
        foreach (CheckpointRejection rejection in rejected)
        {
            message.Append(CultureInfo.InvariantCulture, $" {Path.GetFileName(rejection.Location)}: {rejection.Reason}");
        }

        throw new InvalidDataException(message.ToString());
    }

    /// <summary>Ends this store: later saves throw <see cref="ObjectDisposedException"/>; a save already running completes. Files are not touched. Idempotent.</summary>
    public void Dispose() => Volatile.Write(ref _disposed, 1);

    /// <summary>Ends this store as <see cref="Dispose"/> does (nothing to await; present so every store disposes alike). Idempotent.</summary>
    /// <returns>A completed task.</returns>
    public ValueTask DisposeAsync()
    {
        Dispose();
        return ValueTask.CompletedTask;
    }

    /// <summary>The file name of checkpoint number <paramref name="sequence"/>.</summary>
    internal static string FileName(long sequence) =>
        string.Create(CultureInfo.InvariantCulture, $"{Prefix}{sequence.ToString("D" + SequenceDigits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture)}{Extension}");

    /// <summary>Parses a checkpoint file name (exactly <c>checkpoint-</c>, 12 digits, <c>.sfsnap</c>).</summary>
    internal static bool TryParseFileName(string fileName, out long sequence)
    {
        sequence = 0;
        if (fileName.Length != Prefix.Length + SequenceDigits + Extension.Length
            || !fileName.StartsWith(Prefix, StringComparison.Ordinal)
            || !fileName.EndsWith(Extension, StringComparison.Ordinal))
        {
            return false;
        }

        ReadOnlySpan<char> digits = fileName.AsSpan(Prefix.Length, SequenceDigits);
        foreach (char c in digits)
        {
            if (c is < '0' or > '9')
            {
                return false;
            }
        }

        return long.TryParse(digits, NumberStyles.None, CultureInfo.InvariantCulture, out sequence) && sequence > 0;
    }

    /// <summary>The checkpoint files, newest (highest number) first.</summary>
    private List<(long Sequence, string Path)> ListCheckpoints()
    {
        var result = new List<(long Sequence, string Path)>();
        foreach (string path in Directory.EnumerateFiles(DirectoryPath, Prefix + "*" + Extension))
        {
            if (TryParseFileName(Path.GetFileName(path), out long sequence))
            {
                result.Add((sequence, path));
            }
        }

        result.Sort(static (a, b) => b.Sequence.CompareTo(a.Sequence));
        return result;
    }

    /// <summary>Deletes checkpoints beyond the retention count and temporary files left by interrupted saves.</summary>
    private void Prune()
    {
        List<(long Sequence, string Path)> checkpoints = ListCheckpoints();
        for (int i = _options.RetainCount; i < checkpoints.Count; i++)
        {
            TryDelete(checkpoints[i].Path);
        }

        foreach (string path in Directory.EnumerateFiles(DirectoryPath, Prefix + "*" + Extension + TempSuffix))
        {
            if (TryParseFileName(Path.GetFileName(path)[..^TempSuffix.Length], out _))
            {
                TryDelete(path);
            }
        }
    }

    /// <summary>Deletes a file; a failure is left for the next save to retry (it never affects loading).</summary>
    private static void TryDelete(string path)
    {
        try
        {
            File.Delete(path);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            // Left in place: an extra old checkpoint or temporary file is harmless and the next save retries.
        }
    }
}
