using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using StreamForecast.Hosting;

namespace StreamForecast.Samples.SensorThroughput;

/// <summary>
/// The sample against an external MQTT broker: runs until stopped (Ctrl+C, SIGTERM, or, with
/// <see cref="StopWhenInputClosesSwitch"/>, when standard input closes), with the input log on, so an acknowledged
/// message is durable and a crash loses nothing the broker delivered.
/// </summary>
public static class BrokerMode
{
    /// <summary>The command-line switch that makes the consumer stop (gracefully) when its standard input closes.</summary>
    public const string StopWhenInputClosesSwitch = "--stop-when-input-closes";

    /// <summary>How late (by event time) a reading may arrive and still count: 2 minutes (a redelivered message can trail others).</summary>
    public static readonly TimeSpan AllowedLateness = TimeSpan.FromMinutes(2);

    /// <summary>Whether the arguments ask for the broker mode (<c>--broker</c> given).</summary>
    /// <param name="args">The command-line arguments.</param>
    /// <returns>True for the broker mode.</returns>
    public static bool IsRequested(string[] args) => args.Any(a => a == "--broker" || a.StartsWith("--broker=", StringComparison.Ordinal) || a.StartsWith("--Broker:", StringComparison.OrdinalIgnoreCase));

    /// <summary>Runs the consumer until it is stopped.</summary>
    /// <param name="args">The command-line arguments (see <see cref="BrokerSettings"/>; <c>--StreamForecast:...</c> keys are passed to the host).</param>
    /// <param name="output">Where to print the ready, status and stop lines.</param>
    /// <returns>0 after a graceful stop; 2 when a setting is missing or invalid.</returns>
    public static async Task<int> RunAsync(string[] args, TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        bool stopWhenInputCloses = args.Contains(StopWhenInputClosesSwitch);
        HostApplicationBuilder builder = Host.CreateApplicationBuilder(new HostApplicationBuilderSettings { DisableDefaults = true });
        builder.Configuration.AddInMemoryCollection(new Dictionary<string, string?>
        {
            ["StreamForecast:Partitions"] = "2",
            ["StreamForecast:InputLog:Enabled"] = "true",
        });
        builder.Configuration.AddCommandLine([.. args.Where(a => a != StopWhenInputClosesSwitch)], new Dictionary<string, string>(BrokerSettings.Switches));
        BrokerSettings settings;
        try
        {
            settings = BrokerSettings.Read(builder.Configuration);
        }
        catch (FormatException ex)
        {
            await Console.Error.WriteLineAsync(ex.Message);
            return 2;
        }

        Directory.CreateDirectory(settings.DataDirectory);
        builder.Configuration.AddInMemoryCollection(new Dictionary<string, string?> { ["StreamForecast:Checkpoints:File"] = settings.DataFile });
        builder.Configuration.AddCommandLine([.. args.Where(a => a != StopWhenInputClosesSwitch)], new Dictionary<string, string>(BrokerSettings.Switches)); // the command line still wins
        builder.Logging.AddSimpleConsole(o => o.SingleLine = true).SetMinimumLevel(LogLevel.Warning);
        builder.Services.AddStreamForecast<string>(builder.Configuration.GetSection("StreamForecast"), o =>
        {
            o.DefaultSeries = FleetRun.SeriesFor(AllowedLateness);
            o.KeyComparer = StringComparer.Ordinal;
        });
        builder.Services.AddSingleton(settings);
        builder.Services.AddSingleton(output);
        builder.Services.AddHostedService<BrokerSubscriber>(); // after the engine's service: starts after it, stops before it

        using IHost host = builder.Build();
        await host.StartAsync();
        if (stopWhenInputCloses)
        {
            // Run by a parent process (the tests): closing standard input asks for a graceful stop.
            IHostApplicationLifetime lifetime = host.Services.GetRequiredService<IHostApplicationLifetime>();
            _ = Task.Run(async () =>
            {
                await Console.In.ReadToEndAsync();
                lifetime.StopApplication();
            });
        }

        await host.WaitForShutdownAsync();
        return 0;
    }
}
