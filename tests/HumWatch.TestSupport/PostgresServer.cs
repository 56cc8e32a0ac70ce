using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using Npgsql;

namespace HumWatch.TestSupport;

/// <summary>
/// A PostgreSQL server for the store's contract tests: the one named by <see cref="ServerVariable"/> (a connection
/// string whose user may create databases), or a private cluster this fixture makes itself — initdb into a temp
/// folder and pg_ctl start on 127.0.0.1 on a free ephemeral port, its socket in that folder — run as an unprivileged
/// user when the tests run as root (initdb refuses root). Started on first use; each test gets its own database.
/// Disposing stops the private cluster (pg_ctl stop -m fast) and removes its folder.
/// </summary>
public sealed class PostgresServer : IDisposable
{
    /// <summary>A connection string of an existing server to use instead of a private cluster.</summary>
    public const string ServerVariable = "HUMWATCH_TEST_POSTGRES";

    /// <summary>When "1", a missing PostgreSQL fails the tests instead of skipping them (CI sets it).</summary>
    public const string RequireVariable = "HUMWATCH_REQUIRE_POSTGRES";

    /// <summary>The user a private cluster runs as when the tests run as root (Debian's postgresql package makes it).</summary>
    private const string ClusterUser = "postgres";

    private readonly Lock _gate = new();
    private string? _adminConnectionString;
    private string? _folder;
    private string? _binaries;
    private bool _asClusterUser;
    private Exception? _startFailure;

    /// <summary>
    /// Why no PostgreSQL can be had here, decided without starting one (discovery runs this): null when a server is
    /// named or the cluster's ingredients are present, or when <see cref="RequireVariable"/> asks for a failure instead.
    /// Short, as it goes into the skipped row's name, where xunit cuts a text argument at 50 characters.
    /// </summary>
    public static string? SkipReason { get; } = FindSkipReason();

    /// <summary>
    /// Whether a private cluster keeps PostgreSQL's durable defaults (fsync, synchronous commit, full page writes). Off
    /// for tests, where durability is not under test; on for the bench, whose write rates must be the real ones.
    /// </summary>
    public bool Durable { get; init; }

    /// <summary>A fresh, empty database on the server; returns its connection string.</summary>
    public string CreateDatabase()
    {
        var admin = Admin();
        var name = "hw_" + Guid.NewGuid().ToString("N")[..16];
        using (var connection = new NpgsqlConnection(admin))
        {
            connection.Open();
            using var command = connection.CreateCommand();
            command.CommandText = $"CREATE DATABASE {name}";
            command.ExecuteNonQuery();
        }

        return new NpgsqlConnectionStringBuilder(admin) { Database = name, Pooling = true }.ConnectionString;
    }

    public void Dispose()
    {
        lock (_gate)
        {
            if (_folder is null)
            {
                return;
            }

            NpgsqlConnection.ClearAllPools();
            try
            {
                Run(Path.Combine(_binaries!, "pg_ctl"), ["-D", Path.Combine(_folder, "data"), "-m", "fast", "-w", "stop"], TimeSpan.FromSeconds(60));
            }
            finally
            {
                Directory.Delete(_folder, recursive: true);
                _folder = null;
            }
        }
    }

    private string Admin()
    {
        lock (_gate)
        {
            if (_adminConnectionString is not null)
            {
                return _adminConnectionString;
            }

            if (Environment.GetEnvironmentVariable(ServerVariable) is { Length: > 0 } named)
            {
                return _adminConnectionString = named;
            }

            if (_startFailure is not null)
            {
                throw new InvalidOperationException("the private PostgreSQL cluster did not start", _startFailure);
            }

            try
            {
                _binaries = FindBinaries() ?? throw new InvalidOperationException("PostgreSQL's initdb and pg_ctl are on neither PATH nor /usr/lib/postgresql/*/bin (Debian package postgresql).");
                _asClusterUser = Environment.IsPrivilegedProcess;
                _adminConnectionString = StartCluster();
                return _adminConnectionString;
            }
            catch (Exception ex) when (ex is InvalidOperationException or IOException or System.ComponentModel.Win32Exception)
            {
                // Tried once: every later test fails with the same cause instead of making another cluster.
                _startFailure = ex;
                if (_folder is not null && Directory.Exists(_folder))
                {
                    Directory.Delete(_folder, recursive: true);
                }

                _folder = null;
                throw;
            }
        }
    }

