using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Tracking;

/// <content>Export and import of the tracker's state (the checks live in ErrorTracker.Validation.cs).</content>
public sealed partial class ErrorTracker
{
    /// <summary>How many numbers <see cref="ExportState(Span{double})"/> writes: 19 plus the MASE season length.</summary>
    public int StateLength => FixedStateLength + _recent.Length;

    /// <summary>Writes the full state into <paramref name="destination"/> as plain numbers.</summary>
    /// <param name="destination">At least <see cref="StateLength"/> numbers long.</param>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is too short.</exception>
    /// <remarks>Allocation-free. The layout is private to the tracker and versioned with the library.</remarks>
    public void ExportState(Span<double> destination)
    {
        if (destination.Length < StateLength)
        {
            ThrowHelper.ThrowArgument(nameof(destination), string.Create(CultureInfo.InvariantCulture, $"The destination holds {destination.Length} numbers; the tracker state needs {StateLength}."));
        }

        destination[CountIndex] = _count;
        destination[ZeroActualCountIndex] = _zeroActualCount;
        destination[ActualCountIndex] = _actualCount;
        _errorSum.CopyTo(destination.Slice(ErrorSumIndex, 2));
        _absErrorSum.CopyTo(destination.Slice(AbsErrorSumIndex, 2));
        _squaredErrorSum.CopyTo(destination.Slice(SquaredErrorSumIndex, 2));
        _percentErrorSum.CopyTo(destination.Slice(PercentErrorSumIndex, 2));
        _absActualSum.CopyTo(destination.Slice(AbsActualSumIndex, 2));
        _naiveSum.CopyTo(destination.Slice(NaiveSumIndex, 2));
        destination[SmoothedMadIndex] = _smoothedMad;
        destination[TriggErrorIndex] = _triggError;
        destination[TriggAbsErrorIndex] = _triggAbsError;
        destination[LastErrorIndex] = _lastError;
        _recent.CopyRawTo(destination.Slice(FixedStateLength, _recent.Length));
    }

    /// <summary>Replaces the state with one exported from a tracker created from equal options.</summary>
    /// <param name="state">Exactly <see cref="StateLength"/> numbers from <see cref="ExportState(Span{double})"/>.</param>
    /// <exception cref="ArgumentException">
    /// The state has the wrong length, a non-finite number, or values no sequence of periods can produce (negative
    /// counts or sums of absolute values, |RSFE| above Σ|e|, |E| above M, ...). Nothing is imported.
    /// </exception>
    public void ImportState(ReadOnlySpan<double> state)
    {
        string? problem = Validate(state);
        if (problem is not null)
        {
            ThrowInvalidState(problem);
        }

        ImportValidated(state);
    }

    /// <summary>Reads a state that <see cref="Validate"/> accepted.</summary>
    internal void ImportValidated(ReadOnlySpan<double> state)
    {
        _count = (long)state[CountIndex];
        _zeroActualCount = (long)state[ZeroActualCountIndex];
        _actualCount = (long)state[ActualCountIndex];
        _errorSum.LoadFrom(state.Slice(ErrorSumIndex, 2));
        _absErrorSum.LoadFrom(state.Slice(AbsErrorSumIndex, 2));
        _squaredErrorSum.LoadFrom(state.Slice(SquaredErrorSumIndex, 2));
        _percentErrorSum.LoadFrom(state.Slice(PercentErrorSumIndex, 2));
        _absActualSum.LoadFrom(state.Slice(AbsActualSumIndex, 2));
        _naiveSum.LoadFrom(state.Slice(NaiveSumIndex, 2));
        _smoothedMad = state[SmoothedMadIndex];
        _triggError = state[TriggErrorIndex];
        _triggAbsError = state[TriggAbsErrorIndex];
        _lastError = state[LastErrorIndex];
        _recent.LoadRaw(state[FixedStateLength..]);
    }

    /// <summary>The number of recorded actuals in a state that <see cref="Validate"/> accepted.</summary>
    internal static double ActualCountOf(ReadOnlySpan<double> state) => state[ActualCountIndex];

    /// <summary>The scored-period count held in a validated exported state.</summary>
    internal static double ScoredCountOf(ReadOnlySpan<double> state) => state[CountIndex];

    /// <summary>The last scored error held in a validated exported state (meaningful when its scored count is above 0).</summary>
    internal static double LastErrorOf(ReadOnlySpan<double> state) => state[LastErrorIndex];
}
