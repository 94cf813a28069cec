using System.Diagnostics;
using System.Text;

namespace StudyPress.Tests;

/// <summary>
/// The native (ahead-of-time compiled) command line writes the same bytes as the JIT build: for
/// every example, every kind's golden case and DuckDB and Parquet sources (loaded and aggregated;
/// one query also returns list, struct and map columns, which DuckDB.NET reads through reflection),
/// the report, the manifest, the figures, the Word document and the LaTeX fragment of the native
/// binary named by <c>STUDYPRESS_NATIVE_CLI</c> are compared byte for byte with those of the
/// in-process build (this test process runs the JIT build). <c>tests/bench/native-identical.sh</c>
/// publishes the native binary and runs this test; without the variable the test is skipped
/// (publishing takes minutes, so the solution's test run does not do it).
/// </summary>
[Collection("cli")]
public sealed class NativeBuildTests
{
    public static TheoryData<string> Studies()
    {
        var data = new TheoryData<string>();
        foreach (var dir in Directory.GetDirectories(Path.Combine(Repository.Root, "examples")).Order(StringComparer.Ordinal))
        {
            data.Add(Path.Combine("examples", Path.GetFileName(dir)));
        }

        foreach (var dir in Directory.GetDirectories(Path.Combine(Repository.Root, "tests", "StudyPress.Tests", "Cases", "kinds")).Order(StringComparer.Ordinal))
        {
            data.Add(Path.Combine("tests", "StudyPress.Tests", "Cases", "kinds", Path.GetFileName(dir)));
        }

        data.Add("fixture:duckdb");
        data.Add("fixture:parquet");
        data.Add("fixture:duckdb-nested");
        return data;
    }

