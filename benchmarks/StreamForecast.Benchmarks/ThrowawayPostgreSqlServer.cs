using System.Diagnostics;
using System.Net;
using System.Net.Sockets;

namespace StreamForecast.Benchmarks;

/// <summary>
/// A throwaway PostgreSQL server for <see cref="ClusterThroughputBenchmarks"/>: the minimal start and stop of the test
/// fixture (tests/StreamForecast.PostgreSql.Tests/PostgreSqlServer.cs). A fresh data folder in the temporary directory
/// (initdb, trust authentication), listening only on 127.0.0.1 on a free port; as root it runs as <c>postgres</c> or
/// <c>nobody</c> through <c>runuser</c>, since PostgreSQL refuses to run as root. Needs the Debian server package
/// (initdb and pg_ctl under /usr/lib/postgresql/&lt;version&gt;/bin); throws with the reason if it cannot start.
/// </summary>
internal sealed class ThrowawayPostgreSqlServer : IDisposable
{
    private const string UserName = "streamforecast";
    private static readonly TimeSpan s_commandTimeout = TimeSpan.FromMinutes(2);

    private readonly string _binaries;
    private readonly string? _runAs;
    private readonly string _directory;
    private bool _started;

    private ThrowawayPostgreSqlServer(string binaries, string? runAs, string directory)
    {
        _binaries = binaries;
        _runAs = runAs;
        _directory = directory;
    }

    /// <summary>A connection string for database <c>postgres</c> on the server.</summary>
    public string ConnectionString { get; private set; } = "";

    /// <summary>Starts a new server; throws if it cannot.</summary>
    /// <param name="maxPoolSize">Npgsql's pool size in the connection string (per data source).</param>
    public static ThrowawayPostgreSqlServer Start(int maxPoolSize)
    {
        string binaries = FindBinaries();
        string? runAs = Environment.UserName == "root" ? UnprivilegedUser() : null;
        string directory = Path.Combine(Path.GetTempPath(), "sf-bench-pg-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(directory);
        var server = new ThrowawayPostgreSqlServer(binaries, runAs, directory);
        try
        {
            if (runAs is not null)
            {
                RunProcess("chown", [runAs, directory], "/");
            }

            string data = Path.Combine(directory, "data");
            server.Run("initdb", ["-D", data, "-A", "trust", "-U", UserName, "-E", "UTF8", "--no-locale", "--no-sync"]);
            string? lastFailure = null;
            for (int attempt = 0; attempt < 3 && !server._started; attempt++)
            {
                int port = FreePort();
                try
                {
                    server.Run("pg_ctl", ["-D", data, "-o", $"-p {port} -k {directory} -c listen_addresses=127.0.0.1", "-l", Path.Combine(directory, "server.log"), "-w", "-t", "60", "start"]);
                    server._started = true;
                    server.ConnectionString = $"Host=127.0.0.1;Port={port};Username={UserName};Database=postgres;Timeout=15;Maximum Pool Size={maxPoolSize}";
                }
                catch (InvalidOperationException ex)
                {
                    lastFailure = ex.Message;
                }
            }

            if (!server._started)
            {
                throw new InvalidOperationException($"pg_ctl start failed three times; the last time: {lastFailure}");
            }

            return server;
        }
        catch
        {
            server.Dispose();
            throw;
        }
    }

    /// <summary>Stops the server (fast shutdown) and deletes its folder.</summary>
    public void Dispose()
    {
        try
        {
            if (_started)
            {
                _started = false;
                Run("pg_ctl", ["-D", Path.Combine(_directory, "data"), "-m", "fast", "-w", "-t", "60", "stop"]);
            }
        }
        finally
        {
            if (Directory.Exists(_directory))
            {
                Directory.Delete(_directory, recursive: true);
            }
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

        return best ?? throw new InvalidOperationException(
            $"no PostgreSQL server binaries (initdb and pg_ctl) under {root}/<version>/bin; install the Debian package postgresql-15.");
    }

    private static string UnprivilegedUser()
    {
        string[] lines = File.ReadAllLines("/etc/passwd");
        foreach (string candidate in new[] { "postgres", "nobody" })
        {
            if (lines.Any(line => line.StartsWith(candidate + ":", StringComparison.Ordinal)))
            {
                return candidate;
            }
        }

        throw new InvalidOperationException("running as root and neither user 'postgres' nor 'nobody' exists to run the PostgreSQL server as.");
    }

    private static int FreePort()
    {
        using var probe = new TcpListener(IPAddress.Loopback, 0);
        probe.Start();
        return ((IPEndPoint)probe.LocalEndpoint).Port;
    }

    private void Run(string tool, string[] arguments)
    {
        string program = Path.Combine(_binaries, tool);
        if (_runAs is null)
        {
            RunProcess(program, arguments, _directory);
        }
        else
        {
            RunProcess("runuser", ["-u", _runAs, "--", program, .. arguments], _directory);
        }
    }

    private static void RunProcess(string program, string[] arguments, string workingDirectory)
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
        if (!process.WaitForExit(s_commandTimeout))
        {
            process.Kill(entireProcessTree: true);
            throw new InvalidOperationException($"'{program} {string.Join(' ', arguments)}' did not finish within {s_commandTimeout.TotalSeconds} s.");
        }

        string text = output.GetAwaiter().GetResult() + errors.GetAwaiter().GetResult();
        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"'{program} {string.Join(' ', arguments)}' exited with code {process.ExitCode}: {text.Trim()}");
        }
    }
}
