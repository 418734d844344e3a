using System.Net;
using Microsoft.Extensions.Configuration;

namespace StreamForecast.Samples.ClusterNode;

/// <summary>A node's settings, read from the <c>ClusterNode</c> configuration section and checked before the silo starts.</summary>
internal sealed record NodeSettings(
    string ConnectionString,
    string ClusterId,
    IPAddress AdvertisedAddress,
    int SiloPort,
    int GatewayPort,
    bool ListenOnAnyAddress,
    TimeSpan? ProbeTimeout)
{
    public const string Section = "ClusterNode";

    public static NodeSettings Read(IConfiguration configuration)
    {
        IConfigurationSection section = configuration.GetSection(Section);
        string connectionString = section["ConnectionString"] is { Length: > 0 } cs
            ? cs
            : throw new SettingsException($"{Section}:ConnectionString is missing: the Npgsql connection string of the cluster's PostgreSQL database.");
        string clusterId = section["ClusterId"] is { Length: > 0 } id ? id : "sensor-fleet";
        string addressText = section["AdvertisedAddress"] ?? "127.0.0.1";
        if (!IPAddress.TryParse(addressText, out IPAddress? address))
        {
            throw new SettingsException($"{Section}:AdvertisedAddress '{addressText}' is not an IP address: give the address other machines reach this one on.");
        }

        return new NodeSettings(
            connectionString,
            clusterId,
            address,
            Port(section, "SiloPort", 11111),
            Port(section, "GatewayPort", 30000),
            Flag(section, "ListenOnAnyAddress"),
            Seconds(section, "ProbeTimeoutSeconds"));
    }

    private static int Port(IConfigurationSection section, string name, int fallback)
    {
        string? text = section[name];
        if (text is null)
        {
            return fallback;
        }

        return int.TryParse(text, out int port) && port is >= 1 and <= 65535
            ? port
            : throw new SettingsException($"{Section}:{name} '{text}' is not a port number (1 to 65535).");
    }

    private static bool Flag(IConfigurationSection section, string name) =>
        section[name] is not { } text ? false
        : bool.TryParse(text, out bool value) ? value
        : throw new SettingsException($"{Section}:{name} '{text}' is neither true nor false.");

    private static TimeSpan? Seconds(IConfigurationSection section, string name)
    {
        string? text = section[name];
        if (text is null)
        {
            return null;
        }

        return double.TryParse(text, System.Globalization.NumberStyles.Float, System.Globalization.CultureInfo.InvariantCulture, out double seconds) && seconds is >= 0.1 and <= 60
            ? TimeSpan.FromSeconds(seconds)
            : throw new SettingsException($"{Section}:{name} '{text}' is not a number of seconds from 0.1 to 60.");
    }
}

/// <summary>A setting is missing or invalid.</summary>
internal sealed class SettingsException(string message) : Exception(message);
