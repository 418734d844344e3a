using System.Text.Json;
using System.Text.Json.Serialization;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// Reads a sale time as ISO 8601 and refuses one without a UTC offset (<c>Z</c> or <c>+hh:mm</c>): the server cannot
/// tell which clock a bare local time was read from, so it does not guess (the default reader would take the server's
/// own zone).
/// </summary>
internal sealed class OffsetRequiredConverter : JsonConverter<DateTimeOffset>
{
    /// <summary>The key in <see cref="Exception.Data"/> that marks the refusal of a time without an offset.</summary>
    public const string MissingOffsetMark = "StreamForecast.Samples.PointOfSale.MissingOffset";

    public override DateTimeOffset Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        if (reader.TokenType != JsonTokenType.String)
        {
            throw new JsonException("soldAt must be a string: an ISO 8601 time with its UTC offset, for example 2025-03-01T10:15:00+00:00.");
        }

        string text = reader.GetString()!;
        if (!reader.TryGetDateTimeOffset(out DateTimeOffset value))
        {
            throw new JsonException($"soldAt '{text}' is not an ISO 8601 time; send the time of the sale with its UTC offset, for example 2025-03-01T10:15:00+00:00.");
        }

        if (!HasOffset(text))
        {
            var missing = new JsonException($"soldAt '{text}' has no UTC offset; a time without one is ambiguous. Send the time of the sale with its offset, for example 2025-03-01T10:15:00+00:00 or 2025-03-01T10:15:00Z.");
            missing.Data[MissingOffsetMark] = true;
            throw missing;
        }

        return value;
    }

    public override void Write(Utf8JsonWriter writer, DateTimeOffset value, JsonSerializerOptions options) =>
        writer.WriteStringValue(value);

    // ISO 8601 puts the offset after the time: 'Z', or a sign after the 'T' (a '-' before it belongs to the date).
    private static bool HasOffset(string text)
    {
        int time = text.IndexOf('T', StringComparison.OrdinalIgnoreCase);
        if (time < 0)
        {
            return false;
        }

        ReadOnlySpan<char> rest = text.AsSpan(time + 1);
        return rest.EndsWith("Z", StringComparison.OrdinalIgnoreCase) || rest.IndexOfAny('+', '-') >= 0;
    }
}
