// Writes the invented example files the README's command-line section runs on:
//   bakery-sales.csv  two bakeries (north, south) x two items (loaf, cinnamon-bun) x 120 days, one row per till sale
//   bad-sales.csv     three rows, the second with a quantity that is not a number (the README's error example)
// Everything is invented: made-up shops and items, a weekly pattern, noise from a fixed-seed generator, and one
// planted story (south's cinnamon buns sell about 40% more from day 90 on, a lasting shift a drift rule should report).
// The output is the same byte for byte on every machine and .NET version: the generator is SplitMix64, implemented
// here, not System.Random, and numbers are written with the invariant culture.
// Run from the repository root: dotnet run samples/data/make-bakery-sales.cs -- samples/data
using System.Globalization;
using System.Text;

string folder = args.Length > 0 ? args[0] : ".";
Directory.CreateDirectory(folder);

var random = new SplitMix64(20250106);
var first = new DateTime(2025, 1, 6); // a Monday
const int days = 120;
(string Shop, string Item, double Mean)[] series =
[
    ("north", "loaf", 40),
    ("north", "cinnamon-bun", 55),
    ("south", "loaf", 30),
    ("south", "cinnamon-bun", 45),
];

// Monday .. Sunday: Saturdays busiest, Mondays quietest.
double[] weekday = [0.85, 0.9, 0.95, 1.0, 1.1, 1.35, 0.85];

var csv = new StringBuilder("sale_id,shop,item,sold_at,units\n");
int saleNumber = 0;
for (int day = 0; day < days; day++)
{
    DateTime date = first.AddDays(day);
    foreach ((string shop, string item, double mean) in series)
    {
        double shift = shop == "south" && item == "cinnamon-bun" && day >= 90 ? 1.4 : 1.0;
        double expected = mean * weekday[((int)date.DayOfWeek + 6) % 7] * shift;
        int total = Math.Max(0, (int)Math.Round(expected + (random.NextDouble() - 0.5) * 0.3 * expected * 2 / Math.Sqrt(3)));

        // The day's units split over sales of 1 to 6 units between 07:30 and 18:00 shop time (no offset: the README's
        // commands read these as wall-clock times in --zone Europe/Dublin).
        int minute = 7 * 60 + 30;
        int left = total;
        while (left > 0)
        {
            int units = Math.Min(left, 1 + (int)(random.NextDouble() * 6));
            minute = Math.Min(18 * 60, minute + 1 + (int)(random.NextDouble() * 1050.0 * units / Math.Max(total, 1)));
            left -= units;
            saleNumber++;
            DateTime at = date.AddMinutes(minute);
            csv.Append(CultureInfo.InvariantCulture, $"s{saleNumber:D5},{shop},{item},{at:yyyy-MM-dd'T'HH:mm},{units}\n");
        }
    }
}

File.WriteAllText(Path.Combine(folder, "bakery-sales.csv"), csv.ToString());
File.WriteAllText(Path.Combine(folder, "bad-sales.csv"),
    "sale_id,shop,item,sold_at,units\n" +
    "b1,north,loaf,2025-01-06T08:10,2\n" +
    "b2,north,loaf,2025-01-06T08:25,x1\n" +
    "b3,north,loaf,2025-01-06T08:40,1\n");
Console.WriteLine($"wrote {saleNumber} sales to {Path.Combine(folder, "bakery-sales.csv")} and 3 rows to {Path.Combine(folder, "bad-sales.csv")}");

/// <summary>SplitMix64 (Steele, Lea and Flood 2014): a small, fixed, portable generator, so the files never change.</summary>
internal sealed class SplitMix64(ulong seed)
{
    private ulong _state = seed;

    /// <summary>A double in [0, 1) from the top 53 bits.</summary>
    /// <returns>The next value.</returns>
    public double NextDouble()
    {
        ulong z = _state += 0x9E3779B97F4A7C15UL;
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        z ^= z >> 31;
        return (z >> 11) * (1.0 / (1UL << 53));
    }
}
