using System.Globalization;
using Microsoft.Extensions.Configuration;

namespace StreamForecast.Samples.SensorThroughput;

/// <summary>
/// Where the broker mode connects and keeps its data (configuration section <c>Broker</c>; the command-line switches
/// <c>--broker host:port</c>, <c>--topic</c>, <c>--client-id</c> and <c>--data</c> set the same keys).
/// </summary>
/// <param name="Host">The broker's host name or address.</param>
/// <param name="Port">The broker's TCP port, 1 to 65,535.</param>
/// <param name="TopicFilter">The topic filter subscribed to with QoS 1 (for example <c>plant/+/throughput</c>).</param>
/// <param name="ClientId">The fixed client id the broker keeps the persistent session under.</param>
/// <param name="DataDirectory">The folder of the checkpoint and input-log file.</param>
public sealed record BrokerSettings(string Host, int Port, string TopicFilter, string ClientId, string DataDirectory)
{
    /// <summary>The command-line switches and the configuration keys they set.</summary>
    public static readonly IReadOnlyDictionary<string, string> Switches = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["--broker"] = "Broker:Address",
        ["--topic"] = "Broker:TopicFilter",
        ["--client-id"] = "Broker:ClientId",
        ["--data"] = "Broker:DataDirectory",
    };

    /// <summary>The file, in <see cref="DataDirectory"/>, that holds the checkpoints and the input log.</summary>
    public string DataFile => Path.Combine(DataDirectory, "sensor-throughput.db");

    /// <summary>Reads the settings; every one is required.</summary>
    /// <param name="configuration">The configuration root.</param>
    /// <returns>The settings.</returns>
    /// <exception cref="FormatException">A setting is missing or not valid (the message names it).</exception>
    public static BrokerSettings Read(IConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(configuration);
        IConfigurationSection section = configuration.GetSection("Broker");
        string address = Required(section, "Address", "--broker host:port");
        int colon = address.LastIndexOf(':');
        if (colon <= 0 || !int.TryParse(address.AsSpan(colon + 1), NumberStyles.None, CultureInfo.InvariantCulture, out int port) || port is < 1 or > 65_535)
        {
            throw new FormatException($"Broker:Address '{address}' is not host:port with a port from 1 to 65535 (for example 127.0.0.1:1883).");
        }

        string topic = Required(section, "TopicFilter", "--topic 'plant/+/throughput'");
        string clientId = Required(section, "ClientId", "--client-id NAME");
        string data = Required(section, "DataDirectory", "--data FOLDER");
        return new BrokerSettings(address[..colon], port, topic, clientId, data);
    }

    private static string Required(IConfigurationSection section, string key, string example)
    {
        string? value = section[key];
        return string.IsNullOrWhiteSpace(value)
            ? throw new FormatException($"Broker:{key} is missing: the broker mode needs it ({example}).")
            : value.Trim();
    }
}
