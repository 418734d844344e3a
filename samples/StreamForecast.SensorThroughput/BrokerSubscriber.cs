using System.Buffers;
using System.Text.Json;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using MQTTnet;
using MQTTnet.Exceptions;
using MQTTnet.Formatter;
using MQTTnet.Protocol;
using StreamForecast.Hosting;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.SensorThroughput;

/// <summary>
/// The broker mode's consumer, run as a hosted service after the engine's: connects to an external MQTT broker with a
/// fixed client id and a persistent session (MQTT 5, clean start off, a session that outlives the connection),
/// subscribes with QoS 1, and acknowledges each message only once <see cref="HostedForecastEngine{TKey}.PostAsync"/>
/// has completed, that is once the reading is in the durable input log. A crash before the acknowledgement makes the
/// broker deliver the message again on the next session; the reading's event id (device and sequence number) makes the
/// engine count the repeat as a duplicate, not twice.
/// </summary>
/// <remarks>
/// A message that is not a reading (bad JSON, a missing device, a negative sequence number, a value the engine refuses)
/// can never become one: it is logged as a warning, counted as refused and acknowledged, so the broker does not send it
/// forever. A post that fails for another reason (the log cannot store it, the host is stopping) is not acknowledged.
/// </remarks>
public sealed partial class BrokerSubscriber : IHostedService, IDisposable
{
    /// <summary>The start of the line printed once the consumer is subscribed.</summary>
    public const string ReadyPrefix = "subscribed to ";

    /// <summary>The start of the line printed after a graceful stop.</summary>
    public const string StoppedPrefix = "stopped: ";

    /// <summary>The start of the status lines printed while messages arrive.</summary>
    public const string StatusPrefix = "status: ";

    /// <summary>How long the broker keeps the session (and the QoS 1 messages queued for it) after a disconnect: 7 days.</summary>
    public const uint SessionExpirySeconds = 7 * 24 * 3600;

    /// <summary>A status line is printed after every this many acknowledgements (and when anything changed in the last half second).</summary>
    public const int ProgressEvery = 100;

    private static readonly JsonSerializerOptions s_json = new(JsonSerializerDefaults.Web);
    private readonly HostedForecastEngine<string> _hosted;
    private readonly BrokerSettings _settings;
    private readonly TextWriter _output;
    private readonly ILogger<BrokerSubscriber> _logger;
    private readonly CancellationTokenSource _stopping = new();
    private readonly IMqttClient _client = new MqttClientFactory().CreateMqttClient();
    private long _acknowledged;
    private long _refused;
    private Task? _statusLoop;
    private MqttClientOptions? _options;

    /// <summary>Creates the consumer (it connects when the host starts it).</summary>
    /// <param name="hosted">The hosted engine (with the input log on).</param>
    /// <param name="settings">Where to connect.</param>
    /// <param name="output">Where to print the ready, status and stop lines.</param>
    /// <param name="logger">For refused messages and failed posts.</param>
    public BrokerSubscriber(HostedForecastEngine<string> hosted, BrokerSettings settings, TextWriter output, ILogger<BrokerSubscriber> logger)
    {
        _hosted = hosted;
        _settings = settings;
        _output = output;
        _logger = logger;
        _client.ApplicationMessageReceivedAsync += OnMessageAsync;
    }

