using System.Net;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Samples.PointOfSale;

namespace StreamForecast.Hosting.Tests.Samples;

/// <summary>The point-of-sale API over HTTP, in process (the ASP.NET Core test server).</summary>
public sealed class PointOfSaleApiTests : IAsyncLifetime
{
    private static readonly DateTimeOffset s_now = new(2025, 10, 20, 12, 0, 0, TimeSpan.Zero);
    private readonly TempPath _temp = new();
    private WebApplication? _app;
    private HttpClient? _http;

    private HttpClient Http => _http!;

    public async Task InitializeAsync()
    {
        _app = PointOfSaleApp.Build(
            ["--StreamForecast:Checkpoints:File=" + _temp.File("pos.db"), "--Logging:LogLevel:Default=Warning"],
            b =>
            {
                b.WebHost.UseTestServer();
                b.Services.AddSingleton<TimeProvider>(new FakeTimeProvider(s_now));
            });
        await _app.StartAsync();
        _http = _app.GetTestClient();
    }

    public async Task DisposeAsync()
    {
        _http?.Dispose();
        if (_app is not null)
        {
            await _app.StopAsync();
            await _app.DisposeAsync();
        }

        _temp.Dispose();
    }

    [Fact]
    public async Task PostSale_Valid_Returns202Accepted()
    {
        using HttpResponseMessage response = await Http.PostAsJsonAsync("/sales", Sale("till-1/1", 3));

        Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
        Assert.Equal(1, (await response.Content.ReadFromJsonAsync<BatchResult>())!.Accepted);
    }

    [Fact]
    public async Task PostSale_QuantityOutOfRange_Returns400ProblemWithTheReason()
    {
        using HttpResponseMessage response = await Http.PostAsJsonAsync("/sales", Sale("till-1/1", 20_000));

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
        var problem = await response.Content.ReadFromJsonAsync<ValidationProblemDetails>();
        Assert.Contains("0 to 10,000 units", Assert.Single(problem!.Errors["sale"]), StringComparison.Ordinal);
    }

