using System.Globalization;

namespace StreamForecast.Shared;

/// <summary>
/// The argument checks of a checkpoint store's saves, shared by the SQLite and PostgreSQL stores (this file is compiled
/// into each of them): the positions are not negative and the snapshot holds 1 to the store's limit of bytes.
/// </summary>
internal static class CheckpointSaveArguments
{
    /// <summary>Checks a save's arguments before anything is touched.</summary>
    /// <param name="snapshot">The snapshot's bytes.</param>
    /// <param name="inputPosition">The input position the snapshot accounts for.</param>
    /// <param name="expectedLatestPosition">A conditional save's expected newest position (null: none, or an unconditional save).</param>
    /// <param name="maxSnapshotLength">The store's largest snapshot, in bytes.</param>
    /// <param name="limitName">Where the limit is set, named in the message (for example <c>SqliteCheckpointStoreOptions.MaxSnapshotLength</c>).</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> or <paramref name="expectedLatestPosition"/> is negative.</exception>
    /// <exception cref="ArgumentException"><paramref name="snapshot"/> is empty or longer than <paramref name="maxSnapshotLength"/>.</exception>
    public static void Check(ReadOnlyMemory<byte> snapshot, long inputPosition, long? expectedLatestPosition, long maxSnapshotLength, string limitName)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        if (expectedLatestPosition is long expected)
        {
            ArgumentOutOfRangeException.ThrowIfNegative(expected, nameof(expectedLatestPosition));
        }

        if (snapshot.IsEmpty || snapshot.Length > maxSnapshotLength)
        {
            throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"The snapshot is {snapshot.Length} bytes; a checkpoint holds 1 to {maxSnapshotLength} bytes ({limitName})."),
                nameof(snapshot));
        }
    }
}
