using System.Diagnostics;
using StreamForecast.Samples.SensorThroughput;

namespace StreamForecast.Hosting.Tests.Samples;

/// <summary>
/// The sensor sample's broker mode as a child process (<c>dotnet StreamForecast.SensorThroughput.dll --broker ...</c>):
/// its output lines are kept and can be waited for; it is killed by process id (SIGKILL: no stop code runs) or stopped
/// gracefully by closing its standard input.
/// </summary>
internal sealed class SensorConsumerProcess : IAsyncDisposable
{
    private readonly Process _process;
    private readonly List<string> _lines = [];
    private readonly SemaphoreSlim _changed = new(0);

    private SensorConsumerProcess(Process process) => _process = process;

    /// <summary>The process id.</summary>
    public int Id => _process.Id;

    /// <summary>Everything it printed so far (standard output and error).</summary>
    public string Output
    {
        get
        {
            lock (_lines)
            {
                return string.Join(Environment.NewLine, _lines);
            }
        }
    }

    /// <summary>The built sample beside this test project: samples/StreamForecast.SensorThroughput/bin/&lt;configuration&gt;/&lt;framework&gt;.</summary>
    public static string Assembly
    {
        get
        {
            var testDir = new DirectoryInfo(AppContext.BaseDirectory.TrimEnd(Path.DirectorySeparatorChar));
            DirectoryInfo repo = testDir.Parent!.Parent!.Parent!.Parent!.Parent!;
            string path = Path.Combine(repo.FullName, "samples", "StreamForecast.SensorThroughput", "bin", testDir.Parent!.Name, testDir.Name, "StreamForecast.SensorThroughput.dll");
            Assert.True(File.Exists(path), $"the sensor sample was not built at {path}");
            return path;
        }
    }

    /// <summary>Starts the consumer.</summary>
    /// <param name="args">Its arguments (the stop-on-closed-input switch is added).</param>
    /// <returns>The running process.</returns>
    public static SensorConsumerProcess Start(IEnumerable<string> args)
    {
        var info = new ProcessStartInfo(DotNetHost())
        {
            UseShellExecute = false,
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
        };
        info.ArgumentList.Add(Assembly);
        foreach (string a in args)
        {
            info.ArgumentList.Add(a);
        }

        info.ArgumentList.Add(BrokerMode.StopWhenInputClosesSwitch);
        var self = new SensorConsumerProcess(new Process { StartInfo = info });
        self._process.OutputDataReceived += (_, e) => self.Keep(e.Data);
        self._process.ErrorDataReceived += (_, e) => self.Keep(e.Data);
        self._process.Start();
        self._process.BeginOutputReadLine();
        self._process.BeginErrorReadLine();
        return self;
    }

    /// <summary>Waits for the first line (from the start) that matches.</summary>
    /// <param name="match">The test.</param>
    /// <param name="timeout">How long to wait.</param>
    /// <param name="what">What is awaited, for the failure message.</param>
    /// <returns>The line.</returns>
    public async Task<string> WaitForLineAsync(Func<string, bool> match, TimeSpan timeout, string what)
    {
        var clock = Stopwatch.StartNew();
        while (true)
        {
            lock (_lines)
            {
                string? found = _lines.Find(l => match(l));
                if (found is not null)
                {
                    return found;
                }
            }

            TimeSpan left = timeout - clock.Elapsed;
            Assert.True(left > TimeSpan.Zero && !_process.HasExited, $"the consumer (PID {Id}) {(_process.HasExited ? "exited" : "printed nothing")} before {what} within {timeout.TotalSeconds:0} s. Its output:{Environment.NewLine}{Output}");
            await _changed.WaitAsync(left < TimeSpan.FromMilliseconds(200) ? left : TimeSpan.FromMilliseconds(200));
        }
    }

    /// <summary>Kills the process by its id, as <c>kill -9</c> would.</summary>
    public void Kill()
    {
        _process.Kill();
        _process.WaitForExit();
    }

    /// <summary>Closes its standard input (a graceful stop) and waits for it to exit.</summary>
    /// <param name="timeout">How long to wait.</param>
    /// <returns>The exit code.</returns>
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
            Assert.Fail($"the consumer (PID {Id}) did not stop within {timeout.TotalSeconds:0} s. Its output:{Environment.NewLine}{Output}");
        }

        _process.WaitForExit(); // the output is read to its end
        return _process.ExitCode;
    }

    /// <summary>Kills the process if it still runs, and releases it.</summary>
    /// <returns>A task.</returns>
    public async ValueTask DisposeAsync()
    {
        if (!_process.HasExited)
        {
            _process.Kill();
            await _process.WaitForExitAsync();
        }

        _process.Dispose();
        _changed.Dispose();
    }

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

    private void Keep(string? line)
    {
        if (line is null)
        {
            return;
        }

        lock (_lines)
        {
            _lines.Add(line);
        }

        _changed.Release();
    }
}
