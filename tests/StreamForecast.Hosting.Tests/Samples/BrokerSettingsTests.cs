using Microsoft.Extensions.Configuration;
using StreamForecast.Samples.SensorThroughput;

namespace StreamForecast.Hosting.Tests.Samples;

public sealed class BrokerSettingsTests
{
    private static IConfiguration CommandLine(params string[] args) =>
        new ConfigurationBuilder().AddCommandLine(args, new Dictionary<string, string>(BrokerSettings.Switches)).Build();

    [Fact]
    public void Read_AllSwitches_SetsEverySetting()
    {
        BrokerSettings s = BrokerSettings.Read(CommandLine("--broker", "broker.local:8883", "--topic", "plant/+/throughput", "--client-id", "forecaster-1", "--data", "/var/lib/fc"));

        Assert.Equal(new BrokerSettings("broker.local", 8883, "plant/+/throughput", "forecaster-1", "/var/lib/fc"), s);
        Assert.Equal(Path.Combine("/var/lib/fc", "sensor-throughput.db"), s.DataFile);
    }

    [Theory]
    [InlineData("127.0.0.1", "not host:port")]
    [InlineData("127.0.0.1:0", "not host:port")]
    [InlineData("127.0.0.1:65536", "not host:port")]
    [InlineData("127.0.0.1:+1883", "not host:port")]
    [InlineData(":1883", "not host:port")]
    public void Read_AddressNotHostAndPort_IsRefusedNamingTheSetting(string address, string expected)
    {
        FormatException ex = Assert.Throws<FormatException>(() => BrokerSettings.Read(CommandLine("--broker", address, "--topic", "t/+", "--client-id", "c", "--data", "d")));

        Assert.Contains("Broker:Address", ex.Message, StringComparison.Ordinal);
        Assert.Contains(expected, ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("--topic", "Broker:TopicFilter")]
    [InlineData("--client-id", "Broker:ClientId")]
    [InlineData("--data", "Broker:DataDirectory")]
    public void Read_SettingMissing_IsRefusedNamingIt(string left, string key)
    {
        string[] all = ["--broker", "127.0.0.1:1883", "--topic", "t/+", "--client-id", "c", "--data", "d"];
        int at = Array.IndexOf(all, left);
        string[] args = [.. all[..at], .. all[(at + 2)..]];

        FormatException ex = Assert.Throws<FormatException>(() => BrokerSettings.Read(CommandLine(args)));

        Assert.Contains(key + " is missing", ex.Message, StringComparison.Ordinal);
    }
}
