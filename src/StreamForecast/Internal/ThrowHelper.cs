using System.Diagnostics.CodeAnalysis;
using System.Globalization;

namespace StreamForecast.Internal;

/// <summary>Throw helpers keep the hot methods small; every message says what was wrong and what is allowed.</summary>
internal static class ThrowHelper
{
    [DoesNotReturn]
    public static void ThrowNonFiniteActual(double actual, string paramName = "actual") =>
        throw new ArgumentOutOfRangeException(paramName, actual,
            string.Create(CultureInfo.InvariantCulture, $"An actual must be a finite number; got {actual}. NaN and infinities are rejected and the state is left unchanged."));

    [DoesNotReturn]
    public static void ThrowOutsideDomain(double value, string paramName = "actual") =>
        throw new ArgumentOutOfRangeException(paramName, value,
            string.Create(CultureInfo.InvariantCulture, $"{paramName} = {value} is outside the accepted range: its magnitude must be at most {NumericDomain.MaxMagnitude:E0} (NumericDomain.MaxMagnitude). The state is left unchanged."));

    /// <summary>Checks a caller-given start value or parameter against <see cref="NumericDomain.MaxMagnitude"/>.</summary>
    public static void CheckInDomain(double value, string paramName, string what)
    {
        if (!NumericDomain.Contains(value))
        {
            ThrowOutOfRange(paramName, value, string.Create(CultureInfo.InvariantCulture, $"{what} must be a finite number of magnitude at most {NumericDomain.MaxMagnitude:E0} (NumericDomain.MaxMagnitude)"));
        }
    }

    [DoesNotReturn]
    public static void ThrowOutOfRange(string paramName, object? value, string allowed) =>
        throw new ArgumentOutOfRangeException(paramName, value,
            string.Create(CultureInfo.InvariantCulture, $"{paramName} = {value} is not allowed: {allowed}."));

    [DoesNotReturn]
    public static void ThrowOutOfRange(string paramName, DateTimeOffset value, string allowed) =>
        throw new ArgumentOutOfRangeException(paramName, value,
            string.Create(CultureInfo.InvariantCulture, $"{paramName} = {value:O} is not allowed: {allowed}."));

    [DoesNotReturn]
    public static void ThrowArgument(string paramName, string message) =>
        throw new ArgumentException(message, paramName);

    [DoesNotReturn]
    public static void ThrowNotWarm(string method) =>
        throw new InvalidOperationException(
            $"The {method} forecaster has not seen enough actuals to forecast yet; check IsWarm or call TryForecast.");

    [DoesNotReturn]
    public static void ThrowInvalidState(string method, string reason, string paramName = "state") =>
        throw new ArgumentException($"The state does not fit a {method} forecaster: {reason}. Nothing was imported.", paramName);

    /// <summary>Checks that a horizon is at least one period ahead.</summary>
    public static void CheckHorizon(int horizon)
    {
        if (horizon < 1)
        {
            ThrowOutOfRange(nameof(horizon), horizon, "the horizon counts periods ahead and must be 1 or more");
        }
    }
}
