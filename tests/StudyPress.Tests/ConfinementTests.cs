using System.Net.Sockets;
using System.Runtime.InteropServices;
using System.Security.Cryptography;
using System.Text.Json;
using DuckDB.NET.Data;
using StudyPress.Data.Sources;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Data confinement: the file checked, hashed and read is one real, regular file inside the study's
/// folder tree. Paths are resolved the way the kernel resolves them (each link followed when met,
/// '..' applied to the resolved prefix), database paths never pasted into connection-string text,
/// and pipes, devices and sockets refused before anything is opened.
/// </summary>
[Collection("cli")]
public sealed class ConfinementTests
{
    private const string Csv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,b,3.5\n4,b,4.0\n5,c,5.5\n6,c,6.0\n";

    /// <summary>A run whose data is refused must end within this time (a blocked open would not).</summary>
    private static readonly TimeSpan NoHang = TimeSpan.FromSeconds(60);

    /// <summary>A path is given on line 3 at column 7; a map entry (starting '{') as dataset 'd' on line 4, its path at column 14.</summary>
    private static string Study(string entry) =>
        $"---\ntitle: T\ndata:{(entry.StartsWith('{') ? "\n  d: " : " ")}{entry}\nresponse: y\nfactors:\n  dose:\n---\n\n```anova main\n```\n";

    private static string Errors(StudyRun run, bool allowOutside = false)
    {
        var result = run.Compile(new CompileOptions { AllowOutsidePaths = allowOutside });
        Assert.False(result.Succeeded);
        return string.Join("\n", result.Diagnostics);
    }

