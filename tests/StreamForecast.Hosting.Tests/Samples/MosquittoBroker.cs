using System.Collections.Concurrent;
using System.Diagnostics;
using System.Net;
using System.Net.Sockets;

namespace StreamForecast.Hosting.Tests.Samples;

/// <summary>
/// A throwaway Mosquitto broker for one test: its own folder, a listener on 127.0.0.1 and a free port, anonymous access,
/// persistence on (in its folder), no limit on the QoS 1 messages queued for an offline persistent session. Killed by
/// process id and its folder deleted on dispose. Needs Debian's <c>mosquitto</c> and <c>mosquitto-clients</c> (.ci/run
/// installs them); without them, or when the broker does not start, <see cref="StartAsync"/> throws: tests fail, never skip.
/// </summary>
internal sealed class MosquittoBroker : IAsyncDisposable
{
    private const string InstallHint = "install Debian's packages: apt-get update && apt-get install -y mosquitto mosquitto-clients (.ci/run does this when they are missing)";
    private readonly Process _process;
    private readonly ConcurrentQueue<string> _output;
    private readonly string _folder;

    private MosquittoBroker(Process process, ConcurrentQueue<string> output, string folder, int port)
    {
        _process = process;
        _output = output;
        _folder = folder;
        Port = port;
    }

    /// <summary>The loopback port it listens on.</summary>
    public int Port { get; }

    /// <summary>Starts a broker and waits until it accepts connections.</summary>
    /// <param name="timeout">How long to wait.</param>
    /// <returns>The running broker.</returns>
    /// <exception cref="InvalidOperationException">Mosquitto is not installed, or it did not start (the message holds its output).</exception>
    public static async Task<MosquittoBroker> StartAsync(TimeSpan timeout)
    {
        string broker = Find("mosquitto", "/usr/sbin/mosquitto");
        string folder = Path.Combine(Path.GetTempPath(), "streamforecast-mosquitto-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(folder);
        int port = FreeLoopbackPort();
        string config = Path.Combine(folder, "mosquitto.conf");
        await File.WriteAllLinesAsync(config,
        [
            $"listener {port} 127.0.0.1",
            "allow_anonymous true",
            "persistence true",
            $"persistence_location {folder}/",
            "max_queued_messages 0", // no limit: every QoS 1 message for the offline session is kept
            "user root", // started as root, Mosquitto would otherwise switch to user 'mosquitto', who cannot write the folder; ignored when not root
            "log_dest stderr",
        ]);

        var output = new ConcurrentQueue<string>();
        var process = new Process
        {
            StartInfo = new ProcessStartInfo(broker) { UseShellExecute = false, RedirectStandardOutput = true, RedirectStandardError = true, ArgumentList = { "-c", config } },
        };
        process.OutputDataReceived += (_, e) => Keep(output, e.Data);
        process.ErrorDataReceived += (_, e) => Keep(output, e.Data);
        process.Start();
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        var self = new MosquittoBroker(process, output, folder, port);

        var clock = Stopwatch.StartNew();
        while (true)
        {
            if (process.HasExited)
            {
                await self.DisposeAsync();
                throw new InvalidOperationException($"mosquitto exited at once (code {process.ExitCode}). Its output:{Environment.NewLine}{string.Join(Environment.NewLine, output)}");
            }

            try
            {
                using var probe = new TcpClient();
                await probe.ConnectAsync(IPAddress.Loopback, port);
                return self;
            }
            catch (SocketException) when (clock.Elapsed < timeout)
            {
                await Task.Delay(50);
            }
            catch (SocketException ex)
            {
                await self.DisposeAsync();
                throw new InvalidOperationException($"mosquitto did not accept connections on 127.0.0.1:{port} within {timeout.TotalSeconds:0} s ({ex.Message}). Its output:{Environment.NewLine}{string.Join(Environment.NewLine, output)}", ex);
            }
        }
    }

    /// <summary>Publishes each line as one QoS 1 message on a topic with <c>mosquitto_pub -l</c>, and waits until it is done.</summary>
    /// <param name="topic">The topic.</param>
    /// <param name="clientId">The publisher's client id.</param>
    /// <param name="lines">The payloads, one a line.</param>
    /// <returns>A task.</returns>
    /// <exception cref="InvalidOperationException">mosquitto_pub is missing, failed or did not finish in 30 s.</exception>
    public async Task PublishAsync(string topic, string clientId, IEnumerable<string> lines)
    {
        string publisher = Find("mosquitto_pub", "/usr/bin/mosquitto_pub");
        var info = new ProcessStartInfo(publisher) { UseShellExecute = false, RedirectStandardInput = true, RedirectStandardError = true };
        foreach (string a in new[] { "-h", "127.0.0.1", "-p", Port.ToString(System.Globalization.CultureInfo.InvariantCulture), "-q", "1", "-t", topic, "-i", clientId, "-l" })
        {
            info.ArgumentList.Add(a);
        }

        using Process process = Process.Start(info)!;
        Task<string> errors = process.StandardError.ReadToEndAsync();
        foreach (string line in lines)
        {
            await process.StandardInput.WriteLineAsync(line);
        }

        process.StandardInput.Close();
        using var limit = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        try
        {
            await process.WaitForExitAsync(limit.Token);
        }
        catch (OperationCanceledException)
        {
            process.Kill();
            throw new InvalidOperationException($"mosquitto_pub on {topic} did not finish within 30 s.");
        }

        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"mosquitto_pub on {topic} exited with code {process.ExitCode}: {await errors}");
        }
    }

    /// <summary>Kills the broker by its process id and deletes its folder.</summary>
    /// <returns>A task.</returns>
    public async ValueTask DisposeAsync()
    {
        if (!_process.HasExited)
        {
            _process.Kill();
            await _process.WaitForExitAsync();
        }

        _process.Dispose();
        try
        {
            Directory.Delete(_folder, recursive: true);
        }
        catch (IOException)
        {
            // Best effort: the OS temp cleaner removes leftovers.
        }
    }

    private static string Find(string name, string debianPath)
    {
        if (File.Exists(debianPath))
        {
            return debianPath;
        }

        foreach (string dir in (Environment.GetEnvironmentVariable("PATH") ?? string.Empty).Split(Path.PathSeparator, StringSplitOptions.RemoveEmptyEntries))
        {
            string candidate = Path.Combine(dir, name);
            if (File.Exists(candidate))
            {
                return candidate;
            }
        }

        throw new InvalidOperationException($"{name} was not found (neither {debianPath} nor on the PATH): {InstallHint}.");
    }

    private static int FreeLoopbackPort()
    {
        var probe = new TcpListener(IPAddress.Loopback, 0);
        probe.Start();
        int port = ((IPEndPoint)probe.LocalEndpoint).Port;
        probe.Stop();
        return port;
    }

    private static void Keep(ConcurrentQueue<string> output, string? line)
    {
        if (line is null)
        {
            return;
        }

        output.Enqueue(line);
        while (output.Count > 40)
        {
            output.TryDequeue(out _);
        }
    }
}
