namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// Invented sales of two "Crumb Lane" bakeries (all names and numbers are made up): daily totals with a weekly
/// pattern, split into a few sale lines per day; from day 28 the cinnamon buns at Mill Lane sell about 60% more
/// (a school opened round the corner), which the forecasts should notice as drift.
/// </summary>
public static class CrumbLaneTills
{
    /// <summary>The first shop day (a Monday).</summary>
    public static readonly DateOnly FirstDay = new(2025, 9, 1);

    private static readonly double[] s_week = [0.85, 0.9, 0.95, 1.0, 1.15, 1.4, 0.75];

    /// <summary>The sale lines of each day, day by day.</summary>
    /// <param name="days">How many days.</param>
    /// <returns>One list of sales per day.</returns>
    public static List<List<SaleEvent>> Days(int days)
    {
        var rng = new Random(7);
        (string Shop, string Item, double Level)[] series =
        [
            ("harbour-street", "sourdough-loaf", 40), ("harbour-street", "cinnamon-bun", 60),
            ("mill-lane", "sourdough-loaf", 28), ("mill-lane", "cinnamon-bun", 45),
        ];
        var result = new List<List<SaleEvent>>();
        for (int d = 0; d < days; d++)
        {
            var sales = new List<SaleEvent>();
            DateTime day = FirstDay.AddDays(d).ToDateTime(TimeOnly.MinValue);
            foreach (var (shop, item, level) in series)
            {
                double mean = level * s_week[d % 7] * (shop == "mill-lane" && item == "cinnamon-bun" && d >= 28 ? 1.6 : 1.0);
                int total = (int)Math.Max(0, Math.Round(mean + ((rng.NextDouble() - 0.5) * 2 * Math.Sqrt(mean))));
                for (int k = 0; k < 3; k++)
                {
                    DateTime local = day.AddHours(8 + (4 * k)).AddMinutes(rng.Next(200));
                    var soldAt = new DateTimeOffset(local, PointOfSaleApp.ShopZone.GetUtcOffset(local));
                    int quantity = k < 2 ? total / 3 : total - (2 * (total / 3));
                    sales.Add(new SaleEvent(shop, item, soldAt, quantity, $"till-1/{d}/{item}/{k}"));
                }
            }

            result.Add(sales);
        }

        return result;
    }
}
