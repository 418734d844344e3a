using System.Text.Json;
using Microsoft.AspNetCore.Diagnostics.HealthChecks;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Diagnostics.HealthChecks;
using Microsoft.Extensions.Options;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Hosting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// A point-of-sale backend: tills post sales (one at a time or in batches), the engine keeps a next-day forecast per
/// shop and item, and the API serves the forecasts and the open drift alerts.
/// </summary>
/// <remarks>
/// <para><b>Acknowledged means durable.</b> The host's input log is on (<c>StreamForecast:InputLog</c> in
/// appsettings.json): a sale answered 2xx has been written to the log in the checkpoint file and survives a crash of
/// the server; the next start restores the newest checkpoint and replays the log from it before serving.</para>
/// <para>Guarding the endpoint: bodies are limited (413), batches are limited (400), every field is range-checked and a
/// bad sale is refused with its reasons while the rest of its batch is taken; a post waits at most
/// <see cref="SaleRules.MaxLogWait"/> for its sales to be logged (503 with Retry-After instead), so one client's flood
/// or malformed input cannot hold up the others.</para>
/// </remarks>
public static class PointOfSaleApp
{
    /// <summary>The shops' time zone: a shop day is a local calendar day.</summary>
    public static readonly TimeZoneInfo ShopZone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Dublin");

    /// <summary>The configuration key of the folder for the checkpoint file (<c>--data &lt;folder&gt;</c> sets it too).</summary>
    public const string DataDirectoryKey = "PointOfSale:DataDirectory";

    /// <summary>The checkpoint file's name inside the data folder.</summary>
    public const string CheckpointFileName = "point-of-sale.db";

    private const string CheckpointFileKey = "StreamForecast:Checkpoints:File";

    private static readonly JsonSerializerOptions s_json = new(JsonSerializerDefaults.Web) { Converters = { new OffsetRequiredConverter() } };

    /// <summary>
    /// The data folder used when neither <c>--data</c> nor <c>StreamForecast:Checkpoints:File</c> is given: the user's
    /// local application data folder (<c>~/.local/share</c> on Linux, <c>%LOCALAPPDATA%</c> on Windows), else the
    /// temporary folder, under <c>StreamForecast/PointOfSale</c>; never the source tree or the build output.
    /// </summary>
    /// <returns>The folder (not created here).</returns>
    public static string DefaultDataDirectory()
    {
        string root = Environment.GetFolderPath(Environment.SpecialFolder.LocalApplicationData, Environment.SpecialFolderOption.DoNotVerify);
        return Path.Combine(string.IsNullOrEmpty(root) ? Path.GetTempPath() : root, "StreamForecast", "PointOfSale");
    }

