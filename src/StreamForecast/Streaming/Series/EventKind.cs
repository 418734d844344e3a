using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>
/// What kind of known event marks a period: a <see cref="Promotion"/>, a <see cref="Closure"/>, or another kind named by
/// the user (<see cref="Named"/>). Periods marked by a known event are kept out of the error statistics and the drift
/// rules, and the lift observed during them is reported per kind (<see cref="EventLift"/>).
/// </summary>
/// <remarks>
/// <para>Kinds compare by <see cref="Name"/> (ordinal, case-sensitive); the names "promotion" and "closure" always give
/// the built-in kinds. When events of different kinds cover the same period, the period takes one kind: a closure first,
/// then a promotion, then other kinds in ordinal order of their names.</para>
/// <para><b>Thread safety.</b> Immutable and thread-safe.</para>
/// </remarks>
public sealed class EventKind : IEquatable<EventKind>
{
    /// <summary>The longest accepted name: 64 characters.</summary>
    public const int MaxNameLength = 64;

    private EventKind(string name, int rank)
    {
        Name = name;
        Rank = rank;
    }

    /// <summary>A promotion (price cut, multi-buy, advertising): sales rise above demand, then often dip.</summary>
    public static EventKind Promotion { get; } = new("promotion", 1);

    /// <summary>A closure (holiday, refit, outage): the period's sales are a known zero or near it, not a demand signal.</summary>
    public static EventKind Closure { get; } = new("closure", 0);

    /// <summary>The kind's name, for example "promotion".</summary>
    public string Name { get; }

    /// <summary>The order in which overlapping kinds win: 0 closure, 1 promotion, 2 any other kind.</summary>
    internal int Rank { get; }

    /// <summary>The kind with this name: the built-in kind for "promotion" or "closure", otherwise a user kind.</summary>
    /// <param name="name">1 to 64 characters: letters, digits, spaces, '-', '_' or '.', not starting or ending with a space.</param>
    /// <returns>The kind.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="name"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="name"/> is empty, too long or holds another character.</exception>
    /// <remarks>O(length of the name); allocates one object for a user kind.</remarks>
    public static EventKind Named(string name)
    {
        ArgumentNullException.ThrowIfNull(name);
        if (Problem(name) is { } problem)
        {
            ThrowHelper.ThrowArgument(nameof(name), problem);
        }

        return name switch
        {
            "promotion" => Promotion,
            "closure" => Closure,
            _ => new EventKind(name, 2),
        };
    }

    /// <summary>Why <paramref name="name"/> is not a valid kind name, or null when it is.</summary>
    internal static string? Problem(string name)
    {
        if (name.Length is 0 or > MaxNameLength)
        {
            return $"An event kind's name must be 1 to {MaxNameLength} characters long (it is {name.Length}).";
        }

        if (name[0] == ' ' || name[^1] == ' ')
        {
            return "An event kind's name must not start or end with a space.";
        }

        foreach (char c in name)
        {
            if (!(char.IsLetterOrDigit(c) || c is ' ' or '-' or '_' or '.'))
            {
                return $"An event kind's name may hold letters, digits, spaces, '-', '_' and '.' only; it holds '{c}' (U+{(int)c:X4}).";
            }
        }

        return null;
    }

    /// <summary>Equal when the names are equal (ordinal).</summary>
    /// <param name="other">The other kind.</param>
    /// <returns>Whether both are the same kind.</returns>
    public bool Equals(EventKind? other) => other is not null && string.Equals(Name, other.Name, StringComparison.Ordinal);

    /// <inheritdoc/>
    public override bool Equals(object? obj) => Equals(obj as EventKind);

    /// <inheritdoc/>
    public override int GetHashCode() => StringComparer.Ordinal.GetHashCode(Name);

    /// <summary>The kind's name.</summary>
    /// <returns><see cref="Name"/>.</returns>
    public override string ToString() => Name;

    /// <summary>The order in which kinds win a period they share (negative when <paramref name="a"/> wins).</summary>
    internal static int Precedence(EventKind a, EventKind b) =>
        a.Rank != b.Rank ? a.Rank.CompareTo(b.Rank) : string.CompareOrdinal(a.Name, b.Name);
}
