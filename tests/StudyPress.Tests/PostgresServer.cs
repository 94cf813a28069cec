using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using Npgsql;

namespace StudyPress.Tests;

/// <summary>
/// A throwaway PostgreSQL server for the PostgreSQL source tests: initdb on a temporary data
/// directory with password (SCRAM) authentication, listening on a free port of 127.0.0.1 only,
/// started with pg_ctl and stopped (and its directory deleted) at the end. As root the server runs
/// as the 'postgres' user (runuser), since PostgreSQL refuses to run as root.
/// </summary>
public sealed class PostgresServer : IDisposable
{
    public const string Database = "studies";

    /// <summary>The reading role the studies use; distinctive so a test can assert it never appears.</summary>
    public const string User = "sp_reader_q7";

    public const string Password = "Pw-never-in-a-report-4bd1e";

    private const string AdminUser = "sp_admin";
    private const string AdminPassword = "admin-pw-93c7";

    private readonly string? bin;
    private readonly string dir = string.Empty;

    public PostgresServer()
    {
        bin = PostgresAvailability.BinDirectory;
        if (bin is null)
        {
            return;
        }

        dir = Path.Combine(Path.GetTempPath(), "studypress-pg-" + Guid.NewGuid().ToString("N")[..12]);
        Directory.CreateDirectory(dir);
        var data = Path.Combine(dir, "data");
        var pwfile = Path.Combine(dir, "pw");
        File.WriteAllText(pwfile, AdminPassword + "\n");
        if (IsRoot)
        {
            Run("chown", "-R", "postgres:postgres", dir);
        }

        Port = FreePort();
        try
        {
            Start(data, pwfile);
        }
        catch
        {
            Dispose();
            throw;
        }
    }

    private void Start(string data, string pwfile)
    {
        var bin = this.bin!;
        RunAsServerUser(Path.Combine(bin, "initdb"), "-D", data, "-U", AdminUser, "--pwfile=" + pwfile, "--auth=scram-sha-256", "-E", "UTF8", "--locale=C", "--no-sync");
        RunAsServerUser(
            Path.Combine(bin, "pg_ctl"),
            "-D",
            data,
            "-l",
            Path.Combine(dir, "log"),
            "-w",
            "-t",
            "60",
            "-o",
            string.Create(CultureInfo.InvariantCulture, $"-p {Port} -k {dir} -c listen_addresses=127.0.0.1 -c fsync=off"),
            "start");
        Started = true;
        Admin("CREATE DATABASE " + Database);
        Admin($"CREATE ROLE {User} LOGIN PASSWORD '{Password}'");
    }

    public int Port { get; }

    public bool Started { get; private set; }

    private static bool IsRoot => Environment.UserName == "root";

    /// <summary>Runs SQL as the administrator on the study database (or on 'postgres' before it exists).</summary>
    public void Admin(string sql, string? database = null)
    {
        var b = new NpgsqlConnectionStringBuilder
        {
            Host = "127.0.0.1",
            Port = Port,
            Database = database ?? (sql.StartsWith("CREATE DATABASE", StringComparison.Ordinal) ? "postgres" : Database),
            Username = AdminUser,
            Password = AdminPassword,
            Pooling = false,
            SslMode = SslMode.Disable,
        };
        using var c = new NpgsqlConnection(b.ConnectionString);
        c.Open();
        using var cmd = new NpgsqlCommand(sql, c);
        cmd.ExecuteNonQuery();
    }

    public object? Scalar(string sql)
    {
        var b = new NpgsqlConnectionStringBuilder { Host = "127.0.0.1", Port = Port, Database = Database, Username = AdminUser, Password = AdminPassword, Pooling = false, SslMode = SslMode.Disable };
        using var c = new NpgsqlConnection(b.ConnectionString);
        c.Open();
        using var cmd = new NpgsqlCommand(sql, c);
        return cmd.ExecuteScalar();
    }

    /// <summary>Creates a table readable by the study user.</summary>
    public void Table(string name, string columns, string insert)
    {
        Admin($"DROP TABLE IF EXISTS {name}; CREATE TABLE {name} ({columns}); {insert}; GRANT SELECT ON {name} TO {User}");
    }

    public void Dispose()
    {
        // Stop whatever was started, even when starting failed half-way.
        if (bin is not null && File.Exists(Path.Combine(dir, "data", "postmaster.pid")))
        {
            try
            {
                RunAsServerUser(Path.Combine(bin, "pg_ctl"), "-D", Path.Combine(dir, "data"), "-m", "immediate", "-w", "stop");
            }
            catch (InvalidOperationException)
            {
                // Already gone; the directory is removed below either way.
            }
        }

        if (dir.Length > 0 && Directory.Exists(dir))
        {
            Directory.Delete(dir, recursive: true);
        }
    }

    private void RunAsServerUser(string file, params string[] args)
    {
        if (IsRoot)
        {
            Run("runuser", ["-u", "postgres", "--", file, .. args]);
        }
        else
        {
            Run(file, args);
        }
    }

    private static void Run(string file, params string[] args)
    {
        // A fixed working directory: the test process's own may be a deleted temporary folder, which initdb and pg_ctl refuse.
        var psi = new ProcessStartInfo(file) { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false, WorkingDirectory = "/" };
        foreach (var a in args)
        {
            psi.ArgumentList.Add(a);
        }

        using var p = Process.Start(psi)!;
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEnd();
        p.WaitForExit();
        if (p.ExitCode != 0)
        {
            throw new InvalidOperationException($"{file} {string.Join(' ', args)} exited {p.ExitCode}: {stderr} {stdout.Result}");
        }
    }

    private static int FreePort()
    {
        using var l = new TcpListener(IPAddress.Loopback, 0);
        l.Start();
        return ((IPEndPoint)l.LocalEndpoint).Port;
    }
}

[CollectionDefinition("postgres")]
public sealed class PostgresGroup : ICollectionFixture<PostgresServer>
{
}

/// <summary>A test that needs the PostgreSQL server binaries: skipped with the reason where they are missing, unless CI=true (then it runs, and fails).</summary>
public sealed class PostgresFactAttribute : FactAttribute
{
    public PostgresFactAttribute()
    {
        if (PostgresAvailability.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}

internal static class PostgresAvailability
{
    /// <summary>The newest /usr/lib/postgresql/N/bin holding initdb and pg_ctl; null where none.</summary>
    public static string? BinDirectory
    {
        get
        {
            const string root = "/usr/lib/postgresql";
            if (!Directory.Exists(root))
            {
                return null;
            }

            return Directory.GetDirectories(root)
                .Select(d => (Dir: Path.Combine(d, "bin"), Version: int.TryParse(Path.GetFileName(d), NumberStyles.Integer, CultureInfo.InvariantCulture, out var v) ? v : -1))
                .Where(x => File.Exists(Path.Combine(x.Dir, "initdb")) && File.Exists(Path.Combine(x.Dir, "pg_ctl")))
                .OrderByDescending(x => x.Version)
                .Select(x => x.Dir)
                .FirstOrDefault();
        }
    }

    public static string? SkipReason =>
        BinDirectory is not null || string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase)
            ? null
            : "no PostgreSQL server binaries under /usr/lib/postgresql/N/bin: install Debian's postgresql package to run the PostgreSQL source tests (CI always runs them)";
}