    /// <summary>Builds the application.</summary>
    /// <param name="args">Command-line arguments (configuration overrides such as <c>--StreamForecast:Checkpoints:File=...</c>).</param>
    /// <param name="configure">Changes applied to the builder before it is built (tests use it for the test server and the clock).</param>
    /// <returns>The application, not yet started.</returns>
    public static WebApplication Build(string[] args, Action<WebApplicationBuilder>? configure = null)
    {
        WebApplicationBuilder builder = WebApplication.CreateBuilder(new WebApplicationOptions { Args = args, ContentRootPath = AppContext.BaseDirectory });

        // Runtime data lives outside the source tree: --data <folder>, else StreamForecast:Checkpoints:File, else the
        // user's local application data folder. The start log says where.
        builder.Configuration.AddCommandLine(args, new Dictionary<string, string> { ["--data"] = DataDirectoryKey });
        if (string.IsNullOrEmpty(builder.Configuration[CheckpointFileKey]) || !string.IsNullOrEmpty(builder.Configuration[DataDirectoryKey]))
        {
            string folder = builder.Configuration[DataDirectoryKey] is { Length: > 0 } given ? Path.GetFullPath(given) : DefaultDataDirectory();
            builder.Configuration[CheckpointFileKey] = Path.Combine(folder, CheckpointFileName);
        }

        // A backstop for every endpoint; each endpoint also enforces its own, smaller limit.
        builder.WebHost.ConfigureKestrel(k => k.Limits.MaxRequestBodySize = SaleRules.MaxBatchBytes);
        builder.Services.AddProblemDetails();
        builder.Services.AddOpenApi();
        builder.Services.AddHealthChecks().Add(new HealthCheckRegistration(
            "engine",
            sp => new EngineHealthCheck(sp.GetRequiredService<HostedForecastEngine<string>>(), sp.GetRequiredService<IOptions<StreamForecastOptions<string>>>().Value.QueueCapacity),
            failureStatus: null,
            tags: null));
        SalesMetrics.Add(builder);

        // The engine first, so that it is started before and stopped after everything that posts to it.
        builder.Services.AddStreamForecast<string>(builder.Configuration.GetSection(StreamForecastServiceCollectionExtensions.DefaultSectionName), o =>
        {
            // Next-day sales per shop and item: shop days in local time, sales allowed 2 hours late and able to restate
            // the previous day; exponential smoothing; a CUSUM rule on standardized errors for drift.
            o.DefaultSeries = new SeriesOptions(
                new ExponentialSmoothingOptions(alpha: 0.3),
                PeriodCalendar.Daily(ShopZone),
                new LatenessPolicy(TimeSpan.FromHours(2), restatementPeriods: 1),
                GapPolicy.Zero,
                tracking: new ErrorTrackerOptions(seasonLength: 7),
                rules: [new CusumRuleOptions(decisionInterval: 5, warmUpPeriods: 14, periodsToClear: 5)]);
            o.KeyComparer = StringComparer.Ordinal;

            // The promotion week is planned, so it is declared before the run: its days are marked on the forecasts,
            // not scored, kept out of the drift rule and the model, and their lift is measured. Shops group the series.
            o.Events = new EventCalendar<string>([CrumbLaneTills.PromotionWeek()], EventGroups.ByKeyPrefix('/'));
            o.FullMode = IngestionFullMode.Wait;
        });
        builder.Services.AddSingleton(sp => new SalesBoard(sp.GetRequiredService<HostedForecastEngine<string>>(), ShopZone));
        builder.Services.AddHostedService(sp => sp.GetRequiredService<SalesBoard>());
        configure?.Invoke(builder);

        WebApplication app = builder.Build();
        app.UseExceptionHandler();
        app.UseStatusCodePages();
        app.MapOpenApi();
        app.MapHealthChecks("/health", new HealthCheckOptions { ResponseWriter = WriteHealthAsync });
        Map(app);
        StartLog.DataLocation(app.Logger, builder.Configuration[CheckpointFileKey]!);
        return app;
    }