    /// <inheritdoc/>
    public async Task StartAsync(CancellationToken cancellationToken)
    {
        await _hosted.WaitUntilStartedAsync(cancellationToken);
        if (!_hosted.HasInputLog)
        {
            throw new InvalidOperationException("The broker mode acknowledges a message only once the input log holds it: StreamForecast:InputLog:Enabled must be true.");
        }

        _options = new MqttClientOptionsBuilder()
            .WithTcpServer(_settings.Host, _settings.Port)
            .WithClientId(_settings.ClientId)
            .WithProtocolVersion(MqttProtocolVersion.V500)
            .WithCleanStart(false)
            .WithSessionExpiryInterval(SessionExpirySeconds)
            .Build();
        MqttClientConnectResult connected = await _client.ConnectAsync(_options, cancellationToken);
        _client.DisconnectedAsync += OnDisconnectedAsync;
        await _client.SubscribeAsync(new MqttClientSubscribeOptionsBuilder().WithTopicFilter(_settings.TopicFilter, MqttQualityOfServiceLevel.AtLeastOnce).Build(), cancellationToken);
        _output.WriteLine($"{ReadyPrefix}{_settings.TopicFilter} on {_settings.Host}:{_settings.Port} as {_settings.ClientId} (QoS 1, {(connected.IsSessionPresent ? "session resumed" : "new session")}); engine {Describe(_hosted.Start)}");
        _statusLoop = ReportWhileRunningAsync(_stopping.Token);
    }

    /// <inheritdoc/>
    public async Task StopAsync(CancellationToken cancellationToken)
    {
        await _stopping.CancelAsync();
        if (_client.IsConnected)
        {
            // A normal disconnect keeps the session: the broker queues what arrives until the next start.
            await _client.DisconnectAsync(new MqttClientDisconnectOptionsBuilder().WithSessionExpiryInterval(SessionExpirySeconds).Build(), cancellationToken);
        }

        if (_statusLoop is not null)
        {
            await _statusLoop;
        }

        if (_hosted.IsStarted)
        {
            ForecastEngine<string> engine = _hosted.Engine;
            IReadOnlyList<SeriesStatus<string>> series = await engine.GetSeriesStatusAsync(cancellationToken); // after every queued reading
            _output.WriteLine($"{StoppedPrefix}{Status(engine.GetCounters())}");
            foreach (SeriesStatus<string> s in series.OrderBy(s => s.Key, StringComparer.Ordinal))
            {
                string next = s.Next.IsValid ? $"{s.Next.Value:0.0} (80%: {s.Next.Lower:0.0} to {s.Next.Upper:0.0})" : "warming up";
                _output.WriteLine($"  {s.Key,-7} open interval from {s.OpenPeriodStart:yyyy-MM-dd HH:mm}; next {next}");
            }
        }
    }

    /// <inheritdoc/>
    public void Dispose()
    {
        _client.Dispose();
        _stopping.Dispose();
    }

    /// <summary>Says how the engine started: restored or empty, and what was replayed from the input log.</summary>
    /// <param name="start">The engine's start.</param>
    /// <returns>The description.</returns>
    public static string Describe(EngineStart start)
    {
        ArgumentNullException.ThrowIfNull(start);
        string restored = start.CheckpointLocation is null
            ? "started empty (no checkpoint yet)"
            : $"restored {start.SeriesRestored} series from the checkpoint at input position {start.ReplayFrom}";
        return $"{restored}, then replayed {start.LogRecordsReplayed} logged readings ({start.LogRecordsRefused} refused)";
    }

    private string Status(EngineCounters c) =>
        $"acknowledged {Interlocked.Read(ref _acknowledged)} readings this run ({Interlocked.Read(ref _refused)} refused); engine: {c.Observations} taken, {c.Duplicates} duplicates, {c.Late} late, {c.Rejected} rejected";

    private async Task OnMessageAsync(MqttApplicationMessageReceivedEventArgs e)
    {
        // Acknowledged below, only once the input log holds the reading (or the message can never be one). The
        // acknowledgement itself is not cancelled by a stop: a reading that is logged should not be delivered again.
        e.AutoAcknowledge = false;
        CancellationToken stopping = _stopping.Token;
        if (!TryRead(e.ApplicationMessage, out Observation<string> observation, out string? problem))
        {
            Refuse(e.ApplicationMessage.Topic, problem);
            await e.AcknowledgeAsync(CancellationToken.None);
            return;
        }

        try
        {
            await _hosted.PostAsync(observation, stopping);
        }
        catch (ArgumentOutOfRangeException ex)
        {
            Refuse(e.ApplicationMessage.Topic, ex.Message);
            await e.AcknowledgeAsync(CancellationToken.None);
            return;
        }
        catch (Exception ex) when (ex is IOException or InvalidOperationException or OperationCanceledException)
        {
            // Not taken, or not known to be: no acknowledgement, so the broker delivers it again next session.
            LogNotAcknowledged(_logger, ex, e.ApplicationMessage.Topic);
            return;
        }

        await e.AcknowledgeAsync(CancellationToken.None);
        if (Interlocked.Increment(ref _acknowledged) % ProgressEvery == 0)
        {
            _output.WriteLine(StatusPrefix + Status(_hosted.Engine.GetCounters()));
        }
    }