    private string StartCluster()
    {
        _folder = Directory.CreateTempSubdirectory("humwatch-pg-").FullName;

        // Stopped by the collection's end; should the test host end without it, by the process exit.
        AppDomain.CurrentDomain.ProcessExit += (_, _) => Dispose();
        if (_asClusterUser)
        {
            // initdb and the server run as the cluster user, who must own the folder.
            Run("chown", [ClusterUser + ":", _folder], TimeSpan.FromSeconds(30), asClusterUser: false);
        }

        var data = Path.Combine(_folder, "data");
        Run(Path.Combine(_binaries!, "initdb"), ["-D", data, "-U", "postgres", "-A", "trust", "-E", "UTF8", "--no-locale", "--no-sync"], TimeSpan.FromMinutes(2));
        var port = FreePort();
        // Loopback only, the socket in the temp folder; unless Durable, no fsync (durability is not under test).
        var durability = Durable ? "" : " -c fsync=off -c synchronous_commit=off -c full_page_writes=off";
        var serverOptions = string.Create(CultureInfo.InvariantCulture,
            $"-c listen_addresses=127.0.0.1 -p {port} -k {_folder} -c max_connections=200{durability}");
        Run(Path.Combine(_binaries!, "pg_ctl"), ["-D", data, "-o", serverOptions, "-l", Path.Combine(_folder, "server.log"), "-w", "-t", "60", "start"], TimeSpan.FromMinutes(2));
        return new NpgsqlConnectionStringBuilder { Host = "127.0.0.1", Port = port, Username = "postgres", Database = "postgres", Pooling = false }.ConnectionString;
    }

    private void Run(string program, IReadOnlyList<string> arguments, TimeSpan timeout, bool? asClusterUser = null)
    {
        var start = new ProcessStartInfo { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        if (asClusterUser ?? _asClusterUser)
        {
            start.FileName = "runuser";
            foreach (var a in (string[])["-u", ClusterUser, "--", program])
            {
                start.ArgumentList.Add(a);
            }
        }
        else
        {
            start.FileName = program;
        }

        foreach (var a in arguments)
        {
            start.ArgumentList.Add(a);
        }

        using var process = Process.Start(start) ?? throw new InvalidOperationException($"{program} did not start");
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(timeout))
        {
            process.Kill(entireProcessTree: true);
            throw new InvalidOperationException($"{program} did not finish within {timeout.TotalSeconds} s");
        }

        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"{Path.GetFileName(program)} {string.Join(' ', arguments)} failed ({process.ExitCode}): {error.Result}{output.Result}");
        }
    }

    private static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    private static string? FindBinaries()
    {
        foreach (var folder in (Environment.GetEnvironmentVariable("PATH") ?? "").Split(Path.PathSeparator, StringSplitOptions.RemoveEmptyEntries))
        {
            if (File.Exists(Path.Combine(folder, "initdb")) && File.Exists(Path.Combine(folder, "pg_ctl")))
            {
                return folder;
            }
        }

        const string debian = "/usr/lib/postgresql";
        return Directory.Exists(debian)
            ? Directory.GetDirectories(debian).Select(v => Path.Combine(v, "bin")).Where(b => File.Exists(Path.Combine(b, "initdb"))).Order(StringComparer.Ordinal).LastOrDefault()
            : null;
    }

    private static string? FindSkipReason()
    {
        if (Environment.GetEnvironmentVariable(RequireVariable) == "1" || Environment.GetEnvironmentVariable(ServerVariable) is { Length: > 0 })
        {
            return null;
        }

        if (!OperatingSystem.IsLinux())
        {
            return "not Linux"; // the private cluster is made on Linux only; HUMWATCH_TEST_POSTGRES names a server elsewhere
        }

        if (FindBinaries() is null)
        {
            return "no initdb/pg_ctl found"; // on PATH or in /usr/lib/postgresql/*/bin
        }

        if (Environment.IsPrivilegedProcess && !File.ReadLines("/etc/passwd").Any(l => l.StartsWith(ClusterUser + ":", StringComparison.Ordinal)))
        {
            return "root and no postgres user"; // initdb refuses root
        }

        return null;
    }
}