    private static void Map(WebApplication app)
    {
        app.MapPost("/sales", async Task<IResult> (HttpRequest request, HostedForecastEngine<string> engine, TimeProvider time, CancellationToken ct) =>
        {
            (SaleEvent? sale, IResult? problem) = await ReadAsync<SaleEvent>(request, SaleRules.MaxSingleBytes, ct);
            if (problem is not null)
            {
                return problem;
            }

            List<string> reasons = SaleRules.Check(sale, time.GetUtcNow(), out Observation<string> observation);
            if (reasons.Count > 0)
            {
                return TypedResults.ValidationProblem(new Dictionary<string, string[]> { ["sale"] = [.. reasons] }, title: "The sale was refused.");
            }

            return await TakeAsync(engine, [observation], time, request.HttpContext.Response, ct)
                ?? TypedResults.Accepted((string?)null, new BatchResult(1, []));
        })
        .WithSummary("Takes one sale.")
        .WithDescription("202 Accepted once the sale is in the durable input log (it is forecast asynchronously); 400 with the reasons when it is refused (soldAt needs its UTC offset).")
        .Accepts<SaleEvent>("application/json")
        .Produces<BatchResult>(StatusCodes.Status202Accepted)
        .ProducesValidationProblem()
        .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
        .ProducesProblem(StatusCodes.Status415UnsupportedMediaType)
        .ProducesProblem(StatusCodes.Status503ServiceUnavailable);

        app.MapPost("/sales/batch", async Task<IResult> (HttpRequest request, HostedForecastEngine<string> engine, TimeProvider time, CancellationToken ct) =>
        {
            (SaleBatch? batch, IResult? problem) = await ReadAsync<SaleBatch>(request, SaleRules.MaxBatchBytes, ct);
            if (problem is not null)
            {
                return problem;
            }

            if (batch?.Sales is null)
            {
                return Problem(StatusCodes.Status400BadRequest, "The batch has no sales.", "Send {\"sales\": [ ... ]} with 1 to 500 sales.");
            }

            if (batch.Sales.Count is 0 or > SaleRules.MaxBatchLength)
            {
                return Problem(StatusCodes.Status400BadRequest, "The batch length is out of range.", $"The batch has {batch.Sales.Count} sales; a batch has 1 to {SaleRules.MaxBatchLength}. Split larger batches.");
            }

            // Each sale is checked on its own: the good ones are taken (logged together), each bad one is reported with its reasons.
            DateTimeOffset now = time.GetUtcNow();
            var rejected = new List<RejectedSale>();
            var good = new List<Observation<string>>(batch.Sales.Count);
            for (int i = 0; i < batch.Sales.Count; i++)
            {
                List<string> reasons = SaleRules.Check(batch.Sales[i], now, out Observation<string> observation);
                if (reasons.Count > 0)
                {
                    rejected.Add(new RejectedSale(i, reasons));
                }
                else
                {
                    good.Add(observation);
                }
            }

            if (good.Count == 0)
            {
                return TypedResults.ValidationProblem(
                    rejected.ToDictionary(r => $"sales[{r.Index}]", r => r.Reasons.ToArray()),
                    title: "No sale of the batch was taken.");
            }

            if (await TakeAsync(engine, [.. good], time, request.HttpContext.Response, ct) is { } notTaken)
            {
                return notTaken;
            }

            // The same answer as a single sale: 202 once the sales are in the durable input log.
            return TypedResults.Accepted((string?)null, new BatchResult(good.Count, rejected));
        })
        .WithSummary("Takes a batch of 1 to 500 sales.")
        .WithDescription("202 Accepted when at least one sale was taken (logged durably, forecast asynchronously); the body counts them and lists each refused sale by index with its reasons. 400 when none was taken or the body is malformed (a soldAt without its UTC offset refuses the whole batch).")
        .Accepts<SaleBatch>("application/json")
        .Produces<BatchResult>(StatusCodes.Status202Accepted)
        .ProducesValidationProblem()
        .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
        .ProducesProblem(StatusCodes.Status415UnsupportedMediaType)
        .ProducesProblem(StatusCodes.Status503ServiceUnavailable);

        app.MapGet("/shops/{shop}/forecasts", (string shop, SalesBoard board) => TypedResults.Ok(board.Forecasts(shop, null)));

        app.MapGet("/shops/{shop}/items/{item}/forecast", Results<Ok<ItemForecast>, ProblemHttpResult> (string shop, string item, SalesBoard board) =>
            board.Forecasts(shop, item) is [var one]
                ? TypedResults.Ok(one)
                : TypedResults.Problem(statusCode: StatusCodes.Status404NotFound, title: "No forecast yet.", detail: $"No shop day of {shop}/{item} has closed yet."));

        app.MapGet("/alerts", (string? shop, SalesBoard board) => TypedResults.Ok(board.OpenAlerts(shop)));
        app.MapGet("/events", (SalesBoard board) => TypedResults.Ok(board.Events()))
            .WithSummary("Lists the declared promotions so far.")
            .WithDescription("Each declared event: its days, what the item sold against its forecast, and the drift alerts raised during it and in the week after (declared days are left out of the error figures and the drift rules).");

        app.MapGet("/status", async (HostedForecastEngine<string> engine, CancellationToken ct) =>
        {
            // Reading the series is queued behind every sale taken before this request, so the counters include them.
            await engine.Engine.GetSeriesStatusAsync(ct);
            EngineCounters c = engine.Engine.GetCounters();
            EngineStart start = engine.Start;
            return TypedResults.Ok(new ServerStatus(
                start.SeriesRestored, start.ReplayFrom, start.LogRecordsReplayed, start.LogRecordsRefused, engine.PostedPosition,
                c.Observations, c.Duplicates, c.Late, c.Restated, c.Rejected));
        });
    }

    /// <summary>One line saying how the engine started: empty or restored, and how many logged sales were replayed.</summary>
    /// <param name="start">The host's start report.</param>
    /// <returns>The line.</returns>
    public static string DescribeStart(EngineStart start)
    {
        ArgumentNullException.ThrowIfNull(start);
        string restored = start.CheckpointLocation is null
            ? "started empty (no checkpoint yet)"
            : $"restored {start.SeriesRestored} series from the checkpoint at input position {start.ReplayFrom}";
        return $"{restored}, then replayed {start.LogRecordsReplayed} logged sales ({start.LogRecordsRefused} refused)";
    }

