using System.Globalization;

namespace StreamForecast.Streaming;

/// <summary>
/// The rule every store with named streams (SQLite, PostgreSQL, their input logs, the Orleans grain storage) applies to
/// a stream name, stated once so a name valid for one store is valid for every other: at most
/// <see cref="MaxLength"/> characters, no control characters, well-formed UTF-16 (names are stored as UTF-8).
/// </summary>
/// <remarks>Thread safety: stateless; thread-safe.</remarks>
public static class CheckpointStreamName
{
    /// <summary>The longest stream name accepted: 256 characters.</summary>
    public const int MaxLength = 256;

    /// <summary>Checks a stream name.</summary>
    /// <param name="streamName">The name; "" (the default stream) is valid.</param>
    /// <param name="paramName">The parameter name to report.</param>
    /// <exception cref="ArgumentNullException"><paramref name="streamName"/> is null.</exception>
    /// <exception cref="ArgumentException">The name is too long, holds a control character or an unpaired surrogate.</exception>
    /// <remarks>O(length), no allocation unless it throws.</remarks>
    public static void Validate(string streamName, string paramName = "streamName")
    {
        ArgumentNullException.ThrowIfNull(streamName, paramName);
        if (streamName.Length > MaxLength)
        {
            throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"The stream name is {streamName.Length} characters long; a stream name has at most {MaxLength} characters."),
                paramName);
        }

        for (int i = 0; i < streamName.Length; i++)
        {
            char c = streamName[i];
            if (char.IsControl(c))
            {
                throw new ArgumentException(
                    string.Create(CultureInfo.InvariantCulture, $"The stream name holds the control character U+{(int)c:X4} at index {i}; a stream name may hold any characters except control characters."),
                    paramName);
            }

            if (char.IsHighSurrogate(c) && i + 1 < streamName.Length && char.IsLowSurrogate(streamName[i + 1]))
            {
                i++;
            }
            else if (char.IsSurrogate(c))
            {
                throw new ArgumentException(
                    string.Create(CultureInfo.InvariantCulture, $"The stream name holds an unpaired surrogate U+{(int)c:X4} at index {i}; a stream name must be well-formed UTF-16, since it is stored as UTF-8."),
                    paramName);
            }
        }
    }
}
