namespace StreamForecast.Streaming;

/// <summary>The positions an <see cref="IInputLog"/> holds: from <paramref name="Start"/> up to, not including, <paramref name="End"/>.</summary>
/// <param name="Start">The first position still held (everything before it was truncated); equal to <paramref name="End"/> when the log holds nothing.</param>
/// <param name="End">The position the next appended record will get: the number of records ever appended.</param>
/// <remarks>An immutable value.</remarks>
public readonly record struct InputLogRange(long Start, long End)
{
    /// <summary>How many records the log holds.</summary>
    public long Count => End - Start;
}
