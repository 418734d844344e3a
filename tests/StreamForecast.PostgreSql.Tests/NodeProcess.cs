using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text;

namespace StreamForecast.PostgreSql.Tests;

/// <summary>
/// One <c>StreamForecast.ClusterNode</c> silo as a separate OS process (<c>dotnet StreamForecast.ClusterNode.dll</c>
/// with its settings on the command line), on loopback ports of its own. Its output is kept for failure messages.
/// </summary>
internal sealed class NodeProcess : IAsyncDisposable
{
    private readonly Process _process;
    private readonly StringBuilder _output = new();
    private readonly TaskCompletionSource _ready = new(TaskCreationOptions.RunContinuationsAsynchronously);

    private NodeProcess(Process process, int siloPort, int gatewayPort)
    {
        _process = process;
        SiloPort = siloPort;
        GatewayPort = gatewayPort;
    }

    public int SiloPort { get; }

    public int GatewayPort { get; }

    public int ProcessId => _process.Id;

    public bool HasExited => _process.HasExited;

    /// <summary>Everything the node wrote so far.</summary>
    public string Output
    {
        get
        {
            lock (_output)
            {
                return _output.ToString();
            }
        }
    }

    /// <summary>The sample as this build made it, beside this test project: samples/StreamForecast.ClusterNode/bin/&lt;configuration&gt;/&lt;framework&gt;.</summary>
    public static string NodeAssembly
    {
        get
        {
            var testDir = new DirectoryInfo(AppContext.BaseDirectory.TrimEnd(Path.DirectorySeparatorChar));
            DirectoryInfo repo = testDir.Parent!.Parent!.Parent!.Parent!.Parent!;
            string path = Path.Combine(repo.FullName, "samples", "StreamForecast.ClusterNode", "bin", testDir.Parent!.Name, testDir.Name, "StreamForecast.ClusterNode.dll");
            Assert.True(File.Exists(path), $"the cluster node sample was not built at {path}");
            return path;
        }
    }

    /// <summary>Starts a node and waits until it reports that its silo has joined, or fails with its output.</summary>
    public static async Task<NodeProcess> StartAsync(string connectionString, string clusterId, TimeSpan timeout)
    {
        int siloPort = FreePort();
        int gatewayPort = FreePort();
        var start = new ProcessStartInfo(DotNetHost())
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(NodeAssembly);
        start.ArgumentList.Add($"--ClusterNode:ConnectionString={connectionString}");
        start.ArgumentList.Add($"--ClusterNode:ClusterId={clusterId}");
        start.ArgumentList.Add($"--ClusterNode:SiloPort={siloPort}");
        start.ArgumentList.Add($"--ClusterNode:GatewayPort={gatewayPort}");
        start.ArgumentList.Add("--ClusterNode:ProbeTimeoutSeconds=1");
        start.ArgumentList.Add("--Logging:LogLevel:Default=Warning");
        Process process = Process.Start(start) ?? throw new InvalidOperationException("the cluster node did not start");
        var node = new NodeProcess(process, siloPort, gatewayPort);
        process.OutputDataReceived += (_, e) => node.Append(e.Data);
        process.ErrorDataReceived += (_, e) => node.Append(e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        Task exited = process.WaitForExitAsync();
        Task first = await Task.WhenAny(node._ready.Task, exited, Task.Delay(timeout));
        if (first != node._ready.Task)
        {
            string why = first == exited ? $"exited with code {process.ExitCode}" : $"did not report ready within {timeout.TotalSeconds} s";
            await node.DisposeAsync();
            throw new InvalidOperationException($"cluster node on silo port {siloPort} {why}. Its output:\n{node.Output}");
        }

        return node;
    }

    /// <summary>Kills the process at once (SIGKILL on Unix: no shutdown code runs) and waits for it to be gone.</summary>
    public async Task KillAsync()
    {
        _process.Kill();
        await _process.WaitForExitAsync();
    }

    public async ValueTask DisposeAsync()
    {
        if (!_process.HasExited)
        {
            _process.Kill();
            await _process.WaitForExitAsync();
        }

        _process.Dispose();
    }

    private void Append(string? line)
    {
        if (line is null)
        {
            return;
        }

        lock (_output)
        {
            _output.AppendLine(line);
        }

        if (line.StartsWith("cluster node ready", StringComparison.Ordinal))
        {
            _ready.TrySetResult();
        }
    }

    private static int FreePort()
    {
        using var probe = new TcpListener(IPAddress.Loopback, 0);
        probe.Start();
        return ((IPEndPoint)probe.LocalEndpoint).Port;
    }

    // The dotnet host running the tests if it is one, else the SDK's (DOTNET_HOST_PATH), else dotnet on the PATH.
    private static string DotNetHost()
    {
        string? current = Environment.ProcessPath;
        if (current is not null && Path.GetFileNameWithoutExtension(current) == "dotnet")
        {
            return current;
        }

        return Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") is { Length: > 0 } sdkHost && File.Exists(sdkHost) ? sdkHost : "dotnet";
    }
}
