using System.Diagnostics.CodeAnalysis;
using System.Globalization;

namespace StreamForecast.Alerts;

/// <summary>Throw helpers for the drift rules; every message says what was wrong and what is allowed.</summary>
internal static class DriftThrowHelper
{
    [DoesNotReturn]
    public static void ThrowInvalidInput(string field, double value, string allowed, string paramName = "input") =>
        throw new ArgumentOutOfRangeException(paramName, value,
            string.Create(CultureInfo.InvariantCulture, $"DriftInput.{field} = {value} is not allowed: {allowed}. The rule's state is unchanged."));

    [DoesNotReturn]
    public static void ThrowInvalidState(string rule, string reason, string paramName = "state") =>
        throw new ArgumentException($"The state does not fit a {rule} rule: {reason}. Nothing was imported.", paramName);
}
