using FsCheck;
using FsCheck.Fluent;

namespace StreamForecast.Tests.Infrastructure;

/// <summary>
/// Hostile input sequences for round-trip and no-freeze properties: long runs of zeros, constant runs, values at and
/// near the accepted limit (±<see cref="NumericDomain.MaxMagnitude"/>), tiny and subnormal values, sign flips, and
/// refused values (NaN, infinities, magnitudes beyond the limit, negatives for methods that refuse them) mixed in.
/// </summary>
public static class HostileInput
{
    private const double Limit = NumericDomain.MaxMagnitude;

    /// <summary>Single values a hostile sequence is built from, refused ones included.</summary>
    public static Gen<double> Value { get; } = Gen.Frequency(
        (6, Gen.Choose(-100_000, 100_000).Select(i => i / 100.0)),
        (2, Gen.Constant(0.0)),
        (2, Gen.Elements(Limit, -Limit, Limit * (1 - 1e-16), -Limit * (1 - 1e-16), Limit / 2, 9.007199254740991e15 / 9.007199254740992, 1e14 + 0.5)),
        (1, Gen.Choose(1, 1_000_000).Select(i => Limit * i / 1_000_000.0)),
        (1, Gen.Elements(double.Epsilon, -double.Epsilon, 1e-300, -1e-300, 2.2250738585072014e-308, 1e-15, 0.1, 0.7)),
        (1, Gen.Elements(double.NaN, double.PositiveInfinity, double.NegativeInfinity, 1e308, -1e308, double.MaxValue, Limit * 1.0000001, -Limit * 1.0000001)));

    /// <summary>A run: one value repeated (a long zero run or constant stretch), or fresh values.</summary>
    private static Gen<double[]> Run { get; } = Gen.Frequency(
        (3, Gen.Choose(1, 8).SelectMany(n => Value.ArrayOf(n))),
        (2, Gen.Choose(5, 60).SelectMany(n => Gen.Constant(0.0).Select(z => Enumerable.Repeat(z, n).ToArray()))),
        (1, Gen.Choose(5, 30).SelectMany(n => Value.Select(v => Enumerable.Repeat(v, n).ToArray()))));

    /// <summary>A sequence of 0 to about 120 values made of runs.</summary>
    public static Gen<double[]> Sequence { get; } =
        Gen.Choose(0, 6).SelectMany(k => Run.ArrayOf(k)).Select(runs => runs.SelectMany(r => r).ToArray());

    /// <summary>An arbitrary for <see cref="Sequence"/> that shrinks by dropping values.</summary>
    public static Arbitrary<double[]> Arbitrary() => Arb.From(Sequence, Shrink);

    private static IEnumerable<double[]> Shrink(double[] values)
    {
        if (values.Length == 0)
        {
            yield break;
        }

        yield return values[..(values.Length / 2)];
        yield return values[(values.Length / 2)..];
        yield return values[..^1];
        yield return values[1..];
    }
}

/// <summary>
/// How many generated cases the trust properties run: 10,000 per property by default (what CI runs); set the
/// environment variable <c>STREAMFORECAST_PROPERTY_CASES</c> (for example 100000) for a long run.
/// </summary>
public static class PropertyRuns
{
    /// <summary>The number of cases per property.</summary>
    public static int Cases { get; } =
        int.TryParse(Environment.GetEnvironmentVariable("STREAMFORECAST_PROPERTY_CASES"), out int n) && n > 0 ? n : 10_000;

    /// <summary>Runs <paramref name="property"/> <see cref="Cases"/> times and throws on the first failure (after shrinking).</summary>
    /// <param name="property">The property.</param>
    /// <param name="cases">Overrides <see cref="Cases"/> for an expensive property (scaled by the same variable).</param>
    public static void Check(Property property, int? cases = null) =>
        FsCheck.Check.One(Config.QuickThrowOnFailure.WithMaxTest(cases ?? Cases).WithQuietOnSuccess(true), property);
}