    [NativeTheory]
    [MemberData(nameof(Studies))]
    public void NativeBuild_WritesTheSameBytesAsTheJitBuild(string study)
    {
        var work = Path.Combine(Path.GetTempPath(), "studypress-tests", "native-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(work);
        try
        {
            var folder = study.StartsWith("fixture:", StringComparison.Ordinal) ? Fixture(study["fixture:".Length..], Path.Combine(work, "study")) : Path.Combine(Repository.Root, study);
            var jit = Path.Combine(work, "jit");
            var native = Path.Combine(work, "native");
            foreach (var d in new[] { jit, native })
            {
                Directory.CreateDirectory(Path.Combine(d, "figures"));
                Directory.CreateDirectory(Path.Combine(d, "tex"));
            }

            var previous = Directory.GetCurrentDirectory();
            var (jitOut, jitErr) = (new StringWriter(), new StringWriter());
            int jitExit;
            try
            {
                Directory.SetCurrentDirectory(folder);
                jitExit = StudyPress.Cli.StudyPressCommand.Run(Arguments(jit), jitOut, jitErr);
            }
            finally
            {
                Directory.SetCurrentDirectory(previous);
            }

            var (nativeExit, nativeOut, nativeErr) = RunNative(folder, Arguments(native));
            Assert.True(jitExit == 0, jitErr.ToString());
            Assert.Equal(jitExit, nativeExit);
            Assert.Equal(jitOut.ToString().Replace(jit, "OUT", StringComparison.Ordinal), nativeOut.Replace(native, "OUT", StringComparison.Ordinal));
            Assert.Equal(jitErr.ToString().Replace(jit, "OUT", StringComparison.Ordinal), nativeErr.Replace(native, "OUT", StringComparison.Ordinal));

            var jitFiles = Files(jit);
            Assert.Contains("study.html", jitFiles);
            Assert.Contains("manifest.json", jitFiles);
            if (!study.StartsWith("tests/", StringComparison.Ordinal))
            {
                // Every example and fixture draws figures (some kinds' golden cases draw none).
                Assert.Contains(jitFiles, f => f.StartsWith("figures/", StringComparison.Ordinal) && f.EndsWith(".png", StringComparison.Ordinal));
            }

            Assert.Equal(jitFiles, Files(native));
            foreach (var f in jitFiles)
            {
                Assert.True(File.ReadAllBytes(Path.Combine(jit, f)).AsSpan().SequenceEqual(File.ReadAllBytes(Path.Combine(native, f))), f + " differs between the JIT and the native build");
            }
        }
        finally
        {
            Directory.Delete(work, recursive: true);
        }
    }

    [NativeTheory]
    [InlineData("examples/spray-nozzles")]
    public void NativeBuild_StageTimes_GoToStandardErrorOnly(string study)
    {
        // STUDYPRESS_TIMINGS=1 (StageTimes) adds one standard-error line per stage and changes no output.
        var work = Path.Combine(Path.GetTempPath(), "studypress-tests", "native-times-" + Guid.NewGuid().ToString("N"));
        try
        {
            var folder = Path.Combine(Repository.Root, study);
            var plain = Path.Combine(work, "plain");
            var timed = Path.Combine(work, "timed");
            var (plainExit, plainOut, plainErr) = RunNative(folder, ["build", "study.md", "--force", "--out", plain]);
            var (timedExit, timedOut, timedErr) = RunNative(folder, ["build", "study.md", "--force", "--out", timed], (StageTimes.Variable, "1"));
            Assert.Equal(0, plainExit);
            Assert.Equal(0, timedExit);
            Assert.Equal(string.Empty, plainErr);
            Assert.Equal(plainOut.Replace(plain, "OUT", StringComparison.Ordinal), timedOut.Replace(timed, "OUT", StringComparison.Ordinal));
            var lines = timedErr.Split('\n', StringSplitOptions.RemoveEmptyEntries);
            Assert.All(lines, l => Assert.StartsWith("studypress: time: ", l, StringComparison.Ordinal));
            foreach (var stage in new[] { "main", "parse", "load data", "evaluate posthoc", "render", "wrote the outputs", "done" })
            {
                Assert.Contains(lines, l => l.StartsWith("studypress: time: " + stage, StringComparison.Ordinal));
            }

            Assert.True(File.ReadAllBytes(Path.Combine(plain, "study.html")).AsSpan().SequenceEqual(File.ReadAllBytes(Path.Combine(timed, "study.html"))));
        }
        finally
        {
            if (Directory.Exists(work))
            {
                Directory.Delete(work, recursive: true);
            }
        }
    }

    [NativeFact]
    public void NativeBuild_RuntimeTypeData_OnHugePages()
    {
        // The C start-up hook (src/StudyPress.Cli/Native/huge-pages.c) advises the executable's
        // zero-initialised data, which the runtime fills with its type data before Main, to use
        // transparent huge pages. The "main" stage line reports the process's huge pages at Main:
        // with the hook at least one 2 MB page where the kernel offers them on advice, none with
        // STUDYPRESS_HUGE_PAGES=0 where it offers them only on advice.
        var mode = File.Exists(ThpSetting) ? File.ReadAllText(ThpSetting) : "[never]";
        var folder = Path.Combine(Repository.Root, "examples", "spray-nozzles");
        var on = HugePagesAtMain(RunNative(folder, ["--version"], (StageTimes.Variable, "1")));
        var off = HugePagesAtMain(RunNative(folder, ["--version"], (StageTimes.Variable, "1"), ("STUDYPRESS_HUGE_PAGES", "0")));
        if (mode.Contains("[madvise]", StringComparison.Ordinal))
        {
            Assert.True(on >= 2.0, "huge pages at Main with the hook: " + on + " MB");
            Assert.Equal(0.0, off);
        }
        else if (mode.Contains("[never]", StringComparison.Ordinal))
        {
            Assert.Equal(0.0, on);
            Assert.Equal(0.0, off);
        }
    }

    private const string ThpSetting = "/sys/kernel/mm/transparent_hugepage/enabled";

    private static double HugePagesAtMain((int Exit, string Out, string Err) run)
    {
        Assert.Equal(0, run.Exit);
        var main = run.Err.Split('\n').Single(l => l.StartsWith("studypress: time: main ", StringComparison.Ordinal));
        var match = System.Text.RegularExpressions.Regex.Match(main, @"huge pages ([0-9.]+) MB\)$");
        Assert.True(match.Success, main);
        return double.Parse(match.Groups[1].Value, System.Globalization.CultureInfo.InvariantCulture);
    }

    private static string[] Arguments(string outDir) =>
        ["build", "study.md", "--force", "--out", outDir, "--json", Path.Combine(outDir, "manifest.json"), "--figures", Path.Combine(outDir, "figures"),
         "--docx", Path.Combine(outDir, "report.docx"), "--latex", Path.Combine(outDir, "tex")];

    /// <summary>Every file under <paramref name="dir"/> but the build cache, as sorted relative paths with '/'.</summary>
    private static List<string> Files(string dir) =>
        [.. Directory.GetFiles(dir, "*", SearchOption.AllDirectories)
            .Select(f => Path.GetRelativePath(dir, f).Replace('\\', '/'))
            .Where(f => !f.StartsWith(BuildCache.FolderName + "/", StringComparison.Ordinal))
            .Order(StringComparer.Ordinal)];

    private static (int Exit, string Out, string Err) RunNative(string folder, string[] args, params (string Name, string Value)[] environment)
    {
        var start = new ProcessStartInfo(NativeCli.Path!)
        {
            WorkingDirectory = folder,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            StandardOutputEncoding = Encoding.UTF8,
            StandardErrorEncoding = Encoding.UTF8,
        };
        foreach (var (name, value) in environment)
        {
            start.Environment[name] = value;
        }

        foreach (var a in args)
        {
            start.ArgumentList.Add(a);
        }

        using var p = Process.Start(start)!;
        var err = p.StandardError.ReadToEndAsync();
        var out_ = p.StandardOutput.ReadToEnd();
        p.WaitForExit();
        return (p.ExitCode, out_.Replace("\r\n", "\n", StringComparison.Ordinal), err.Result.Replace("\r\n", "\n", StringComparison.Ordinal));
    }

    /// <summary>A study over a DuckDB database or a Parquet file (written here by DuckDB), loaded and aggregated.</summary>
    private static string Fixture(string kind, string folder)
    {
        Directory.CreateDirectory(folder);
        var db = Path.Combine(folder, "t.duckdb");
        SourcesAggregateTests.DuckDb(db, "decimal(10,2)");
        var columns = kind == "duckdb-nested" ? "plot, fert, soil, y, [plot, plot * 2] AS pair, {'f': fert, 'p': plot} AS rec, MAP {fert: plot} AS m" : "plot, fert, soil, y";
        string file;
        if (kind == "parquet")
        {
            file = "t.parquet";
            SourcesFixtures.DuckDb(db, "COPY t TO " + SourcesFixtures.Literal(Path.Combine(folder, file)) + " (FORMAT parquet)");
            File.Delete(db);
        }
        else
        {
            file = "t.duckdb";
        }

        var table = kind == "parquet" ? "source" : "t";
        File.WriteAllText(Path.Combine(folder, "study.md"), $$"""
            ---
            title: Native and JIT builds over {{kind}}
            data:
              raw: { path: {{file}}, query: "select {{columns}} from {{table}} order by plot" }
              agg: { path: {{file}}, query: "select plot, fert, soil, y from {{table}} order by plot", aggregate: true }
            response: y
            factors:
              fert:
              soil:
            ---

            ```summary cells
            data: raw
            ```

            ```anova r2
            data: raw
            factors: [fert, soil]
            ```

            ```assumptions checks
            ```

            ```anova a2
            data: agg
            factors: [fert, soil]
            ```
            """, new UTF8Encoding(false));
        return folder;
    }
}

/// <summary>The native command line under test, from <c>STUDYPRESS_NATIVE_CLI</c>.</summary>
internal static class NativeCli
{
    public static string? Path => Environment.GetEnvironmentVariable("STUDYPRESS_NATIVE_CLI") is { Length: > 0 } p ? p : null;

    public static string? SkipReason =>
        Path is null ? "STUDYPRESS_NATIVE_CLI is not set: tests/bench/native-identical.sh publishes the native build and runs this test (publishing takes minutes, too long for every test run)"
        : !File.Exists(Path) ? "STUDYPRESS_NATIVE_CLI names no file: " + Path
        : null;
}

/// <summary>A theory that runs only when a native build is named (<see cref="NativeCli"/>).</summary>
public sealed class NativeTheoryAttribute : TheoryAttribute
{
    public NativeTheoryAttribute()
    {
        if (NativeCli.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}

/// <summary>A fact that needs the native binary (<c>STUDYPRESS_NATIVE_CLI</c>); skipped with the reason otherwise.</summary>
public sealed class NativeFactAttribute : FactAttribute
{
    public NativeFactAttribute()
    {
        if (NativeCli.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}
