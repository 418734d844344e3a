namespace StreamForecast;

/// <summary>
/// A per-series state that exports itself as a fixed number of plain numbers and imports them again, checked: forecasters,
/// error trackers, tracked forecasters and drift rules. The engine's snapshots are built from these exports.
/// </summary>
/// <remarks>
/// <para>The layout is private to each type and versioned with the library; an export imports into an instance created
/// from equal options. An import checks every relation a reachable state satisfies and leaves the instance unchanged when
/// it refuses.</para>
/// <para><b>Thread safety.</b> As the implementing type: one owner per series.</para>
/// </remarks>
public interface IExportableState
{
    /// <summary>How many numbers <see cref="ExportState(Span{double})"/> writes; fixed by the options.</summary>
    int StateLength { get; }

    /// <summary>Writes the full state into <paramref name="destination"/>. Allocation-free.</summary>
    /// <param name="destination">At least <see cref="StateLength"/> numbers long.</param>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is too short.</exception>
    void ExportState(Span<double> destination);

    /// <summary>Replaces the state with one exported from an instance created from equal options.</summary>
    /// <param name="state">Exactly <see cref="StateLength"/> numbers from <see cref="ExportState(Span{double})"/>.</param>
    /// <exception cref="ArgumentException">The state has the wrong length or holds values no run can reach. Nothing is imported.</exception>
    void ImportState(ReadOnlySpan<double> state);
}
