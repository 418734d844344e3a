namespace StreamForecast.Streaming;

/// <summary>Ready-made group functions for <see cref="EventCalendar{TKey}.GroupOf"/>.</summary>
/// <remarks>Thread-safe: the functions returned hold no state.</remarks>
public static class EventGroups
{
    /// <summary>
    /// Groups string keys by the part before the first <paramref name="separator"/>: with '/', the key
    /// "Mill Lane/sourdough loaf" is in group "Mill Lane". A key without the separator (or starting with it) is in no group.
    /// </summary>
    /// <param name="separator">The character that ends the group part of a key.</param>
    /// <returns>The group function; it allocates the group string on each call (once per series when it is created).</returns>
    public static Func<string, string?> ByKeyPrefix(char separator) => key =>
    {
        int at = key.IndexOf(separator, StringComparison.Ordinal);
        return at > 0 ? key[..at] : null;
    };
}
