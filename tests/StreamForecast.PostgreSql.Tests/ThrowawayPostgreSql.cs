using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using System.Text;

namespace StreamForecast.PostgreSql.Tests;

/// <summary>
/// A throwaway PostgreSQL server started from the Debian server package's own binaries: a fresh data folder in the
/// temporary directory (initdb, trust authentication), listening only on 127.0.0.1 on a free port and on a socket inside
/// that folder, stopped (fast shutdown) and deleted on dispose. As root (CI) it runs as an unprivileged user, since
/// PostgreSQL refuses to run as root: <c>postgres</c> (made by the Debian package) or else <c>nobody</c>, or else a user
/// it creates. Shared, as one source file, by the PostgreSQL test fixture (<c>PostgreSqlServer</c>) and the cluster
/// benchmark, which links it in.
/// </summary>
internal sealed class ThrowawayPostgreSql : IAsyncDisposable
{
    /// <summary>The role initdb creates (a superuser of the throwaway cluster).</summary>
    public const string UserName = "streamforecast";

    private const string FallbackUser = "streamforecast-pg";
    private static readonly TimeSpan s_commandTimeout = TimeSpan.FromMinutes(2);

    private readonly string _binaries;
    private readonly string? _runAs;
    private string? _directory;
    private bool _started;

    private ThrowawayPostgreSql(string binaries, string? runAs, string directory)
    {
        _binaries = binaries;
        _runAs = runAs;
        _directory = directory;
    }

    /// <summary>The server's TCP port on 127.0.0.1.</summary>
    public int Port { get; private set; }

    /// <summary>A connection string for database <c>postgres</c> as <see cref="UserName"/>.</summary>
    /// <param name="maxPoolSize">Npgsql's pool size (per data source).</param>
    /// <returns>The connection string.</returns>
    public string ConnectionString(int maxPoolSize) => string.Create(CultureInfo.InvariantCulture,
        $"Host=127.0.0.1;Port={Port};Username={UserName};Database=postgres;Timeout=15;Maximum Pool Size={maxPoolSize}");