    // Logs and posts the sales (all or none), waiting at most MaxLogWait; null when they were taken, else the answer.
    private static async Task<IResult?> TakeAsync(HostedForecastEngine<string> engine, Observation<string>[] sales, TimeProvider time, HttpResponse response, CancellationToken ct)
    {
        using var wait = new CancellationTokenSource(SaleRules.MaxLogWait, time);
        using var linked = CancellationTokenSource.CreateLinkedTokenSource(ct, wait.Token);
        try
        {
            if (sales.Length == 1)
            {
                await engine.PostAsync(sales[0], linked.Token);
            }
            else
            {
                await engine.PostBatchAsync(sales, linked.Token);
            }

            return null;
        }
        catch (OperationCanceledException) when (!ct.IsCancellationRequested)
        {
            return Busy(response);
        }
        catch (IOException)
        {
            return Unavailable(response, "The sales could not be stored.", "The server could not write its input log; nothing of this request was taken. Resend it later (the saleId makes a resend safe).");
        }
        catch (InvalidOperationException)
        {
            return Unavailable(response, "The server is stopping.", "Nothing of this request was taken; resend it when the server is back (the saleId makes a resend safe).");
        }
    }

    private static async Task<(T? Value, IResult? Problem)> ReadAsync<T>(HttpRequest request, int limit, CancellationToken ct)
        where T : class
    {
        if (request.ContentLength > limit)
        {
            return (null, TooLarge(limit));
        }

        if (!request.HasJsonContentType())
        {
            return (null, Problem(StatusCodes.Status415UnsupportedMediaType, "The body must be JSON.", "Send Content-Type: application/json."));
        }

        // Read at most limit + 1 bytes whatever Content-Length said (chunked bodies have none).
        byte[] buffer = new byte[limit + 1];
        int read = 0;
        try
        {
            int n;
            while (read < buffer.Length && (n = await request.Body.ReadAsync(buffer.AsMemory(read), ct)) > 0)
            {
                read += n;
            }
        }
        catch (BadHttpRequestException ex) when (ex.StatusCode == StatusCodes.Status413PayloadTooLarge)
        {
            return (null, TooLarge(limit));
        }

        if (read > limit)
        {
            return (null, TooLarge(limit));
        }

        try
        {
            return (JsonSerializer.Deserialize<T>(buffer.AsSpan(0, read), s_json), null);
        }
        catch (JsonException ex) when (ex.Data.Contains(OffsetRequiredConverter.MissingOffsetMark))
        {
            return (null, Problem(StatusCodes.Status400BadRequest, "A sale time has no UTC offset.", ex.Path is null ? ex.Message : $"{ex.Message} (at {ex.Path}; nothing of this request was taken)"));
        }
        catch (JsonException ex)
        {
            return (null, Problem(StatusCodes.Status400BadRequest, "The body is not valid JSON for this endpoint.", ex.Message));
        }
    }

    // GET /health: the status (200 when Healthy or Degraded, 503 when Unhealthy), why, and the engine's counts.
    private static Task WriteHealthAsync(HttpContext context, HealthReport report)
    {
        HealthReportEntry engine = report.Entries["engine"];
        context.Response.ContentType = "application/json";
        return context.Response.WriteAsJsonAsync(new EngineHealth(report.Status.ToString(), engine.Description, engine.Data));
    }

    private static ProblemHttpResult TooLarge(int limit) =>
        Problem(StatusCodes.Status413PayloadTooLarge, "The request body is too large.", $"This endpoint takes at most {limit:N0} bytes; split the sales into smaller batches.");

    private static ProblemHttpResult Busy(HttpResponse response) =>
        Unavailable(response, "The server is busy.", "The sales could not be logged in time; resend after a short wait (the saleId makes a resend safe: a sale taken twice counts once).");

    private static ProblemHttpResult Unavailable(HttpResponse response, string title, string detail)
    {
        response.Headers.RetryAfter = "1";
        return Problem(StatusCodes.Status503ServiceUnavailable, title, detail);
    }

    private static ProblemHttpResult Problem(int status, string title, string detail) =>
        TypedResults.Problem(statusCode: status, title: title, detail: detail);
}
