using System.Globalization;
using FsCheck;
using FsCheck.Fluent;

namespace StreamForecast.Tests.Infrastructure;

/// <summary>
/// How many cases each property family runs, set in one place: <see cref="Default"/> (10,000) in CI, or the value of the
/// environment variable <c>STREAMFORECAST_PROPERTY_CASES</c> (for example 100000) for long runs.
/// </summary>
/// <remarks>
/// A family is one property (one <see cref="Check"/> call) that covers one exportable type. Use it from a
/// <c>[Fact]</c>: <c>PropertyCases.Check(Prop.ForAll(...))</c>; a failure throws with the counterexample and the seed.
/// </remarks>
public static class PropertyCases
{
    /// <summary>The environment variable that overrides <see cref="Default"/>.</summary>
    public const string EnvironmentVariable = "STREAMFORECAST_PROPERTY_CASES";

    /// <summary>The number of cases per property family when the environment variable is not set: 10,000.</summary>
    public const int Default = 10_000;

    /// <summary>The number of cases each property family runs.</summary>
    public static int PerFamily { get; } = Read();

    /// <summary>The FsCheck configuration: <see cref="PerFamily"/> cases, throw on failure, quiet on success.</summary>
    public static Config Config => Config.QuickThrowOnFailure.WithMaxTest(PerFamily).WithQuietOnSuccess(true);

    /// <summary>Runs <paramref name="property"/> for <see cref="PerFamily"/> cases; throws on the first counterexample.</summary>
    public static void Check(Property property) => FsCheck.Check.One(Config, property);

    /// <summary>Runs an expensive <paramref name="property"/> (one that starts engines, say) for <paramref name="cases"/> cases.</summary>
    /// <param name="property">The property.</param>
    /// <param name="cases">The number of cases; scale it from <see cref="PerFamily"/> so long runs lengthen it too.</param>
    public static void Check(Property property, int cases) =>
        FsCheck.Check.One(Config.QuickThrowOnFailure.WithMaxTest(cases).WithQuietOnSuccess(true), property);

    private static int Read()
    {
        string? text = Environment.GetEnvironmentVariable(EnvironmentVariable);
        if (string.IsNullOrWhiteSpace(text))
        {
            return Default;
        }

        return int.TryParse(text, NumberStyles.None, CultureInfo.InvariantCulture, out int cases) && cases > 0
            ? cases
            : throw new InvalidOperationException($"{EnvironmentVariable} must be a whole number above 0 (for example 100000); it is '{text}'.");
    }
}

/// <summary>
/// Generators for hostile input, shared by every exportable state's properties (trackers, rules, forecasters): long runs
/// of zeros, constant runs, values at and near ±<see cref="NumericDomain.MaxMagnitude"/>, tiny and subnormal values,
/// alternating extremes, ordinary noise, and (in <see cref="WithRefused"/>) values the library must refuse mixed in.
/// </summary>
public static class HostileSeries
{
    private const double Limit = NumericDomain.MaxMagnitude;

    /// <summary>Finite values within ±<see cref="NumericDomain.MaxMagnitude"/>, weighted towards the hostile ones.</summary>
    public static Gen<double> AcceptedValue { get; } = Gen.Frequency(
        (3, Gen.Constant(0.0)),
        (1, Gen.Constant(-0.0)),
        (2, Gen.Elements(Limit, -Limit, Math.BitDecrement(Limit), -Math.BitDecrement(Limit), Limit / 2, -Limit / 3)),
        (2, Gen.Choose(0, 1_000_000).Select(k => Limit - k)),
        (1, Gen.Choose(0, 1_000_000).Select(k => k - Limit)),
        (1, Gen.Elements(double.Epsilon, -double.Epsilon, 1e-300, -1e-300, 2.2250738585072014e-308, 1e-160, 1e-155, 1e-20)),
        (4, Gen.Choose(-100_000, 100_000).Select(i => i / 100.0)),
        (2, Gen.Choose(-5, 5).Select(i => (double)i)));

    /// <summary>
    /// Values the library refuses: NaN, the infinities, and finite magnitudes beyond ±<see cref="NumericDomain.MaxMagnitude"/>
    /// (from the next double above the limit up to <see cref="double.MaxValue"/>).
    /// </summary>
    public static Gen<double> RefusedValue { get; } = Gen.Elements(
        double.NaN, double.PositiveInfinity, double.NegativeInfinity,
        Math.BitIncrement(Limit), -Math.BitIncrement(Limit), 2 * Limit, 1e16, -1e16, 1e100, 1e300, double.MaxValue, -double.MaxValue);

    /// <summary>
    /// A series of up to <paramref name="maxLength"/> accepted values, built from runs: zeros (up to 80 long), a constant,
    /// ± alternation of one value, a ramp next to the limit, and ordinary noise.
    /// </summary>
    public static Gen<double[]> Accepted(int maxLength = 200) =>
        Gen.Choose(0, maxLength).SelectMany(length => Gen.Choose(1, 12).SelectMany(k => Segment.ArrayOf(k)).Select(segments => Concat(segments, length)));

    /// <summary>
    /// As <see cref="Accepted"/>, with refused values (<see cref="RefusedValue"/>) mixed in at about one position in eight.
    /// A refused value must change nothing: every property feeding these checks that the state is bit-for-bit unchanged
    /// after a refusal.
    /// </summary>
    public static Gen<double[]> WithRefused(int maxLength = 200) =>
        Accepted(maxLength).SelectMany(series => Gen.Frequency((7, Gen.Constant(false)), (1, Gen.Constant(true))).ArrayOf(series.Length)
            .SelectMany(flags => RefusedValue.ArrayOf(series.Length).Select(refused =>
            {
                var mixed = (double[])series.Clone();
                for (int i = 0; i < mixed.Length; i++)
                {
                    if (flags[i])
                    {
                        mixed[i] = refused[i];
                    }
                }

                return mixed;
            })));

    /// <summary>Single values, refused ones mixed in at about one in eight.</summary>
    public static Gen<double> AnyValue { get; } = Gen.Frequency((7, AcceptedValue), (1, RefusedValue));

    /// <summary>An arbitrary for <see cref="WithRefused"/> that shrinks by dropping values.</summary>
    /// <param name="maxLength">The longest series.</param>
    /// <returns>The arbitrary.</returns>
    public static Arbitrary<double[]> ArbitraryWithRefused(int maxLength = 200) => Arb.From(WithRefused(maxLength), Shrink);

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

    private static Gen<double[]> Segment { get; } = Gen.Frequency(
        (3, Gen.Choose(1, 80).Select(n => new double[n])),
        (2, Gen.Choose(1, 40).SelectMany(n => AcceptedValue.Select(v => Enumerable.Repeat(v, n).ToArray()))),
        (1, Gen.Choose(1, 20).SelectMany(n => AcceptedValue.Select(v => Enumerable.Range(0, n).Select(i => i % 2 == 0 ? v : -v).ToArray()))),
        (1, Gen.Choose(1, 20).SelectMany(n => Gen.Elements(1.0, -1.0).Select(sign => Enumerable.Range(0, n).Select(i => sign * (Limit - i)).ToArray()))),
        (3, Gen.Choose(1, 20).SelectMany(n => AcceptedValue.ArrayOf(n))));

    private static double[] Concat(double[][] segments, int length)
    {
        var series = new double[length];
        int filled = 0;
        for (int s = 0; filled < length; s++)
        {
            double[] segment = segments[s % segments.Length];
            int take = Math.Min(segment.Length, length - filled);
            Array.Copy(segment, 0, series, filled, take);
            filled += take;
        }

        return series;
    }
}