    [Fact]
    public async Task PostSale_NonNumericQuantity_Returns400NamingTheField()
    {
        using var body = new StringContent("{\"shop\":\"mill-lane\",\"item\":\"rye-roll\",\"soldAt\":\"2025-10-20T09:00:00Z\",\"quantity\":\"lots\",\"saleId\":\"x\"}", Encoding.UTF8, "application/json");
        using HttpResponseMessage response = await Http.PostAsync("/sales", body);

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        var problem = await response.Content.ReadFromJsonAsync<ProblemDetails>();
        Assert.Contains("quantity", problem!.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task PostSale_FutureTime_Returns400SayingHowFarAheadIsAllowed()
    {
        using HttpResponseMessage response = await Http.PostAsJsonAsync("/sales", Sale("till-1/1", 3) with { SoldAt = s_now.AddHours(3) });

        var problem = await response.Content.ReadFromJsonAsync<ValidationProblemDetails>();
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Contains("at most 10 minutes ahead", problem!.Errors["sale"][0], StringComparison.Ordinal);
    }

    [Fact]
    public async Task PostSale_SaleIdWithAnUnpairedSurrogate_Returns400NotAServerError()
    {
        using var body = new StringContent("{\"shop\":\"mill-lane\",\"item\":\"rye-roll\",\"soldAt\":\"2025-10-20T09:00:00Z\",\"quantity\":2,\"saleId\":\"a\\ud800b\"}", Encoding.UTF8, "application/json");
        using HttpResponseMessage response = await Http.PostAsync("/sales", body);

        // System.Text.Json refuses the broken escape itself; either way the till is told, and nothing is logged.
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("The body is not valid JSON for this endpoint.", (await response.Content.ReadFromJsonAsync<ProblemDetails>())!.Title);
    }

    [Fact]
    public async Task PostSale_SaleIdWithAControlCharacter_Returns400NamingTheSaleId()
    {
        using HttpResponseMessage response = await Http.PostAsJsonAsync("/sales", Sale("till-1/\u0001", 2));

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        var problem = await response.Content.ReadFromJsonAsync<ValidationProblemDetails>();
        Assert.Contains("saleId holds a control character", Assert.Single(problem!.Errors["sale"]), StringComparison.Ordinal);
    }

    [Fact]
    public async Task GetStatus_AfterAcceptedSales_CountsThemAndTheResentOneAsADuplicate()
    {
        using (await Http.PostAsJsonAsync("/sales", Sale("till-1/1", 3)))
        using (await Http.PostAsJsonAsync("/sales", Sale("till-1/2", 4)))
        using (await Http.PostAsJsonAsync("/sales", Sale("till-1/2", 4)))
        {
        }

        ServerStatus status = (await Http.GetFromJsonAsync<ServerStatus>("/status"))!;

        Assert.Equal(2, status.Counted);
        Assert.Equal(1, status.Duplicates);
        Assert.Equal(3, status.LoggedSales);
        Assert.Equal(0, status.RestoredSeries);
    }

    [Fact]
    public async Task PostSale_NotJson_Returns415()
    {
        using var body = new StringContent("shop=mill-lane", Encoding.UTF8, "text/plain");
        using HttpResponseMessage response = await Http.PostAsync("/sales", body);

        Assert.Equal(HttpStatusCode.UnsupportedMediaType, response.StatusCode);
    }

    [Fact]
    public async Task PostBatch_MixedSales_Returns202LikeASingleSaleAndReportsEachBadOneByIndex()
    {
        SaleBatch batch = new([Sale("a", 1), Sale("b", -1), Sale("c", 2) with { Item = "Rye Roll" }, Sale("d", 2), null!]);

        using HttpResponseMessage response = await Http.PostAsJsonAsync("/sales/batch", batch);
        BatchResult result = (await response.Content.ReadFromJsonAsync<BatchResult>())!;

        // The same success status as POST /sales: the sales are logged durably and forecast asynchronously.
        Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
        Assert.Equal(2, result.Accepted);
        Assert.Equal([1, 2, 4], result.Rejected.Select(r => r.Index));
        Assert.Contains("out of range", result.Rejected[0].Reasons[0], StringComparison.Ordinal);
        Assert.Contains("item 'Rye Roll'", result.Rejected[1].Reasons[0], StringComparison.Ordinal);
        Assert.Contains("missing", result.Rejected[2].Reasons[0], StringComparison.Ordinal);
    }

    [Fact]
    public async Task PostBatch_MoreThanTheBatchLimit_Returns400NamingTheLimit()
    {
        SaleBatch batch = new([.. Enumerable.Range(0, SaleRules.MaxBatchLength + 1).Select(i => new SaleEvent(null, null, null, null, null))]);

        using HttpResponseMessage response = await Http.PostAsJsonAsync("/sales/batch", batch);
        var problem = await response.Content.ReadFromJsonAsync<ProblemDetails>();

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Contains("1 to 500", problem!.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task PostBatch_BodyOverTheLimit_Returns413()
    {
        using var body = new StringContent("{\"sales\":[" + new string(' ', SaleRules.MaxBatchBytes) + "]}", Encoding.UTF8, "application/json");
        using HttpResponseMessage response = await Http.PostAsync("/sales/batch", body);

        Assert.Equal(HttpStatusCode.RequestEntityTooLarge, response.StatusCode);
        Assert.Contains("at most 131,072 bytes", (await response.Content.ReadFromJsonAsync<ProblemDetails>())!.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task PostBatch_ChunkedBodyOverTheLimit_Returns413WithoutContentLength()
    {
        // No Content-Length: the limit is enforced while reading.
        using var body = new StreamContent(new MemoryStream(Encoding.UTF8.GetBytes("{\"sales\":[" + new string(' ', SaleRules.MaxBatchBytes) + "]}")));
        body.Headers.ContentType = new("application/json");
        using var request = new HttpRequestMessage(HttpMethod.Post, "/sales/batch") { Content = body };
        request.Headers.TransferEncodingChunked = true;

        using HttpResponseMessage response = await Http.SendAsync(request);

        Assert.Equal(HttpStatusCode.RequestEntityTooLarge, response.StatusCode);
    }

    [Fact]
    public async Task GetForecast_NoClosedDayYet_Returns404Problem()
    {
        using HttpResponseMessage response = await Http.GetAsync("/shops/mill-lane/items/rye-roll/forecast");

        Assert.Equal(HttpStatusCode.NotFound, response.StatusCode);
        Assert.Equal("No forecast yet.", (await response.Content.ReadFromJsonAsync<ProblemDetails>())!.Title);
    }

    [Fact]
    public async Task GetForecast_OneClosedDay_Returns200WithNullStatistics()
    {
        // One sale on the 19th, then one on the 20th late enough (past the 2-hour lateness) to close the 19th: one closed
        // day, so MAD and the tracking signal have no error to stand on yet (NaN inside the engine).
        using (HttpResponseMessage first = await Http.PostAsJsonAsync("/sales", Sale("till-1/1", 3) with { SoldAt = s_now.AddDays(-1) }))
        using (HttpResponseMessage second = await Http.PostAsJsonAsync("/sales", Sale("till-1/2", 5) with { SoldAt = s_now.AddHours(-1) }))
        {
            Assert.Equal(HttpStatusCode.Accepted, first.StatusCode);
            Assert.Equal(HttpStatusCode.Accepted, second.StatusCode);
        }

        // The forecast is published when the engine's loop closes the day; ask until it is there (no clock involved).
        HttpResponseMessage response = await Http.GetAsync("/shops/mill-lane/items/rye-roll/forecast");
        for (int attempt = 0; attempt < 400 && response.StatusCode == HttpStatusCode.NotFound; attempt++)
        {
            response.Dispose();
            await Task.Delay(25);
            response = await Http.GetAsync("/shops/mill-lane/items/rye-roll/forecast");
        }

        using (response)
        {
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            using JsonDocument json = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
            JsonElement body = json.RootElement;
            Assert.Equal("2025-10-19", body.GetProperty("lastClosedDay").GetString());
            Assert.Equal(3, body.GetProperty("lastDaySold").GetDouble());
            Assert.Equal(JsonValueKind.Null, body.GetProperty("mad").ValueKind);
            Assert.Equal(JsonValueKind.Null, body.GetProperty("trackingSignal").ValueKind);
        }
    }

    [Fact]
    public async Task PlayAsync_InventedTillTraffic_ServesForecastsAndTheDriftAlertOfTheShiftedItem()
    {
        using var output = new StringWriter();

        await SmokeRun.PlayAsync(Http, output);

        string[] lines = output.ToString().Split('\n', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal("posted 42 shop days of invented sales in 42 batches: 504 sales accepted, 0 rejected", lines[0]);
        Assert.Equal("a batch with two bad sales: HTTP 202, 2 accepted, 2 rejected", lines[1]);
        Assert.StartsWith("sale 1: quantity -3 is out of range", lines[2], StringComparison.Ordinal);
        Assert.StartsWith("sale 2: shop 'Harbour Street'", lines[3], StringComparison.Ordinal);
        Assert.Matches(@"^a \d+ KiB batch: HTTP 413 The request body is too large\.$", lines[4]);
        Assert.Equal("GET /shops/mill-lane/forecasts (last closed day 2025-10-11):", lines[5]);
        Assert.Matches(@"^cinnamon-bun +sold +\d+; next day \d+\.\d \(80%: \d+\.\d to \d+\.\d\)", lines[6]);
        Assert.StartsWith("sourdough-loaf", lines[7], StringComparison.Ordinal);
        Assert.Equal("GET /alerts: 1 open", lines[8]);
        Assert.Matches(@"^mill-lane/cinnamon-bun: CUSUM.* episode 1, UnderForecast, (Warning|Critical), since 2025-10-\d\d$", lines[9]);

        // The declared two-for-one week (days 14 to 20, sales up 80%): applied, kept out of the error figures, no alert.
        Assert.Matches(@"^declared promotion applied to mill-lane sourdough-loaf on 7 days, 2025-09-15 to 2025-09-21: they sold 1\.[5-9] times the forecast and are left out of the forecast-error figures; no drift alert was raised for this item during it or in the week after$", lines[10]);
        Assert.Equal(11, lines.Length);
    }

    [Fact]
    public async Task PostBatch_EverySaleRefused_Returns400ListingEachByIndex()
    {
        SaleBatch batch = new([Sale("a", -1), Sale("b", 2) with { Shop = "Mill Lane" }]);

        using HttpResponseMessage response = await Http.PostAsJsonAsync("/sales/batch", batch);
        var problem = await response.Content.ReadFromJsonAsync<ValidationProblemDetails>();

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("No sale of the batch was taken.", problem!.Title);
        Assert.Equal(["sales[0]", "sales[1]"], problem.Errors.Keys.Order(StringComparer.Ordinal));
        Assert.Equal(0, (await Http.GetFromJsonAsync<ServerStatus>("/status"))!.LoggedSales);
    }

    [Theory]
    [InlineData("2025-10-20T09:00:00")]
    [InlineData("2025-10-20T09:00")]
    [InlineData("2025-10-20")]
    public async Task PostSale_TimeWithoutOffset_Returns400SayingTheOffsetIsRequiredAndTakesNothing(string soldAt)
    {
        using var body = new StringContent($"{{\"shop\":\"mill-lane\",\"item\":\"rye-roll\",\"soldAt\":\"{soldAt}\",\"quantity\":2,\"saleId\":\"x\"}}", Encoding.UTF8, "application/json");
        using HttpResponseMessage response = await Http.PostAsync("/sales", body);
        var problem = await response.Content.ReadFromJsonAsync<ProblemDetails>();

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("A sale time has no UTC offset.", problem!.Title);
        Assert.Contains($"soldAt '{soldAt}' has no UTC offset", problem.Detail, StringComparison.Ordinal);
        Assert.Contains("$.soldAt", problem.Detail, StringComparison.Ordinal);
        Assert.Equal(0, (await Http.GetFromJsonAsync<ServerStatus>("/status"))!.LoggedSales);
    }

    [Theory]
    [InlineData("2025-10-20T09:00:00Z")]
    [InlineData("2025-10-20T09:00:00+01:00")]
    [InlineData("2025-10-20T09:00:00.250-01:00")]
    public async Task PostSale_TimeWithOffset_Returns202(string soldAt)
    {
        using var body = new StringContent($"{{\"shop\":\"mill-lane\",\"item\":\"rye-roll\",\"soldAt\":\"{soldAt}\",\"quantity\":2,\"saleId\":\"x\"}}", Encoding.UTF8, "application/json");
        using HttpResponseMessage response = await Http.PostAsync("/sales", body);

        Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
    }

    [Fact]
    public async Task PostBatch_OneTimeWithoutOffset_Returns400NamingTheSaleAndTakesNothing()
    {
        using var body = new StringContent(
            "{\"sales\":[{\"shop\":\"mill-lane\",\"item\":\"rye-roll\",\"soldAt\":\"2025-10-20T09:00:00Z\",\"quantity\":2,\"saleId\":\"a\"}," +
            "{\"shop\":\"mill-lane\",\"item\":\"rye-roll\",\"soldAt\":\"2025-10-20T09:05:00\",\"quantity\":1,\"saleId\":\"b\"}]}",
            Encoding.UTF8,
            "application/json");
        using HttpResponseMessage response = await Http.PostAsync("/sales/batch", body);
        var problem = await response.Content.ReadFromJsonAsync<ProblemDetails>();

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Contains("$.sales[1].soldAt", problem!.Detail, StringComparison.Ordinal);
        Assert.Equal(0, (await Http.GetFromJsonAsync<ServerStatus>("/status"))!.LoggedSales);
    }

    [Fact]
    public async Task GetOpenApi_Document_DescribesTheSaleBodiesAndTheAcceptedAnswer()
    {
        using HttpResponseMessage response = await Http.GetAsync("/openapi/v1.json");
        using JsonDocument json = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        JsonElement paths = json.RootElement.GetProperty("paths");

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        foreach (string path in new[] { "/sales", "/sales/batch" })
        {
            JsonElement post = paths.GetProperty(path).GetProperty("post");
            Assert.True(post.GetProperty("responses").TryGetProperty("202", out _), path + " documents 202");
            Assert.True(post.GetProperty("responses").TryGetProperty("400", out _), path + " documents 400");
            Assert.True(post.GetProperty("requestBody").GetProperty("content").TryGetProperty("application/json", out _), path + " documents its JSON body");
        }

        foreach (string path in new[] { "/shops/{shop}/forecasts", "/shops/{shop}/items/{item}/forecast", "/alerts", "/status" })
        {
            Assert.True(paths.TryGetProperty(path, out _), path);
        }

        JsonElement sale = json.RootElement.GetProperty("components").GetProperty("schemas").GetProperty("SaleEvent").GetProperty("properties");
        Assert.Equal(["item", "quantity", "saleId", "shop", "soldAt"], sale.EnumerateObject().Select(p => p.Name).Order(StringComparer.Ordinal));
    }

    [Fact]
    public async Task GetHealth_RunningEngine_Returns200HealthyWithTheEngineCounts()
    {
        using (HttpResponseMessage posted = await Http.PostAsJsonAsync("/sales", Sale("till-1/1", 3)))
        {
            Assert.Equal(HttpStatusCode.Accepted, posted.StatusCode);
        }

        using HttpResponseMessage response = await Http.GetAsync("/health");
        using JsonDocument json = JsonDocument.Parse(await response.Content.ReadAsStringAsync());

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("Healthy", json.RootElement.GetProperty("status").GetString());
        Assert.Equal("The forecast engine is running.", json.RootElement.GetProperty("description").GetString());
        JsonElement engine = json.RootElement.GetProperty("engine");
        Assert.Equal(1, engine.GetProperty("loggedSales").GetInt64());
        Assert.Equal(0, engine.GetProperty("droppedQueueFull").GetInt64());
        Assert.Equal(0, engine.GetProperty("restoredSeries").GetInt32());
    }

    private static SaleEvent Sale(string id, double quantity) =>
        new("mill-lane", "rye-roll", s_now.AddHours(-2), quantity, id);
}
