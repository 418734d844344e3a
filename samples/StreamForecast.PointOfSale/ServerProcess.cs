using System.Collections.Concurrent;
using System.Diagnostics;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// The point-of-sale server run as a separate process (<c>dotnet StreamForecast.PointOfSale.dll</c>) on a free loopback
/// port with a given checkpoint file: the crash drill of the smoke run starts, stops and kills these, and the tests do
/// the same. A kill is <see cref="Process.Kill()"/> on the process id (SIGKILL on Linux): no shutdown code runs.
/// </summary>
public sealed class ServerProcess : IAsyncDisposable
{
    /// <summary>The command-line switch that makes the server stop (gracefully) when its standard input closes.</summary>
    public const string StopWhenInputClosesSwitch = "--stop-when-input-closes";

    /// <summary>The start of the line the server prints once it serves: <c>serving on URL; how it started</c>.</summary>
    public const string ReadyPrefix = "serving on ";

    private const int KeptLines = 40;
    private readonly Process _process;
    private readonly ConcurrentQueue<string> _recent;

    private ServerProcess(Process process, ConcurrentQueue<string> recent, Uri address, string startReport)
    {
        _process = process;
        _recent = recent;
        Address = address;
        StartReport = startReport;
    }

    /// <summary>The process id.</summary>
    public int Id => _process.Id;

    /// <summary>Where the API is served.</summary>
    public Uri Address { get; }

    /// <summary>How the server's engine started, as the server printed it (see <see cref="PointOfSaleApp.DescribeStart"/>).</summary>
    public string StartReport { get; }

    /// <summary>The server's last lines of output (standard output and error), for failure messages.</summary>
    public string RecentOutput => string.Join(Environment.NewLine, _recent);

    /// <summary>Starts a server and waits until it serves.</summary>
    /// <param name="assemblyPath">The built <c>StreamForecast.PointOfSale.dll</c>.</param>
    /// <param name="checkpointFile">The SQLite file of its checkpoints and input log.</param>
    /// <param name="timeout">How long to wait for it to serve.</param>
    /// <returns>The running server.</returns>
    /// <exception cref="InvalidOperationException">It exited or did not serve in time (the message holds its output); it is killed.</exception>
    public static async Task<ServerProcess> StartAsync(string assemblyPath, string checkpointFile, TimeSpan timeout)
    {
        var info = new ProcessStartInfo(DotNetHost())
        {
            UseShellExecute = false,
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            WorkingDirectory = Path.GetDirectoryName(Path.GetFullPath(checkpointFile))!,
        };
        info.ArgumentList.Add(assemblyPath);
        info.ArgumentList.Add("--urls=http://127.0.0.1:0");
        info.ArgumentList.Add("--StreamForecast:Checkpoints:File=" + checkpointFile);
        info.ArgumentList.Add("--Logging:LogLevel:Default=Warning");
        info.ArgumentList.Add(StopWhenInputClosesSwitch);

        var recent = new ConcurrentQueue<string>();
        var ready = new TaskCompletionSource<string>(TaskCreationOptions.RunContinuationsAsynchronously);
        var process = new Process { StartInfo = info };
        process.OutputDataReceived += (_, e) =>
        {
            if (e.Data is null)
            {
                ready.TrySetException(new InvalidOperationException("The server's output ended before it served."));
                return;
            }

            Keep(recent, e.Data);
            if (e.Data.StartsWith(ReadyPrefix, StringComparison.Ordinal))
            {
                ready.TrySetResult(e.Data);
            }
        };
        process.ErrorDataReceived += (_, e) =>
        {
            if (e.Data is not null)
            {
                Keep(recent, e.Data);
            }
        };
        process.Start();
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();

        string line;
        try
        {
            line = await ready.Task.WaitAsync(timeout);
        }
        catch (Exception ex) when (ex is TimeoutException or InvalidOperationException)
        {
            process.Kill(entireProcessTree: true);
            await process.WaitForExitAsync();
            string output = string.Join(Environment.NewLine, recent);
            process.Dispose();
            throw new InvalidOperationException($"The point-of-sale server did not serve within {timeout.TotalSeconds:0} s ({ex.Message}). Its output:{Environment.NewLine}{output}", ex);
        }

        // "serving on http://127.0.0.1:40123; restored 4 series ..."
        int separator = line.IndexOf("; ", StringComparison.Ordinal);
        var address = new Uri(line[ReadyPrefix.Length..separator]);
        return new ServerProcess(process, recent, address, line[(separator + 2)..]);
    }

    /// <summary>Kills the process by its id, as <c>kill -9</c> would: no stop, no final checkpoint, nothing flushed.</summary>
    public void Kill()
    {
        // The process itself, at once (the server starts no children; walking the tree first would delay the signal).
        _process.Kill();
        _process.WaitForExit();
    }

    /// <summary>Stops the server gracefully (closes its standard input) and waits for it to exit.</summary>
    /// <param name="timeout">How long to wait.</param>
    /// <returns>The exit code.</returns>
    /// <exception cref="TimeoutException">It did not exit in time (it is then killed).</exception>
    public async Task<int> StopAsync(TimeSpan timeout)
    {
        _process.StandardInput.Close();
        using var limit = new CancellationTokenSource(timeout);
        try
        {
            await _process.WaitForExitAsync(limit.Token);
        }
        catch (OperationCanceledException)
        {
            Kill();
            throw new TimeoutException($"The server (PID {Id}) did not stop within {timeout.TotalSeconds:0} s. Its output:{Environment.NewLine}{RecentOutput}");
        }

        return _process.ExitCode;
    }

    /// <summary>Kills the process if it still runs, and releases it.</summary>
    /// <returns>A task.</returns>
    public async ValueTask DisposeAsync()
    {
        if (!_process.HasExited)
        {
            _process.Kill(entireProcessTree: true);
            await _process.WaitForExitAsync();
        }

        _process.Dispose();
    }

    /// <summary>The <c>dotnet</c> host running this process if it is one, else the SDK's (<c>DOTNET_HOST_PATH</c>), else <c>dotnet</c> on the PATH.</summary>
    private static string DotNetHost()
    {
        string? current = Environment.ProcessPath;
        if (current is not null && Path.GetFileNameWithoutExtension(current) == "dotnet")
        {
            return current;
        }

        string? sdkHost = Environment.GetEnvironmentVariable("DOTNET_HOST_PATH");
        return !string.IsNullOrEmpty(sdkHost) && File.Exists(sdkHost) ? sdkHost : "dotnet";
    }

    private static void Keep(ConcurrentQueue<string> recent, string line)
    {
        recent.Enqueue(line);
        while (recent.Count > KeptLines)
        {
            recent.TryDequeue(out _);
        }
    }
}
