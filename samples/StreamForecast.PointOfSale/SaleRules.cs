using System.Globalization;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>The checks a sale passes before it reaches the engine, and the limits of a request.</summary>
public static class SaleRules
{
    /// <summary>The most sales in one batch.</summary>
    public const int MaxBatchLength = 500;

    /// <summary>The largest body of a single-sale request, in bytes.</summary>
    public const int MaxSingleBytes = 4 * 1024;

    /// <summary>The largest body of a batch request, in bytes (about 250 bytes per sale).</summary>
    public const int MaxBatchBytes = 128 * 1024;

    /// <summary>How long a post waits for its sales to be logged before it is answered 503 (the input log normally takes milliseconds).</summary>
    public static readonly TimeSpan MaxLogWait = TimeSpan.FromSeconds(5);

    /// <summary>The most units in one sale line.</summary>
    public const double MaxQuantity = 10_000;

    /// <summary>The series key of a shop and item.</summary>
    /// <param name="shop">The shop code.</param>
    /// <param name="item">The item code.</param>
    /// <returns><c>shop/item</c>.</returns>
    public static string Key(string shop, string item) => shop + "/" + item;

    /// <summary>Checks a sale against the rules and, if it passes, makes the engine's observation.</summary>
    /// <param name="sale">The sale as received.</param>
    /// <param name="now">The server's clock.</param>
    /// <param name="observation">The observation when the result is empty.</param>
    /// <returns>The reasons it was refused; empty when it passed.</returns>
    public static List<string> Check(SaleEvent? sale, DateTimeOffset now, out Observation<string> observation)
    {
        observation = default;
        var reasons = new List<string>();
        if (sale is null)
        {
            reasons.Add("The sale is missing (null).");
            return reasons;
        }

        CheckCode(sale.Shop, "shop", reasons);
        CheckCode(sale.Item, "item", reasons);
        if (sale.SoldAt is not { } soldAt)
        {
            reasons.Add("soldAt is required: the time of the sale with its UTC offset, for example 2025-03-01T10:15:00+00:00.");
        }
        else if (soldAt > now.AddMinutes(10))
        {
            reasons.Add($"soldAt {soldAt.ToString("o", CultureInfo.InvariantCulture)} is in the future; a till's clock may be at most 10 minutes ahead of the server's.");
        }
        else if (soldAt < now.AddYears(-5))
        {
            reasons.Add("soldAt is more than 5 years in the past.");
        }

        if (sale.Quantity is not { } quantity)
        {
            reasons.Add("quantity is required.");
        }
        else if (!(quantity >= 0 && quantity <= MaxQuantity))
        {
            reasons.Add($"quantity {quantity.ToString(CultureInfo.InvariantCulture)} is out of range; a sale line has 0 to 10,000 units (refunds are not sales).");
        }

        if (string.IsNullOrWhiteSpace(sale.SaleId) || sale.SaleId.Length > 80)
        {
            reasons.Add("saleId is required: the till's id of the sale line, 1 to 80 characters, so that a resent sale counts once.");
        }
        else if (!IsWellFormed(sale.SaleId))
        {
            reasons.Add("saleId holds a control character or a broken character (an unpaired UTF-16 surrogate); it must be plain text.");
        }

        if (reasons.Count == 0)
        {
            observation = new Observation<string>(Key(sale.Shop!, sale.Item!), sale.SoldAt!.Value, sale.Quantity!.Value, sale.Shop + ":" + sale.SaleId);
        }

        return reasons;
    }

    private static bool IsWellFormed(string text)
    {
        for (int i = 0; i < text.Length; i++)
        {
            char c = text[i];
            if (char.IsControl(c))
            {
                return false;
            }

            if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1]))
            {
                i++;
            }
            else if (char.IsSurrogate(c))
            {
                return false;
            }
        }

        return true;
    }

    private static void CheckCode(string? code, string name, List<string> reasons)
    {
        if (string.IsNullOrEmpty(code) || code.Length > 40)
        {
            reasons.Add($"{name} is required: 1 to 40 characters of a-z, 0-9 and '-'.");
            return;
        }

        foreach (char c in code)
        {
            if (!(c is (>= 'a' and <= 'z') or (>= '0' and <= '9') or '-'))
            {
                reasons.Add($"{name} '{code}' has the character '{c}'; only a-z, 0-9 and '-' are allowed.");
                return;
            }
        }
    }
}