    /// <summary>Starts a new server in a folder named <paramref name="folderPrefix"/> and a fresh id.</summary>
    /// <param name="folderPrefix">The start of the data folder's name in the temporary directory.</param>
    /// <returns>The running server.</returns>
    /// <exception cref="InvalidOperationException">The server could not start; the message gives the reason and the tail of its log, and nothing is left behind.</exception>
    public static async Task<ThrowawayPostgreSql> StartAsync(string folderPrefix)
    {
        string binaries = FindBinaries();
        string? runAs = Environment.UserName == "root" ? await UnprivilegedUserAsync() : null;
        string directory = Path.Combine(Path.GetTempPath(), folderPrefix + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(directory);
        var server = new ThrowawayPostgreSql(binaries, runAs, directory);
        try
        {
            await server.InitializeAsync();
            return server;
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            string log = server.ServerLogTail();
            await server.DisposeAsync();
            throw new InvalidOperationException($"{ex.Message}{log}", ex);
        }
    }

    /// <summary>Stops the server (fast shutdown) and deletes its folder.</summary>
    /// <returns>A task that completes when the server has stopped and its folder is gone.</returns>
    public async ValueTask DisposeAsync()
    {
        try
        {
            if (_started && _directory is not null)
            {
                _started = false;
                await RunAsync(Path.Combine(_binaries, "pg_ctl"), ["-D", Path.Combine(_directory, "data"), "-m", "fast", "-w", "-t", "60", "stop"], asServerUser: true);
            }
        }
        finally
        {
            if (_directory is not null && Directory.Exists(_directory))
            {
                Directory.Delete(_directory, recursive: true);
            }

            _directory = null;
        }
    }

    private async Task InitializeAsync()
    {
        string directory = _directory!;
        if (_runAs is not null)
        {
            await RunAsync("chown", [_runAs, directory], asServerUser: false);
        }

        string data = Path.Combine(directory, "data");
        await RunAsync(Path.Combine(_binaries, "initdb"), ["-D", data, "-A", "trust", "-U", UserName, "-E", "UTF8", "--no-locale", "--no-sync"], asServerUser: true);

        // A free port can be taken by another process between the probe and the start: try a few.
        string? lastFailure = null;
        for (int attempt = 0; attempt < 3 && !_started; attempt++)
        {
            Port = FreePort();
            try
            {
                await RunAsync(
                    Path.Combine(_binaries, "pg_ctl"),
                    ["-D", data, "-o", $"-p {Port} -k {directory} -c listen_addresses=127.0.0.1", "-l", Path.Combine(directory, "server.log"), "-w", "-t", "60", "start"],
                    asServerUser: true);
                _started = true;
            }
            catch (InvalidOperationException ex)
            {
                lastFailure = ex.Message;
            }
        }

        if (!_started)
        {
            throw new InvalidOperationException($"pg_ctl start failed three times; the last time: {lastFailure}");
        }
    }

    // Debian keeps initdb and pg_ctl off PATH, in /usr/lib/postgresql/<major>/bin; take the newest major installed.
    private static string FindBinaries()
    {
        const string root = "/usr/lib/postgresql";
        string? best = null;
        int bestMajor = -1;
        if (Directory.Exists(root))
        {
            foreach (string folder in Directory.GetDirectories(root))
            {
                string bin = Path.Combine(folder, "bin");
                if (int.TryParse(Path.GetFileName(folder), out int major) && major > bestMajor
                    && File.Exists(Path.Combine(bin, "initdb")) && File.Exists(Path.Combine(bin, "pg_ctl")))
                {
                    best = bin;
                    bestMajor = major;
                }
            }
        }

        return best ?? throw new InvalidOperationException($"no PostgreSQL server binaries (initdb and pg_ctl) under {root}/<version>/bin.");
    }

    private static async Task<string> UnprivilegedUserAsync()
    {
        string passwd = await File.ReadAllTextAsync("/etc/passwd");
        foreach (string candidate in new[] { "postgres", "nobody", FallbackUser })
        {
            if (passwd.Split('\n').Any(line => line.StartsWith(candidate + ":", StringComparison.Ordinal)))
            {
                return candidate;
            }
        }

        await RunProcessAsync("useradd", ["--system", "--no-create-home", "--shell", "/usr/sbin/nologin", FallbackUser], workingDirectory: "/");
        return FallbackUser;
    }

    private static int FreePort()
    {
        using var probe = new TcpListener(IPAddress.Loopback, 0);
        probe.Start();
        return ((IPEndPoint)probe.LocalEndpoint).Port;
    }

    private Task RunAsync(string program, string[] arguments, bool asServerUser) =>
        asServerUser && _runAs is not null
            ? RunProcessAsync("runuser", ["-u", _runAs, "--", program, .. arguments], _directory!)
            : RunProcessAsync(program, arguments, _directory ?? "/");

    private static async Task RunProcessAsync(string program, string[] arguments, string workingDirectory)
    {
        var start = new ProcessStartInfo(program)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            WorkingDirectory = workingDirectory,
        };
        foreach (string argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        start.Environment.Remove("PGDATA");
        start.Environment.Remove("PGPORT");
        using Process process = Process.Start(start) ?? throw new InvalidOperationException($"{program} did not start.");
        Task<string> output = process.StandardOutput.ReadToEndAsync();
        Task<string> errors = process.StandardError.ReadToEndAsync();
        using var timeout = new CancellationTokenSource(s_commandTimeout);
        try
        {
            await process.WaitForExitAsync(timeout.Token);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            throw new InvalidOperationException($"'{program} {string.Join(' ', arguments)}' did not finish within {s_commandTimeout.TotalSeconds} s.");
        }

        string text = (await output) + (await errors);
        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"'{program} {string.Join(' ', arguments)}' exited with code {process.ExitCode}: {text.Trim()}");
        }
    }

    private string ServerLogTail()
    {
        string? path = _directory is null ? null : Path.Combine(_directory, "server.log");
        if (path is null || !File.Exists(path))
        {
            return "";
        }

        string[] lines = File.ReadAllLines(path);
        var tail = new StringBuilder(" Server log (last lines):");
        foreach (string line in lines.Skip(Math.Max(0, lines.Length - 15)))
        {
            tail.Append('\n').Append(line);
        }

        return tail.ToString();
    }
}
