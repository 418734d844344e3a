using System.Globalization;
using System.Net;
using System.Net.Http.Json;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// The second half of the smoke run: restart the server on the checkpoint the first one left and check that the
/// restored series are served; answer 20 sales, kill the server by its process id right after the last answer;
/// start a third server on the same file and check that every one of those sales is counted.
/// </summary>
public static class CrashDrill
{
    /// <summary>How long a server may take to start serving.</summary>
    public static readonly TimeSpan StartTimeout = TimeSpan.FromSeconds(60);

    /// <summary>The shop day of the drill's sales: the day after the last day of <see cref="CrumbLaneTills"/>' 42 days.</summary>
    public static readonly DateOnly SaleDay = CrumbLaneTills.FirstDay.AddDays(42);

    private static readonly string[] s_items = ["cinnamon-bun", "sourdough-loaf"];

    /// <summary>Runs the drill against the checkpoint file a first server stopped with.</summary>
    /// <param name="assemblyPath">The built server (<c>StreamForecast.PointOfSale.dll</c>).</param>
    /// <param name="checkpointFile">The checkpoint and input-log file.</param>
    /// <param name="before">What the first server answered to <c>GET /shops/mill-lane/forecasts</c> before it stopped.</param>
    /// <param name="output">Where to write what happens.</param>
    /// <returns>How many sales were answered 2xx before the kill, and how many of them the third server counts.</returns>
    /// <exception cref="InvalidOperationException">A check failed (the message says which).</exception>
    public static async Task<(int Acknowledged, int Counted)> RunAsync(string assemblyPath, string checkpointFile, IReadOnlyList<ItemForecast> before, TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(before);
        ArgumentNullException.ThrowIfNull(output);
        List<SaleEvent> acknowledged = [];
        await using (ServerProcess second = await ServerProcess.StartAsync(assemblyPath, checkpointFile, StartTimeout))
        {
            output.WriteLine($"server 2 (PID {second.Id}): {second.StartReport}");
            using var http = new HttpClient { BaseAddress = second.Address };

            // Reads after a restart show the restored series, before any day closes again.
            List<ItemForecast> after = (await http.GetFromJsonAsync<List<ItemForecast>>("/shops/mill-lane/forecasts"))!;
            if (!after.SequenceEqual(before))
            {
                throw new InvalidOperationException($"After the restart GET /shops/mill-lane/forecasts answered {after.Count} forecasts that differ from the {before.Count} served before it.");
            }

            output.WriteLine($"GET /shops/mill-lane/forecasts after the restart (last closed day {after[0].LastClosedDay:yyyy-MM-dd}): the same {after.Count} forecasts as before it");
            List<OpenAlert> alerts = (await http.GetFromJsonAsync<List<OpenAlert>>("/alerts"))!;
            output.WriteLine($"GET /alerts after the restart: {alerts.Count} open");
            foreach (OpenAlert a in alerts)
            {
                string since = a.Since is { } day ? "since " + day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) : "open before the restart";
                output.WriteLine($"  {a.Shop}/{a.Item}: {a.Rule} episode {a.EpisodeId}, {a.Direction}, {a.Severity}, {since}");
            }

            // Twenty single sales, each answered only once it is in the input log; then the server dies at once.
            for (int k = 0; k < 20; k++)
            {
                SaleEvent sale = DrillSale(k);
                using HttpResponseMessage response = await http.PostAsJsonAsync("/sales", sale);
                if (response.StatusCode != HttpStatusCode.Accepted)
                {
                    throw new InvalidOperationException($"POST /sales answered {(int)response.StatusCode} for a valid sale.");
                }

                acknowledged.Add(sale);
            }

            int pid = second.Id;
            second.Kill();
            output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{acknowledged.Count} single sales of {SaleDay:yyyy-MM-dd} at mill-lane answered 202 ({acknowledged.Sum(s => s.Quantity)} units); server 2 (PID {pid}) killed right after the last answer (Process.Kill: no stop, no checkpoint since its start)"));
        }

