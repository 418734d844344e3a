using System.Collections.Concurrent;
using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using StreamForecast.Samples.PointOfSale;
using Xunit.Abstractions;

namespace StreamForecast.Hosting.Tests.Samples;

/// <summary>
/// The point-of-sale server as real child processes (<c>dotnet StreamForecast.PointOfSale.dll</c>), killed by process id
/// while tills are posting: every sale answered 2xx before the kill is counted after the restart, and resending the
/// unanswered ones (as tills do) makes every sale count exactly once.
/// </summary>
public sealed class PointOfSaleKillTests(ITestOutputHelper log) : IDisposable
{
    private const string Shop = "quay-side";
    private const int Tills = 4;
    private const int SalesPerTill = 50;
    private const int KillAfter = 120;
    private static readonly string[] s_items = ["barm-cake", "oat-biscuit", "rye-roll", "scone", "soda-bread", "tea-loaf"];
    private static readonly DateOnly s_firstDay = new(2025, 9, 29);
    private readonly TempPath _temp = new();

    public void Dispose() => _temp.Dispose();

    /// <summary>The sample as CI builds it, beside this test project: samples/StreamForecast.PointOfSale/bin/&lt;configuration&gt;/&lt;framework&gt;.</summary>
    private static string ServerAssembly
    {
        get
        {
            var testDir = new DirectoryInfo(AppContext.BaseDirectory.TrimEnd(Path.DirectorySeparatorChar));
            DirectoryInfo repo = testDir.Parent!.Parent!.Parent!.Parent!.Parent!;
            string path = Path.Combine(repo.FullName, "samples", "StreamForecast.PointOfSale", "bin", testDir.Parent!.Name, testDir.Name, "StreamForecast.PointOfSale.dll");
            Assert.True(File.Exists(path), $"the point-of-sale sample was not built at {path}");
            return path;
        }
    }

    [Fact]
    public async Task Restart_AfterKillMidStream_CountsEveryAcknowledgedSaleAndEachResentOneOnce()
    {
        var clock = Stopwatch.StartNew();
        string file = _temp.File("point-of-sale.db");
        string server = ServerAssembly;

        // Server A: the first sales of day 1 and one of day 2 per item (closing day 1), then a graceful stop: its
        // on-stop checkpoint holds all of them.
        List<SaleEvent> before = [.. s_items.SelectMany((item, i) => new[]
        {
            Sale(item, s_firstDay, 9, i, 2 + i, "a"), Sale(item, s_firstDay, 13, i, 3, "b"), Sale(item, s_firstDay.AddDays(1), 8, i, 1, "c"),
        })];
        await using (ServerProcess a = await ServerProcess.StartAsync(server, file, CrashDrill.StartTimeout))
        {
            Assert.StartsWith("started empty", a.StartReport, StringComparison.Ordinal);
            using var http = new HttpClient { BaseAddress = a.Address };
            using HttpResponseMessage response = await http.PostAsJsonAsync("/sales/batch", new SaleBatch(before));
            Assert.Equal(before.Count, (await response.EnsureSuccessStatusCode().Content.ReadFromJsonAsync<BatchResult>())!.Accepted);
            Assert.Equal(0, await a.StopAsync(TimeSpan.FromSeconds(30)));
        }

        // Server B: four tills post single sales of day 2 at once; the server is killed by its id right after the
        // 120th answer, with other posts in flight.
        List<SaleEvent> stream = [.. Enumerable.Range(0, Tills * SalesPerTill).Select(n =>
            Sale(s_items[n % s_items.Length], s_firstDay.AddDays(1), 9 + (n % 10), n, 1 + (n % 7), "t"))];
        var answered = new ConcurrentDictionary<string, SaleEvent>();
        int pid;
        await using (ServerProcess b = await ServerProcess.StartAsync(server, file, CrashDrill.StartTimeout))
        {
            pid = b.Id;
            Assert.Equal($"restored {s_items.Length} series from the checkpoint at input position {before.Count}, then replayed 0 logged sales (0 refused)", b.StartReport);
            using var http = new HttpClient { BaseAddress = b.Address };
            int acknowledged = 0;
            await Task.WhenAll(Enumerable.Range(0, Tills).Select(till => Task.Run(async () =>
            {
                for (int i = till; i < stream.Count; i += Tills)
                {
                    HttpResponseMessage response;
                    try
                    {
                        response = await http.PostAsJsonAsync("/sales", stream[i]);
                    }
                    catch (HttpRequestException)
                    {
                        return; // the server is gone: this till stops, its unanswered sales wait for a resend
                    }

                    using (response)
                    {
                        Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
                        answered[stream[i].SaleId!] = stream[i];
                        if (Interlocked.Increment(ref acknowledged) == KillAfter)
                        {
                            b.Kill();
                        }
                    }
                }
            })));
        }

        List<SaleEvent> unanswered = stream.FindAll(s => !answered.ContainsKey(s.SaleId!));
        // Mid-stream: the kill came after the 120th answer (answers already on their way may still arrive) and before the end.
        Assert.InRange(answered.Count, KillAfter, stream.Count - 1);

        // Server C: restores the checkpoint and replays the log; every answered sale is in the log.
        await using ServerProcess c = await ServerProcess.StartAsync(server, file, CrashDrill.StartTimeout);
        using var client = new HttpClient { BaseAddress = c.Address };
        ServerStatus restarted = (await client.GetFromJsonAsync<ServerStatus>("/status"))!;
        Assert.Equal(s_items.Length, restarted.RestoredSeries);
        Assert.Equal(before.Count, restarted.CheckpointPosition);
        Assert.InRange(restarted.ReplayedSales, answered.Count, stream.Count);
        Assert.Equal(0, restarted.RefusedOnReplay);
        Assert.Equal(restarted.ReplayedSales, restarted.Counted);
        Assert.Equal(0, restarted.Duplicates + restarted.Late + restarted.Rejected);

        // The tills resend what was never answered: those already logged are ignored as duplicates, the rest count.
        foreach (SaleEvent sale in unanswered)
        {
            using HttpResponseMessage response = await client.PostAsJsonAsync("/sales", sale);
            Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
        }

        ServerStatus resent = (await client.GetFromJsonAsync<ServerStatus>("/status"))!;
        Assert.Equal(stream.Count, resent.Counted);
        Assert.Equal(restarted.ReplayedSales - answered.Count, resent.Duplicates);

        // Day 2 closes with a sale of day 3 per item: each item's day total is every sale of that day, each once.
        foreach (string item in s_items)
        {
            using HttpResponseMessage response = await client.PostAsJsonAsync("/sales", Sale(item, s_firstDay.AddDays(2), 9, 0, 1, "close"));
            Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
        }

        foreach (string item in s_items)
        {
            ItemForecast closed = await WaitForClosedDayAsync(client, item, s_firstDay.AddDays(1));
            double expected = before.Concat(stream).Where(s => s.Item == item && DateOnly.FromDateTime(s.SoldAt!.Value.DateTime) == s_firstDay.AddDays(1)).Sum(s => s.Quantity!.Value);
            Assert.Equal(expected, closed.LastDaySold);
        }

        Assert.Equal(0, await c.StopAsync(TimeSpan.FromSeconds(30)));
        log.WriteLine($"killed PID {pid} after {answered.Count} of {stream.Count} sales were answered; {restarted.ReplayedSales} replayed from the log; " +
            $"{unanswered.Count} resent, {resent.Duplicates} of them duplicates; {clock.Elapsed.TotalSeconds:0.0} s");
    }

