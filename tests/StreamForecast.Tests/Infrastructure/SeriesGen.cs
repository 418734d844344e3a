using FsCheck;
using FsCheck.Fluent;

namespace StreamForecast.Tests.Infrastructure;

/// <summary>Which values a generated series may take.</summary>
public enum SeriesDomain
{
    /// <summary>Any finite value in [−1000, 1000].</summary>
    Real,

    /// <summary>Strictly positive values in [1, 1000] (multiplicative methods).</summary>
    Positive,

    /// <summary>Non-negative demand with many zeros (intermittent methods).</summary>
    Intermittent,
}

/// <summary>FsCheck generators for random finite series.</summary>
public static class SeriesGen
{
    /// <summary>A series of 0 to <paramref name="maxLength"/> values from <paramref name="domain"/>, with two decimals.</summary>
    public static Gen<double[]> Series(SeriesDomain domain, int maxLength = 150)
    {
        Gen<double> value = domain switch
        {
            SeriesDomain.Positive => Gen.Choose(100, 100_000).Select(i => i / 100.0),
            SeriesDomain.Intermittent => Gen.Frequency(
                (3, Gen.Constant(0.0)),
                (2, Gen.Choose(1, 5000).Select(i => i / 100.0))),
            _ => Gen.Choose(-100_000, 100_000).Select(i => i / 100.0),
        };
        return Gen.Choose(0, maxLength).SelectMany(n => value.ArrayOf(n));
    }

    /// <summary>An arbitrary (generator, shrinking by dropping values) for <see cref="Series"/>.</summary>
    public static Arbitrary<double[]> Arbitrary(SeriesDomain domain, int maxLength = 150) =>
        Arb.From(Series(domain, maxLength), Shrink);

    private static IEnumerable<double[]> Shrink(double[] series)
    {
        if (series.Length == 0)
        {
            yield break;
        }

        yield return series[..(series.Length / 2)];
        yield return series[..^1];
        yield return series[1..];
    }
}

/// <summary>Relative-tolerance comparisons for tests.</summary>
public static class Approx
{
    /// <summary>Whether <paramref name="actual"/> is within <paramref name="relative"/> of <paramref name="expected"/>, scaled by <paramref name="scale"/> (at least 1).</summary>
    public static bool Close(double expected, double actual, double relative, double scale = 1.0)
    {
        if (double.IsNaN(expected) || double.IsNaN(actual))
        {
            return double.IsNaN(expected) && double.IsNaN(actual);
        }

        double s = Math.Max(Math.Max(Math.Abs(expected), Math.Abs(actual)), Math.Max(scale, 1.0));
        return Math.Abs(expected - actual) <= relative * s;
    }

    /// <summary>Asserts <see cref="Close"/> with a message that shows both values.</summary>
    public static void Equal(double expected, double actual, double relative, string? what = null)
    {
        Assert.True(Close(expected, actual, relative), $"{what} expected {expected:R}, got {actual:R} (relative tolerance {relative:G3})");
    }
}