    private async Task OnDisconnectedAsync(MqttClientDisconnectedEventArgs e)
    {
        // Lost the broker while running: reconnect every 2 s with the same session (the broker keeps what arrives).
        CancellationToken stopping = _stopping.Token;
        if (!stopping.IsCancellationRequested)
        {
            LogDisconnected(_logger, e.Reason.ToString());
        }

        while (!stopping.IsCancellationRequested && !_client.IsConnected)
        {
            try
            {
                await Task.Delay(TimeSpan.FromSeconds(2), stopping);
                await _client.ConnectAsync(_options!, stopping);
                await _client.SubscribeAsync(new MqttClientSubscribeOptionsBuilder().WithTopicFilter(_settings.TopicFilter, MqttQualityOfServiceLevel.AtLeastOnce).Build(), stopping);
            }
            catch (OperationCanceledException)
            {
                return;
            }
            catch (Exception ex) when (ex is MqttCommunicationException or InvalidOperationException)
            {
                // still unreachable: try again
            }
        }
    }

    private static bool TryRead(MqttApplicationMessage message, out Observation<string> observation, out string? problem)
    {
        observation = default;
        ThroughputReading? reading;
        try
        {
            reading = JsonSerializer.Deserialize<ThroughputReading>(message.Payload.ToArray(), s_json);
        }
        catch (JsonException ex)
        {
            problem = "the payload is not a reading: " + ex.Message;
            return false;
        }

        if (reading is null || string.IsNullOrWhiteSpace(reading.Device) || reading.Device.Length > 64)
        {
            problem = "the reading names no device (or a name longer than 64 characters)";
            return false;
        }

        if (reading.Sequence < 0)
        {
            problem = $"sequence number {reading.Sequence} is negative";
            return false;
        }

        observation = new Observation<string>(reading.Device, reading.At, reading.Messages, $"{reading.Device}#{reading.Sequence}");
        problem = null;
        return true;
    }

    private void Refuse(string topic, string? problem)
    {
        Interlocked.Increment(ref _refused);
        LogRefused(_logger, topic, problem);
    }

    [LoggerMessage(Level = LogLevel.Warning, Message = "Disconnected from the broker ({Reason}); reconnecting every 2 s with the same session")]
    private static partial void LogDisconnected(ILogger logger, string reason);

    [LoggerMessage(Level = LogLevel.Warning, Message = "A reading on {Topic} was not acknowledged (the broker will deliver it again)")]
    private static partial void LogNotAcknowledged(ILogger logger, Exception error, string topic);

    [LoggerMessage(Level = LogLevel.Warning, Message = "A message on {Topic} was refused and acknowledged (it can never be taken): {Problem}")]
    private static partial void LogRefused(ILogger logger, string topic, string? problem);

    private async Task ReportWhileRunningAsync(CancellationToken stopping)
    {
        // A status line whenever something changed in the last half second.
        using var timer = new PeriodicTimer(TimeSpan.FromMilliseconds(500));
        string last = string.Empty;
        try
        {
            while (await timer.WaitForNextTickAsync(stopping))
            {
                string now = Status(_hosted.Engine.GetCounters());
                if (now != last)
                {
                    _output.WriteLine(StatusPrefix + now);
                    last = now;
                }
            }
        }
        catch (OperationCanceledException)
        {
            // stopping
        }
    }
}
