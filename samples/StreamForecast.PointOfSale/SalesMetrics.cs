using OpenTelemetry.Metrics;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// Exports the engine's instruments (the <see cref="ForecastEngine{TKey}.MeterName"/> meter: observations, duplicates,
/// late, rejected, periods closed, alerts raised and cleared, active series, queue depth) with OpenTelemetry.
/// </summary>
/// <remarks>
/// <c>Metrics:Exporter</c> chooses where they go: <c>none</c> (the default: the meter provider still listens, so an
/// exporter added by the host or a test sees them), <c>console</c> (printed every 10 s, for a look) or <c>otlp</c> (to
/// an OpenTelemetry collector; endpoint, protocol and interval from the standard <c>OTEL_EXPORTER_OTLP_ENDPOINT</c>,
/// <c>OTEL_EXPORTER_OTLP_PROTOCOL</c> and <c>OTEL_METRIC_EXPORT_INTERVAL</c> variables, default
/// <c>http://localhost:4317</c> over gRPC). No instrument carries a series key, so the number of exported series stays
/// small however many shops and items there are.
/// </remarks>
public static class SalesMetrics
{
    /// <summary>The configuration key that chooses the exporter.</summary>
    public const string ExporterKey = "Metrics:Exporter";

    /// <summary>Registers OpenTelemetry metrics for the engine's meter and the configured exporter.</summary>
    /// <param name="builder">The application builder.</param>
    /// <exception cref="InvalidOperationException"><c>Metrics:Exporter</c> is not none, console or otlp.</exception>
    public static void Add(WebApplicationBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        string exporter = builder.Configuration[ExporterKey] is { Length: > 0 } given ? given : "none";
        if (exporter is not ("none" or "console" or "otlp"))
        {
            throw new InvalidOperationException($"{ExporterKey} is '{exporter}'; use none, console or otlp.");
        }

        builder.Services.AddOpenTelemetry().WithMetrics(metrics =>
        {
            metrics.AddMeter(ForecastEngine<string>.MeterName);
            if (exporter == "console")
            {
                metrics.AddConsoleExporter((_, reader) => reader.PeriodicExportingMetricReaderOptions.ExportIntervalMilliseconds = 10_000);
            }
            else if (exporter == "otlp")
            {
                metrics.AddOtlpExporter();
            }
        });
    }
}
