using System.Globalization;
using System.Net.Http.Json;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using StreamForecast.Samples.PointOfSale;

// The point-of-sale backend. `dotnet run` serves the API on the URL in appsettings.json until stopped;
// `--smoke` runs the server as a child process on a free loopback port, plays a few weeks of invented till traffic
// through real HTTP, restarts it, kills it by process id right after answering sales, restarts it again and checks
// that every answered sale is counted (CI runs this).
if (args.Contains("--smoke"))
{
    return await SmokeRun.RunAsync(Console.Out);
}

bool stopWhenInputCloses = args.Contains(ServerProcess.StopWhenInputClosesSwitch);
WebApplication app = PointOfSaleApp.Build([.. args.Where(a => a != ServerProcess.StopWhenInputClosesSwitch)]);
await app.StartAsync();
string served = app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.First();
Console.WriteLine($"{ServerProcess.ReadyPrefix}{served}; {PointOfSaleApp.DescribeStart(app.Services.GetRequiredService<StreamForecast.Hosting.HostedForecastEngine<string>>().Start)}");
if (stopWhenInputCloses)
{
    // Run by a parent process (the smoke run, the tests): closing standard input asks for a graceful stop.
    _ = Task.Run(async () =>
    {
        await Console.In.ReadToEndAsync();
        app.Lifetime.StopApplication();
    });
}

await app.WaitForShutdownAsync();
return 0;

namespace StreamForecast.Samples.PointOfSale
{
    /// <summary>
    /// The bounded demonstration run: the server as a child process on a loopback port, a client playing invented till
    /// traffic, then the crash drill (<see cref="CrashDrill"/>): restart, kill by process id, restart, every answered sale counted.
    /// </summary>
    public static class SmokeRun
    {
        /// <summary>Runs the demonstration and writes what the API answered.</summary>
        /// <param name="output">Where to write.</param>
        /// <returns>0 on success.</returns>
        /// <exception cref="InvalidOperationException">A check of the crash drill failed.</exception>
        public static async Task<int> RunAsync(TextWriter output)
        {
            string data = Path.Combine(Path.GetTempPath(), "streamforecast-pos-" + Guid.NewGuid().ToString("N"));
            Directory.CreateDirectory(data);
            string file = Path.Combine(data, "point-of-sale.db");
            string server = typeof(SmokeRun).Assembly.Location;
            try
            {
                List<ItemForecast> before;
                await using (ServerProcess first = await ServerProcess.StartAsync(server, file, CrashDrill.StartTimeout))
                {
                    output.WriteLine($"server 1 (PID {first.Id}): {first.StartReport}");
                    using var http = new HttpClient { BaseAddress = first.Address };
                    await PlayAsync(http, output);
                    before = (await http.GetFromJsonAsync<List<ItemForecast>>("/shops/mill-lane/forecasts"))!;
                    int exit = await first.StopAsync(TimeSpan.FromSeconds(30));
                    output.WriteLine($"server 1 stopped (exit code {exit}); its on-stop checkpoint holds every sale it took");
                }

                await CrashDrill.RunAsync(server, file, before, output);
                return 0;
            }
            finally
            {
                Directory.Delete(data, recursive: true);
            }
        }