    [Fact]
    public async Task SmokeRun_AsCiRunsIt_RestartsKillsRestartsAndCountsEveryAnsweredSale()
    {
        var clock = Stopwatch.StartNew();
        using var output = new StringWriter();

        int exit = await SmokeRun.RunAsync(output);

        string text = output.ToString();
        log.WriteLine(text);
        log.WriteLine($"{clock.Elapsed.TotalSeconds:0.0} s");
        Assert.Equal(0, exit);
        Assert.Contains("504 sales accepted, 0 rejected", text, StringComparison.Ordinal);
        Assert.Contains("HTTP 413 The request body is too large.", text, StringComparison.Ordinal);
        Assert.Matches(@"server 2 \(PID \d+\): restored 4 series from the checkpoint at input position 506, then replayed 0 logged sales", text);
        Assert.Contains("after the restart (last closed day 2025-10-11): the same 2 forecasts as before it", text, StringComparison.Ordinal);
        Assert.Contains("episode 1, UnderForecast, Warning, open before the restart", text, StringComparison.Ordinal);
        Assert.Matches(@"server 3 \(PID \d+\): restored 4 series from the checkpoint at input position 506, then replayed 20 logged sales \(0 refused\)", text);
        Assert.Contains("1 duplicate ignored", text, StringComparison.Ordinal);
        Assert.Contains("every sale answered 2xx before the kill is counted: 20 of 20", text, StringComparison.Ordinal);
    }

    private static SaleEvent Sale(string item, DateOnly day, int hour, int n, double quantity, string till)
    {
        DateTime local = day.ToDateTime(new TimeOnly(hour, n % 60));
        return new SaleEvent(Shop, item, new DateTimeOffset(local, PointOfSaleApp.ShopZone.GetUtcOffset(local)), quantity, $"{till}/{day:MMdd}/{item}/{n}");
    }

    private static async Task<ItemForecast> WaitForClosedDayAsync(HttpClient http, string item, DateOnly day)
    {
        // The day closes on the engine's loop and is published to the board: poll with a deadline, never a bare sleep.
        using var deadline = new CancellationTokenSource(TimeSpan.FromSeconds(20));
        while (true)
        {
            using HttpResponseMessage response = await http.GetAsync($"/shops/{Shop}/items/{item}/forecast", deadline.Token);
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