    private static string Sha(string path) => Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(path)));

    private static string InputSha(byte[] manifest)
    {
        using var doc = JsonDocument.Parse(manifest);
        return doc.RootElement.GetProperty("inputs")[0].GetProperty("sha256").GetString()!;
    }

    /// <summary>Runs the CLI build; fails (after unblocking <paramref name="fifo"/>, if given) when it does not end in time.</summary>
    private static (int Exit, string Out, string Err) BuildWithin(StudyRun run, string? fifo, params string[] extra) =>
        CliWithin(run, fifo, ["build", "study.md", .. extra]);

    /// <summary>Runs the CLI; fails (after unblocking <paramref name="fifo"/>, if given) when it does not end in time.</summary>
    private static (int Exit, string Out, string Err) CliWithin(StudyRun run, string? fifo, string[] args)
    {
        var task = Task.Run(() => run.Cli(args));
        if (!task.Wait(NoHang))
        {
            // Open the other end (as often as the reader reopens it) so the blocked build sees end of
            // file, ends and restores the working folder before the next test.
            for (var i = 0; fifo is not null && i < 60 && !task.Wait(TimeSpan.FromSeconds(1)); i++)
            {
                // O_WRONLY | O_NONBLOCK: fails at once instead of waiting when no reader is there.
                var fd = open(fifo, 0x1 | 0x800);
                if (fd >= 0)
                {
                    _ = close(fd);
                }
            }

            task.Wait(NoHang);
            Assert.Fail("the command blocked on the data path");
        }

        return task.Result;
    }

    private static void DuckDbPanels(string path, int rowsPerDose)
    {
        var values = string.Join(", ", Enumerable.Range(0, rowsPerDose * 3).Select(i => $"('{"abc"[i % 3]}', {i + 1}.5)"));
        using var c = new DuckDBConnection(new DuckDBConnectionStringBuilder { DataSource = path }.ConnectionString);
        c.Open();
        using var cmd = c.CreateCommand();
        cmd.CommandText = "create table t (dose varchar, y double); insert into t values " + values;
        cmd.ExecuteNonQuery();
    }

    // ---- 1. database paths and connection strings ----

    [Fact]
    public void DuckDb_FolderNamedWithADataSourceClause_ReadsAndHashesTheFileNamed()
    {
        // The folder's name, pasted into a connection string, would add a second "data source"
        // (relative to the working folder) that wins over the first: another database would be read
        // while the named one is hashed.
        const string folder = "x;data source=other.duckdb";
        using var run = new StudyRun().Study(Study($"{{ path: \"{folder}/trial.duckdb\", query: \"select * from t\" }}"));
        Directory.CreateDirectory(Path.Combine(run.Folder, folder));
        Directory.CreateDirectory(Path.Combine(run.Folder, "other.duckdb"));
        DuckDbPanels(Path.Combine(run.Folder, folder, "trial.duckdb"), rowsPerDose: 2);
        DuckDbPanels(Path.Combine(run.Folder, "other.duckdb", "trial.duckdb"), rowsPerDose: 3);

        var previous = Directory.GetCurrentDirectory();
        Directory.SetCurrentDirectory(run.Folder);
        try
        {
            var result = run.Compile();
            Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
            var m = new ManifestView(result.ManifestJson!);

            // Exact hand computation: 6 rows in 3 groups leave 3 residual degrees of freedom (the other database has 9 rows: 6).
            Assert.Equal(3, m.Get("main", "anova", "residual", "df"));
            Assert.Equal(Sha(Path.Combine(run.Folder, folder, "trial.duckdb")), InputSha(result.ManifestJson!));
        }
        finally
        {
            Directory.SetCurrentDirectory(previous);
        }
    }

    [Fact]
    public void Sqlite_FolderNamedWithADataSourceClause_ReadsTheFileNamed()
    {
        const string folder = "x;data source=other.sqlite;mode=rwc";
        using var run = new StudyRun().Study(Study($"{{ path: \"{folder}/trial.sqlite\", query: \"select * from t\" }}"));
        Directory.CreateDirectory(Path.Combine(run.Folder, folder));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, folder, "trial.sqlite"), "create table t (dose text, y real)", "insert into t values ($p0, $p1)", Enumerable.Range(0, 6).Select(i => new object?[] { "abc"[i % 3].ToString(), i + 1.5 }));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Equal(3, new ManifestView(result.ManifestJson!).Get("main", "anova", "residual", "df"));
        Assert.False(File.Exists(Path.Combine(run.Folder, "other.sqlite")));
    }

    [Theory]
    [InlineData("/s/x;data source=/etc/other.duckdb/t.duckdb")]
    [InlineData("/s/a\"b';c=d/t.duckdb")]
    public void DuckDbConnectionString_PathWithConnectionStringSyntax_IsOneValue(string path)
    {
        var cs = DatabaseSource.DuckDbConnectionString(path);
        var parsed = new DuckDBConnectionStringBuilder { ConnectionString = cs };
        Assert.Equal(path, parsed.DataSource);
        Assert.Equal(2, parsed.Count);
        Assert.Equal("READ_ONLY", parsed["ACCESS_MODE"]);
    }

    [Fact]
    public void DuckDb_WriteAheadLogBesideTheDatabase_IsRefused()
    {
        // DuckDB replays a .wal file even when opened read-only, so rows only in the log would be read but not hashed.
        using var run = new StudyRun().Study(Study("{ path: trial.duckdb, query: \"select * from t\" }"));
        var path = Path.Combine(run.Folder, "trial.duckdb");
        SourcesFixtures.DuckDb(path, "PRAGMA disable_checkpoint_on_shutdown", "SET checkpoint_threshold = '10GB'", "create table t (dose varchar, y double)", "insert into t values ('a', 1), ('a', 2), ('b', 3), ('b', 4)");
        Assert.True(new FileInfo(path + ".wal").Length > 0, "the fixture must leave a write-ahead log");
        Assert.Contains("study.md:4:14: error: 'trial.duckdb' has a write-ahead log beside it ('trial.duckdb.wal')", Errors(run), StringComparison.Ordinal);
    }

    [Fact]
    public void Sqlite_WriteAheadLogBesideTheDatabase_IsRefused()
    {
        using var run = new StudyRun().Study(Study("{ path: trial.sqlite, query: \"select * from t\" }"));
        var scratch = Path.Combine(run.Folder, "scratch");
        Directory.CreateDirectory(scratch);
        var source = Path.Combine(scratch, "w.sqlite");

        // Rows committed to the log and not yet checkpointed: copy the database and its log while the writer is open.
        using (var c = new Microsoft.Data.Sqlite.SqliteConnection(new Microsoft.Data.Sqlite.SqliteConnectionStringBuilder { DataSource = source, Pooling = false }.ToString()))
        {
            c.Open();
            using var cmd = c.CreateCommand();
            cmd.CommandText = "pragma journal_mode=wal; pragma wal_autocheckpoint=0; create table t (dose text, y real); insert into t values ('a', 1), ('a', 2), ('b', 3), ('b', 4);";
            cmd.ExecuteNonQuery();
            File.Copy(source, Path.Combine(run.Folder, "trial.sqlite"));
            File.Copy(source + "-wal", Path.Combine(run.Folder, "trial.sqlite-wal"));
        }

        Assert.Contains("study.md:4:14: error: 'trial.sqlite' has a write-ahead log beside it ('trial.sqlite-wal')", Errors(run), StringComparison.Ordinal);
    }

    [Fact]
    public void Parquet_PathWithAPatternCharacter_IsRefused()
    {
        // read_parquet('…/[a]b.parquet') would read 'ab.parquet' (a pattern match) while '[a]b.parquet' is hashed.
        using var run = new StudyRun().Study(Study("\"[a]b.parquet\"")).File("[a]b.parquet", "not read").File("ab.parquet", "not read");
        Assert.Contains("study.md:3:7: error: data path '[a]b.parquet' contains '[', which the Parquet reader takes as a file-name pattern", Errors(run), StringComparison.Ordinal);
    }

    // ---- 2. symbolic links resolved as the kernel resolves them ----

    /// <summary>
    /// data/x links out of the tree; data/evil.X links to "x/../secret.X". Read textually that is
    /// data/secret.X (a harmless decoy inside); the kernel follows x first and opens the outside file.
    /// </summary>
    private static (StudyRun Outside, string Secret) EvilLink(StudyRun run, string extension)
    {
        var outside = new StudyRun().File("sub/keep.txt", "x").File("secret" + extension, Csv);
        run.File("data/secret" + extension, Csv);
        Directory.CreateSymbolicLink(Path.Combine(run.Folder, "data", "x"), Path.Combine(outside.Folder, "sub"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "data", "evil" + extension), "x/../secret" + extension);
        return (outside, Path.Combine(outside.Folder, "secret" + extension));
    }

    [Fact]
    public void Build_LinkWhoseTargetClimbsOutThroughAnotherLink_IsRefused()
    {
        using var run = new StudyRun().Study(Study("data/evil.csv"));
        var (outside, _) = EvilLink(run, ".csv");
        using (outside)
        {
            DiagnosticsTests.AssertRejected(run, "link then ..", "study.md:3:7: error: data path 'data/evil.csv' leads outside the study's folder");
        }
    }

    [Theory]
    [InlineData(".xlsx", "data/evil.xlsx")]
    [InlineData(".sqlite", "{ path: data/evil.sqlite, query: \"select * from t\" }")]
    [InlineData(".duckdb", "{ path: data/evil.duckdb, query: \"select * from t\" }")]
    [InlineData(".parquet", "data/evil.parquet")]
    [InlineData(".parquet", "{ path: data/evil.parquet, query: \"select * from source\" }")]
    public void Build_LinkWhoseTargetClimbsOutThroughAnotherLink_IsRefusedForEveryFormat(string extension, string entry)
    {
        using var run = new StudyRun().Study(Study(entry));
        var (outside, _) = EvilLink(run, extension);
        using (outside)
        {
            Assert.Contains($"error: data path 'data/evil{extension}' leads outside the study's folder", Errors(run), StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Build_LinkClimbingOutWithAllowOutsideData_ReadsAndHashesTheRealTarget()
    {
        using var run = new StudyRun().Study(Study("data/evil.csv"));
        var (outside, secret) = EvilLink(run, ".csv");
        using (outside)
        {
            // The decoy inside differs from the outside file: the hash must be the file actually read.
            File.WriteAllText(secret, Csv + "7,c,6.5\n");
            var result = run.Compile(new CompileOptions { AllowOutsidePaths = true });
            Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
            Assert.Equal(Sha(secret), InputSha(result.ManifestJson!));

            // Exact hand computation: 7 rows in 3 groups leave 4 residual degrees of freedom.
            Assert.Equal(4, new ManifestView(result.ManifestJson!).Get("main", "anova", "residual", "df"));
        }
    }

    [Fact]
    public void Build_ChainOfLinksInsideTheTree_IsAllowed()
    {
        using var run = new StudyRun().Study(Study("a.csv")).File("real/data.csv", Csv);
        File.CreateSymbolicLink(Path.Combine(run.Folder, "c.csv"), "real/../real/data.csv");
        File.CreateSymbolicLink(Path.Combine(run.Folder, "b.csv"), "c.csv");
        Directory.CreateSymbolicLink(Path.Combine(run.Folder, "d"), "real");
        File.CreateSymbolicLink(Path.Combine(run.Folder, "a.csv"), "d/../b.csv");
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
    }

    [Fact]
    public void Build_ChainOfLinksEndingOutside_IsRefused()
    {
        using var outside = new StudyRun().File("data.csv", Csv);
        using var run = new StudyRun().Study(Study("a.csv"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "c.csv"), Path.Combine(outside.Folder, "data.csv"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "b.csv"), "c.csv");
        File.CreateSymbolicLink(Path.Combine(run.Folder, "a.csv"), "b.csv");
        DiagnosticsTests.AssertRejected(run, "chain out", "study.md:3:7: error: data path 'a.csv' leads outside the study's folder");
    }

    [Fact]
    public void Build_LoopOfLinks_GivesOneClearErrorWithoutHanging()
    {
        using var run = new StudyRun().Study(Study("data/a.csv"));
        Directory.CreateDirectory(Path.Combine(run.Folder, "data"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "data", "a.csv"), "b.csv");
        File.CreateSymbolicLink(Path.Combine(run.Folder, "data", "b.csv"), "../data/a.csv");
        var (exit, _, err) = BuildWithin(run, fifo: null);
        Assert.Equal(2, exit);
        Assert.Equal("study.md:3:7: error: data path 'data/a.csv' goes through more than 40 symbolic links; is there a loop of links?\n", err);
        (exit, _, err) = BuildWithin(run, fifo: null, "--allow-outside-data");
        Assert.Equal(2, exit);
        Assert.Contains("goes through more than 40 symbolic links", err, StringComparison.Ordinal);
    }

    [Fact]
    public void Build_LinkInsideTheTreeWhoseTargetUsesDotDot_IsAllowed()
    {
        using var run = new StudyRun().Study(Study("data/alias.csv")).File("real/data.csv", Csv);
        Directory.CreateDirectory(Path.Combine(run.Folder, "data"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "data", "alias.csv"), "../real/data.csv");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Equal(Sha(Path.Combine(run.Folder, "real", "data.csv")), InputSha(result.ManifestJson!));
    }

    [Fact]
    public void Build_DotDotAfterAMissingFolder_IsNotFoundAsForTheKernel()
    {
        // The kernel cannot go through 'nope'; reading 'nope/../data.csv' textually would find data.csv.
        using var run = new StudyRun().Study(Study("nope/../data.csv")).File("data.csv", Csv);
        Assert.Contains("study.md:3:7: error: data file 'nope/../data.csv' not found", Errors(run), StringComparison.Ordinal);
    }

    // ---- 3. regular files only ----

    [DllImport("libc", SetLastError = true)]
    [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
    private static extern int mkfifo([MarshalAs(UnmanagedType.LPUTF8Str)] string path, uint mode);

    [DllImport("libc", SetLastError = true)]
    [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
    private static extern int open([MarshalAs(UnmanagedType.LPUTF8Str)] string path, int flags);

    [DllImport("libc", SetLastError = true)]
    [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
    private static extern int close(int fd);

    [Theory]
    [InlineData("data.csv", "data.csv")]
    [InlineData("data.xlsx", "data.xlsx")]
    [InlineData("data.sqlite", "{ path: data.sqlite, query: \"select * from t\" }")]
    [InlineData("data.duckdb", "{ path: data.duckdb, query: \"select * from t\" }")]
    [InlineData("data.parquet", "data.parquet")]
    public void Build_DataPathIsANamedPipe_IsRefusedWithoutBlocking(string file, string entry)
    {
        using var run = new StudyRun().Study(Study(entry));
        var fifo = Path.Combine(run.Folder, file);
        Assert.Equal(0, mkfifo(fifo, Convert.ToUInt32("600", 8)));
        var (exit, _, err) = BuildWithin(run, fifo);
        Assert.Equal(2, exit);
        Assert.EndsWith($"error: data path '{file}' is a named pipe (FIFO), not a regular file; only regular files are read as data\n", err, StringComparison.Ordinal);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
    }

    [Fact]
    public void Build_DataReplacedByANamedPipeAfterABuild_TheUpToDateCheckDoesNotBlock()
    {
        // The second build first asks the build cache whether the inputs changed, which hashes them.
        using var run = new StudyRun().Study(Study("data.csv")).File("data.csv", Csv);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
        var fifo = Path.Combine(run.Folder, "data.csv");
        File.Delete(fifo);
        Assert.Equal(0, mkfifo(fifo, Convert.ToUInt32("600", 8)));
        (exit, _, err) = BuildWithin(run, fifo);
        Assert.Equal((2, "study.md:3:7: error: data path 'data.csv' is a named pipe (FIFO), not a regular file; only regular files are read as data\n"), (exit, err));
    }

    [Fact]
    public void Verify_DataReplacedByANamedPipe_SaysSoWithoutBlocking()
    {
        using var run = new StudyRun().Study(Study("data.csv")).File("data.csv", Csv);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
        var fifo = Path.Combine(run.Folder, "data.csv");
        File.Delete(fifo);
        Assert.Equal(0, mkfifo(fifo, Convert.ToUInt32("600", 8)));
        var (_, output, verifyErr) = CliWithin(run, fifo, ["verify", "study.html"]);
        Assert.Contains("the recorded file 'data.csv' is a named pipe (FIFO), not a regular file", output + verifyErr, StringComparison.Ordinal);
    }

    [Fact]
    public void Diff_ReportWhoseDataIsNowANamedPipe_DoesNotBlock()
    {
        using var run = new StudyRun().File("old/study.md", Study("data.csv")).File("old/data.csv", Csv).File("new/study.md", Study("data.csv")).File("new/data.csv", Csv + "7,c,6.5\n");
        Assert.Equal(0, run.Cli("build", "old/study.md", "new/study.md").Exit);
        var fifo = Path.Combine(run.Folder, "new", "data.csv");
        File.Delete(fifo);
        Assert.Equal(0, mkfifo(fifo, Convert.ToUInt32("600", 8)));
        var (exit, output, err) = CliWithin(run, fifo, ["diff", "old/study.html", "new/study.html"]);
        Assert.True(exit is 0 or 1 or 3, $"exit {exit}: {err}");
        Assert.Contains("Inputs changed: 1", output, StringComparison.Ordinal);
    }

    [Fact]
    public void Build_PathThroughALinkThenDotDotUnderAllowOutsideData_TheUpToDateCheckHashesTheFileRead()
    {
        // 'data/x/../secret.csv' with data/x linking out: the build reads the outside file, so the
        // cache must watch that file, not the decoy data/secret.csv that the text names.
        using var run = new StudyRun().Study(Study("data/x/../secret.csv"));
        var (outside, secret) = EvilLink(run, ".csv");
        using (outside)
        {
            var (exit, _, err) = run.Cli("build", "study.md", "--allow-outside-data");
            Assert.True(exit == 0, err);
            Assert.Contains(Sha(secret), File.ReadAllText(run.ReportPath), StringComparison.Ordinal);
            File.WriteAllText(secret, Csv + "7,c,6.5\n");
            (exit, var output, err) = run.Cli("build", "study.md", "--allow-outside-data");
            Assert.True(exit == 0, err);
            Assert.StartsWith("wrote ", output, StringComparison.Ordinal);
            Assert.Contains(Sha(secret), File.ReadAllText(run.ReportPath), StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Build_DataPathIsASocket_IsRefused()
    {
        using var run = new StudyRun().Study(Study("data.csv"));
        using var socket = new Socket(AddressFamily.Unix, SocketType.Stream, ProtocolType.Unspecified);
        socket.Bind(new UnixDomainSocketEndPoint(Path.Combine(run.Folder, "data.csv")));
        DiagnosticsTests.AssertRejected(run, "socket", "study.md:3:7: error: data path 'data.csv' is a socket, not a regular file; only regular files are read as data");
    }

    [Fact]
    public void Build_DeviceThroughALinkWithAllowOutsideData_IsRefusedWithoutReading()
    {
        using var run = new StudyRun().Study(Study("data.csv"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "data.csv"), "/dev/zero");
        var (exit, _, err) = BuildWithin(run, fifo: null);
        Assert.Equal((2, "study.md:3:7: error: data path 'data.csv' leads outside the study's folder\n"), (exit, err));
        (exit, _, err) = BuildWithin(run, fifo: null, "--allow-outside-data");
        Assert.Equal((2, "study.md:3:7: error: data path 'data.csv' is a character device, not a regular file; only regular files are read as data\n"), (exit, err));
    }
}
