using StreamForecast.Streaming;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// Invented sales of two "Crumb Lane" bakeries (all names and numbers are made up): daily totals with a weekly
/// pattern, split into a few sale lines per day; from day 28 the cinnamon buns at Mill Lane sell about 60% more
/// (a school opened round the corner), which the forecasts should notice as drift; and in the third week Mill Lane
/// runs a two-for-one week on sourdough loaves (<see cref="PromotionStartDay"/>), which the app declares as a known
/// promotion so it is not taken for drift.
/// </summary>
public static class CrumbLaneTills
{
    /// <summary>The first shop day (a Monday).</summary>
    public static readonly DateOnly FirstDay = new(2025, 9, 1);

    /// <summary>The first day (counting from <see cref="FirstDay"/>) of the Mill Lane sourdough two-for-one week.</summary>
    public const int PromotionStartDay = 14;

    /// <summary>The Mill Lane sourdough promotion week, as the app declares it: local shop days, end exclusive.</summary>
    /// <returns>The known event.</returns>
    public static KnownEvent<string> PromotionWeek()
    {
        DateTime first = FirstDay.AddDays(PromotionStartDay).ToDateTime(TimeOnly.MinValue);
        DateTime end = first.AddDays(7);
        return KnownEvent.ForSeries(
            SaleRules.Key("mill-lane", "sourdough-loaf"),
            EventKind.Promotion,
            new DateTimeOffset(first, PointOfSaleApp.ShopZone.GetUtcOffset(first)),
            new DateTimeOffset(end, PointOfSaleApp.ShopZone.GetUtcOffset(end)));
    }

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
                if (shop == "mill-lane" && item == "sourdough-loaf" && d is >= PromotionStartDay and < PromotionStartDay + 7)
                {
                    mean *= 1.8; // two for one: sales, not demand, jump
                }

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