        await using ServerProcess third = await ServerProcess.StartAsync(assemblyPath, checkpointFile, StartTimeout);
        output.WriteLine($"server 3 (PID {third.Id}): {third.StartReport}");
        using var client = new HttpClient { BaseAddress = third.Address };

        // A till that never saw the answer to its last sale sends it again: counted once, the repeat visible as a duplicate.
        using (HttpResponseMessage resend = await client.PostAsJsonAsync("/sales", acknowledged[^1]))
        {
            ServerStatus status = (await client.GetFromJsonAsync<ServerStatus>("/status"))!;
            output.WriteLine($"a till resends its last sale (the answer never reached it): HTTP {(int)resend.StatusCode}; GET /status: {status.Counted} sales counted since the start, {status.Duplicates} duplicate ignored");
        }

        // A sale the next morning closes the drill's day for each item; its total must be the acknowledged sales'.
        int counted = 0;
        output.WriteLine($"a sale on the next morning closes {SaleDay:yyyy-MM-dd} for each item:");
        foreach (string item in s_items)
        {
            DateTime morning = SaleDay.AddDays(1).ToDateTime(new TimeOnly(9, 0));
            var closing = new SaleEvent("mill-lane", item, new DateTimeOffset(morning, PointOfSaleApp.ShopZone.GetUtcOffset(morning)), 1, $"till-3/close/{item}");
            using (HttpResponseMessage response = await client.PostAsJsonAsync("/sales", closing))
            {
                response.EnsureSuccessStatusCode();
            }

            ItemForecast closed = await WaitForClosedDayAsync(client, item, SaleDay);
            List<SaleEvent> mine = acknowledged.FindAll(s => s.Item == item);
            double units = mine.Sum(s => s.Quantity!.Value);
            if (closed.LastDaySold != units)
            {
                throw new InvalidOperationException(string.Create(CultureInfo.InvariantCulture,
                    $"mill-lane/{item} sold {closed.LastDaySold} on {SaleDay:yyyy-MM-dd} after the restart, but the {mine.Count} sales answered 202 before the kill hold {units} units."));
            }

            counted += mine.Count;
            output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"  {item,-15} sold {closed.LastDaySold,3} = the {mine.Count} sales answered 202 before the kill ({units} units); next day {closed.NextDay:0.0}"));
        }

        output.WriteLine($"every sale answered 2xx before the kill is counted: {counted} of {acknowledged.Count}");
        await third.StopAsync(TimeSpan.FromSeconds(30));
        return (acknowledged.Count, counted);
    }

    private static SaleEvent DrillSale(int k)
    {
        DateTime local = SaleDay.ToDateTime(new TimeOnly(8, 0)).AddMinutes(25 * k);
        return new SaleEvent(
            "mill-lane", s_items[k % 2], new DateTimeOffset(local, PointOfSaleApp.ShopZone.GetUtcOffset(local)), 1 + (k * 7 % 5) + (k % 2 == 0 ? 2 : 0), $"till-3/{k}");
    }

    private static async Task<ItemForecast> WaitForClosedDayAsync(HttpClient http, string item, DateOnly day)
    {
        // Forecasts are published from the engine's loop as the day closes: poll, with a deadline.
        using var deadline = new CancellationTokenSource(TimeSpan.FromSeconds(20));
        while (true)
        {
            using HttpResponseMessage response = await http.GetAsync($"/shops/mill-lane/items/{item}/forecast", deadline.Token);
            if (response.IsSuccessStatusCode)
            {
                ItemForecast f = (await response.Content.ReadFromJsonAsync<ItemForecast>(deadline.Token))!;
                if (f.LastClosedDay >= day)
                {
                    return f;
                }
            }

            await Task.Delay(25, deadline.Token);
        }
    }
}
