using System.Diagnostics.CodeAnalysis;
using System.Globalization;

namespace StreamForecast.Selection.Internal;

/// <summary>Throw helpers for the selection layer; every message says what was wrong and what is allowed.</summary>
internal static class SelectionThrowHelper
{
    [DoesNotReturn]
    public static void ThrowOutOfRange(string paramName, object? value, string allowed) =>
        throw new ArgumentOutOfRangeException(paramName, value,
            string.Create(CultureInfo.InvariantCulture, $"{paramName} = {value} is not allowed: {allowed}."));

    [DoesNotReturn]
    public static void ThrowArgument(string paramName, string message) =>
        throw new ArgumentException(message, paramName);

    /// <summary>Checks that every value of a history is finite.</summary>
    public static void CheckFinite(ReadOnlySpan<double> series, string paramName)
    {
        for (int i = 0; i < series.Length; i++)
        {
            if (!double.IsFinite(series[i]))
            {
                ThrowOutOfRange(paramName, series[i], string.Create(CultureInfo.InvariantCulture,
                    $"value {i} (counting from 0) of the history is not finite; every actual must be a finite number"));
            }
        }
    }

    /// <summary>Checks an optional degree of parallelism: null (one worker per core) or 1 to 4,096.</summary>
    public static int ResolveParallelism(int? maxDegreeOfParallelism, string paramName)
    {
        if (maxDegreeOfParallelism is int d && d is < 1 or > 4096)
        {
            ThrowOutOfRange(paramName, d, "the degree of parallelism must be between 1 and 4,096, or null for one worker per core");
        }

        return maxDegreeOfParallelism ?? Environment.ProcessorCount;
    }
}
