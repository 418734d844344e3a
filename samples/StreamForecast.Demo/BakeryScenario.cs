namespace StreamForecast.Demo;

/// <summary>One invented series: a bakery, an item and its daily unit sales.</summary>
/// <param name="Bakery">The bakery's name.</param>
/// <param name="Item">The item sold.</param>
/// <param name="Daily">Units sold per day, oldest first.</param>
internal sealed record BakerySeries(string Bakery, string Item, double[] Daily)
{
    public string Key => $"{Bakery}/{Item}";
}

/// <summary>
/// An invented scenario for the demo: "Crumb Lane", a chain of three neighbourhood bakeries, selling a few items
/// over two years. Each series has a base level, a weekly pattern (busy Saturdays, quiet Mondays), a gentle trend and
/// noise; one item is only sold now and then; one series shifts upward partway through (a new office opened next door);
/// and one item has a week-long two-for-one promotion that lifts its sales, then lets them dip below normal for a few days.
/// Deterministic for a given seed. All names and numbers are made up for the demo.
/// </summary>
internal static class BakeryScenario
{
    public const int Days = 2 * 364;

    /// <summary>The series whose demand shifts upward, for good, in the second year.</summary>
    public const string ShiftKey = "Station Square/cinnamon bun";

    /// <summary>The first day of the lasting shift of <see cref="ShiftKey"/> (in the second year, so the replay shows it).</summary>
    public const int ShiftStart = 500;

    /// <summary>The first day of the Mill Lane sourdough promotion (in the second year, so the replay shows it).</summary>
    public const int PromotionStart = 560;

    // Monday .. Sunday multipliers.
    private static readonly double[] s_week = [0.80, 0.90, 0.95, 1.00, 1.15, 1.45, 0.75];

    public static IReadOnlyList<BakerySeries> Generate(int seed = 2026)
    {
        var rng = new Random(seed);
        var list = new List<BakerySeries>();
        (string Bakery, double Size)[] bakeries = [("Harbour Street", 1.0), ("Mill Lane", 0.7), ("Station Square", 1.3)];
        (string Item, double Level, double TrendPerYear)[] items =
        [
            ("sourdough loaf", 40, 0.10),
            ("cinnamon bun", 65, 0.25),
            ("rye roll", 25, -0.05),
        ];

        foreach (var (bakery, size) in bakeries)
        {
            foreach (var (item, level, trend) in items)
            {
                var y = new double[Days];
                for (int d = 0; d < Days; d++)
                {
                    double baseLevel = level * size * (1 + (trend * d / 364.0));
                    if ($"{bakery}/{item}" == ShiftKey && d >= ShiftStart)
                    {
                        baseLevel *= 1.35; // the office next door opens: a sudden, lasting shift
                    }

                    if (bakery == "Mill Lane" && item == "sourdough loaf")
                    {
                        if (d is >= PromotionStart and < PromotionStart + 7)
                        {
                            baseLevel *= 1.8; // two-for-one week: sales, not demand, jump
                        }
                        else if (d is >= PromotionStart + 7 and < PromotionStart + 11)
                        {
                            baseLevel *= 0.75; // customers stocked up: a dip after the promotion
                        }
                    }

                    double mean = baseLevel * s_week[d % 7];
                    y[d] = Math.Max(0, Math.Round(mean + (Normal(rng) * Math.Sqrt(mean))));
                }

                list.Add(new BakerySeries(bakery, item, y));
            }

            // A celebration cake: ordered a few times a week at most, in lumps.
            var cakes = new double[Days];
            for (int d = 0; d < Days; d++)
            {
                cakes[d] = rng.NextDouble() < 0.22 * size ? 1 + rng.Next(0, (int)(4 * size) + 1) : 0;
            }

            list.Add(new BakerySeries(bakery, "celebration cake", cakes));
        }

        return list;
    }

    private static double Normal(Random rng)
    {
        // Box–Muller.
        double u1 = 1.0 - rng.NextDouble();
        double u2 = rng.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
