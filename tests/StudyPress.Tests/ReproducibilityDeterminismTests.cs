using System.Diagnostics;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Same inputs and tool version give byte-identical HTML and JSON, whatever the locale and
/// time zone: every example is built by the real command line in two child processes, one with
/// a German locale in India's time zone, one with the C locale in UTC.
/// </summary>
public sealed class ReproducibilityDeterminismTests
{
    private static readonly (string Name, string Value)[] German = [("LANG", "de_DE.UTF-8"), ("LC_ALL", "de_DE.UTF-8"), ("TZ", "Asia/Kolkata")];
    private static readonly (string Name, string Value)[] Plain = [("LANG", "C"), ("LC_ALL", "C"), ("TZ", "UTC")];

    public static TheoryData<string> Examples()
    {
        var data = new TheoryData<string>();
        foreach (var dir in Directory.GetDirectories(Path.Combine(RepositoryRoot(), "examples")).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetFileName(dir));
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Examples))]
    public void Build_LocaleAndTimeZone_DoNotChangeABit(string example)
    {
        using var a = Copy(example);
        using var b = Copy(example);
        Build(a, German);
        Build(b, Plain);
        Assert.Equal(File.ReadAllBytes(Path.Combine(a.Folder, "examples", example, "study.results.json")), File.ReadAllBytes(Path.Combine(b.Folder, "examples", example, "study.results.json")));
        var html = File.ReadAllBytes(Path.Combine(a.Folder, "examples", example, "study.html"));
        Assert.Equal(html, File.ReadAllBytes(Path.Combine(b.Folder, "examples", example, "study.html")));

        // And the same as an in-process build (other culture state, other process).
        var inProcess = Compilation.Compile(Path.Combine(a.Folder, "examples", example, "study.md"), new CompileOptions());
        Assert.Equal(html, System.Text.Encoding.UTF8.GetBytes(inProcess.Html!));
    }

    private static StudyRun Copy(string example)
    {
        var run = new StudyRun();
        var source = Path.Combine(RepositoryRoot(), "examples", example);
        foreach (var file in Directory.GetFiles(source, "*", SearchOption.AllDirectories))
        {
            var rel = Path.GetRelativePath(source, file);
            if (!rel.EndsWith(".html", StringComparison.Ordinal) && !rel.Contains(".studypress-cache", StringComparison.Ordinal) && !rel.EndsWith(".json", StringComparison.Ordinal))
            {
                run.Bytes(Path.Combine("examples", example, rel), File.ReadAllBytes(file));
            }
        }

        return run;
    }

    private static void Build(StudyRun run, (string Name, string Value)[] environment)
    {
        var example = Path.GetFileName(Directory.GetDirectories(Path.Combine(run.Folder, "examples"))[0]);
        var start = new ProcessStartInfo("dotnet")
        {
            WorkingDirectory = run.Folder,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        foreach (var arg in new[] { CliAssembly(), "build", $"examples/{example}/study.md", "--json", $"examples/{example}/study.results.json" })
        {
            start.ArgumentList.Add(arg);
        }

        start.Environment.Remove("SOURCE_DATE_EPOCH");
        foreach (var (name, value) in environment)
        {
            start.Environment[name] = value;
        }

        using var process = Process.Start(start)!;
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(TimeSpan.FromMinutes(2)))
        {
            process.Kill(entireProcessTree: true);
            Assert.Fail("the child build did not finish within two minutes");
        }

        Assert.True(process.ExitCode == 0, $"exit {process.ExitCode}: {stdout.Result}{stderr.Result}");
    }

    /// <summary>The command line's assembly: copied beside the tests (project reference), with its runtime config.</summary>
    private static string CliAssembly()
    {
        var here = Path.Combine(AppContext.BaseDirectory, "studypress.dll");
        Assert.True(File.Exists(here) && File.Exists(Path.ChangeExtension(here, ".runtimeconfig.json")), "studypress.dll or its runtimeconfig.json is not beside the tests");
        return here;
    }

    private static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StudyPress.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StudyPress.sln not found above " + AppContext.BaseDirectory);
    }
}
