using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text;
using Npgsql;

namespace StreamForecast.PostgreSql.Tests;

/// <summary>
/// A throwaway PostgreSQL server for the tests, started from the Debian server package's own binaries: a fresh data
/// folder in the temporary directory (initdb, trust authentication), listening only on 127.0.0.1 on a free port and on a
/// socket inside that folder, stopped and deleted after the tests. As root (CI) it runs as an unprivileged user, since
/// PostgreSQL refuses to run as root: <c>postgres</c> (made by the Debian package) or else <c>nobody</c>, or else a user
/// it creates. If the server cannot start, <see cref="InitializeAsync"/> throws with the reason and every test that uses
/// the server fails with it: these tests never skip.
/// </summary>
public sealed class PostgreSqlServer : IAsyncLifetime
{
    /// <summary>The role initdb creates (a superuser of the throwaway cluster).</summary>
    public const string UserName = "streamforecast";

    private const string FallbackUser = "streamforecast-pg";
    private static readonly TimeSpan s_commandTimeout = TimeSpan.FromMinutes(2);

    private string? _directory;
    private string? _binaries;
    private string? _runAs;
    private bool _started;
    private NpgsqlDataSource? _dataSource;

    /// <summary>The server's TCP port on 127.0.0.1.</summary>
    public int Port { get; private set; }

    /// <summary>A connection string for database <c>postgres</c> as <see cref="UserName"/>.</summary>
    public string ConnectionString { get; private set; } = "";

    /// <summary>A data source (connection pool) on <see cref="ConnectionString"/>, shared by the tests.</summary>
    public NpgsqlDataSource DataSource => _dataSource ?? throw new InvalidOperationException("The PostgreSQL server has not started.");

    /// <inheritdoc/>
    public async Task InitializeAsync()
    {
        try
        {
            _binaries = FindBinaries();
            _runAs = Environment.UserName == "root" ? await UnprivilegedUserAsync() : null;
            _directory = Path.Combine(Path.GetTempPath(), "streamforecast-pg-" + Guid.NewGuid().ToString("N"));
            Directory.CreateDirectory(_directory);
            if (_runAs is not null)
            {
                await RunAsync("chown", [_runAs, _directory], asServerUser: false);
            }

            string data = Path.Combine(_directory, "data");
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
                        ["-D", data, "-o", $"-p {Port} -k {_directory} -c listen_addresses=127.0.0.1", "-l", Path.Combine(_directory, "server.log"), "-w", "-t", "60", "start"],
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

            ConnectionString = new NpgsqlConnectionStringBuilder
            {
                Host = "127.0.0.1",
                Port = Port,
                Username = UserName,
                Database = "postgres",
                Timeout = 15,
                MaxPoolSize = 50,
            }.ConnectionString;
            _dataSource = NpgsqlDataSource.Create(ConnectionString);
            await using NpgsqlCommand probe = _dataSource.CreateCommand("SELECT 1");
            await probe.ExecuteScalarAsync();
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            string log = ServerLogTail();
            await DisposeAsync();
            throw new InvalidOperationException(
                "The throwaway PostgreSQL server for these tests could not start, so the tests cannot run (they fail rather than skip). "
                + "It needs the Debian PostgreSQL server package (apt-get install -y postgresql-15), whose initdb and pg_ctl live under /usr/lib/postgresql/<version>/bin. "
                + $"Reason: {ex.Message}{log}",
                ex);
        }
    }

    /// <inheritdoc/>
    public async Task DisposeAsync()
    {
        if (_dataSource is not null)
        {
            await _dataSource.DisposeAsync();
            _dataSource = null;
        }

        try
        {
            if (_started && _binaries is not null && _directory is not null)
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

/// <summary>The tests that share one throwaway server; they run one class at a time.</summary>
[CollectionDefinition(Name)]
public sealed class PostgreSqlCollection : ICollectionFixture<PostgreSqlServer>
{
    /// <summary>The collection's name.</summary>
    public const string Name = "PostgreSQL server";
}