        /// <summary>Plays the till traffic against a running API and writes its answers.</summary>
        /// <param name="http">A client for the API.</param>
        /// <param name="output">Where to write.</param>
        /// <returns>A task.</returns>
        public static async Task PlayAsync(HttpClient http, TextWriter output)
        {
            const int days = 42;
            List<List<SaleEvent>> tills = CrumbLaneTills.Days(days);
            int accepted = 0, rejected = 0;
            foreach (List<SaleEvent> day in tills)
            {
                using HttpResponseMessage response = await http.PostAsJsonAsync("/sales/batch", new SaleBatch(day));
                BatchResult result = (await response.EnsureSuccessStatusCode().Content.ReadFromJsonAsync<BatchResult>())!;
                accepted += result.Accepted;
                rejected += result.Rejected.Count;
            }

            output.WriteLine($"posted {days} shop days of invented sales in {days} batches: {accepted} sales accepted, {rejected} rejected");

            // A till with a bug: two good sales, a negative quantity and a shop name that is not a code.
            DateTimeOffset lastDay = tills[^1][0].SoldAt!.Value;
            SaleBatch bad = new(
            [
                new SaleEvent("harbour-street", "sourdough-loaf", lastDay.AddHours(1), 2, "till-2/a"),
                new SaleEvent("harbour-street", "sourdough-loaf", lastDay.AddHours(1), -3, "till-2/b"),
                new SaleEvent("Harbour Street", "sourdough-loaf", lastDay.AddHours(1), 1, "till-2/c"),
                new SaleEvent("harbour-street", "cinnamon-bun", lastDay.AddHours(2), 4, "till-2/d"),
            ]);
            using (HttpResponseMessage response = await http.PostAsJsonAsync("/sales/batch", bad))
            {
                BatchResult result = (await response.Content.ReadFromJsonAsync<BatchResult>())!;
                output.WriteLine($"a batch with two bad sales: HTTP {(int)response.StatusCode}, {result.Accepted} accepted, {result.Rejected.Count} rejected");
                foreach (RejectedSale r in result.Rejected)
                {
                    output.WriteLine($"  sale {r.Index}: {string.Join(" ", r.Reasons)}");
                }
            }

            using (var huge = new StringContent("{\"sales\":[" + string.Join(",", Enumerable.Repeat("{\"shop\":\"mill-lane\"}", 8000)) + "]}", System.Text.Encoding.UTF8, "application/json"))
            using (HttpResponseMessage response = await http.PostAsync("/sales/batch", huge))
            {
                output.WriteLine($"a {huge.Headers.ContentLength / 1024} KiB batch: HTTP {(int)response.StatusCode} {await Title(response)}");
            }

            // Forecasts are published as shop days close; wait until the board shows the last closed day.
            DateOnly lastClosed = CrumbLaneTills.FirstDay.AddDays(days - 2);
            List<ItemForecast> forecasts = [];
            for (int attempt = 0; attempt < 200; attempt++)
            {
                forecasts = (await http.GetFromJsonAsync<List<ItemForecast>>("/shops/mill-lane/forecasts"))!;
                if (forecasts.Count == 2 && forecasts.TrueForAll(f => f.LastClosedDay == lastClosed))
                {
                    break;
                }

                await Task.Delay(25);
            }

            output.WriteLine($"GET /shops/mill-lane/forecasts (last closed day {lastClosed:yyyy-MM-dd}):");
            foreach (ItemForecast f in forecasts)
            {
                output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"  {f.Item,-15} sold {f.LastDaySold,3}; next day {f.NextDay:0.0} (80%: {f.NextDayLow:0.0} to {f.NextDayHigh:0.0}); MAD {f.Mad:0.00}, tracking signal {f.TrackingSignal:0.00}"));
            }

            List<OpenAlert> alerts = (await http.GetFromJsonAsync<List<OpenAlert>>("/alerts"))!;
            output.WriteLine($"GET /alerts: {alerts.Count} open");
            foreach (OpenAlert a in alerts)
            {
                output.WriteLine($"  {a.Shop}/{a.Item}: {a.Rule} episode {a.EpisodeId}, {a.Direction}, {a.Severity}, since {a.Since:yyyy-MM-dd}");
            }

            // The declared promotion, in the shop's words: when it applied, how it sold, and that it was not taken for drift.
            foreach (EventReport e in (await http.GetFromJsonAsync<List<EventReport>>("/events"))!)
            {
                output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"declared {e.Kind} applied to {e.Shop} {e.Item} on {e.Days} days, {e.FirstDay:yyyy-MM-dd} to {e.LastDay:yyyy-MM-dd}: they sold {e.SoldVsForecast:0.0} times the forecast and are left out of the forecast-error figures; {(e.AlertsRaised == 0 ? "no drift alert was" : e.AlertsRaised == 1 ? "1 drift alert was" : e.AlertsRaised + " drift alerts were")} raised for this item during it or in the week after"));
            }
        }

        private static async Task<string> Title(HttpResponseMessage response)
        {
            var problem = await response.Content.ReadFromJsonAsync<Microsoft.AspNetCore.Mvc.ProblemDetails>();
            return problem?.Title ?? string.Empty;
        }
    }
}
