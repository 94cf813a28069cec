using System.Diagnostics;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The report's bytes must not depend on the fonts of the machine that builds it: charts measure
/// text with the font embedded in the tool, never with the host's font configuration.
/// </summary>
[Collection("cli")]
public sealed class FontIndependenceTests
{
    [Fact]
    public void Build_WithFontLookupImpossible_IsByteIdenticalToNormalBuild()
    {
        using var run = new StudyRun();
        var example = Path.Combine(Repository.Root, "examples", "spray-nozzles");
        foreach (var file in Directory.GetFiles(example, "*", SearchOption.AllDirectories).Where(f => !f.EndsWith(".html", StringComparison.Ordinal)))
        {
            run.Bytes(Path.GetRelativePath(example, file), File.ReadAllBytes(file));
        }

        var conf = Path.Combine(run.Folder, "empty-fonts.conf");
        File.WriteAllText(conf, "<?xml version=\"1.0\"?>\n<!DOCTYPE fontconfig SYSTEM \"fonts.dtd\">\n<fontconfig></fontconfig>\n");
        Directory.CreateDirectory(Path.Combine(run.Folder, "a"));
        Directory.CreateDirectory(Path.Combine(run.Folder, "b"));
        RunCli(run.Folder, new Dictionary<string, string?>(), "build", "study.md", "--out", "a", "--quiet");
        RunCli(run.Folder, new Dictionary<string, string?> { ["FONTCONFIG_FILE"] = conf, ["FONTCONFIG_PATH"] = run.Folder, ["XDG_DATA_HOME"] = run.Folder }, "build", "study.md", "--out", "b", "--quiet");
        var a = File.ReadAllBytes(Path.Combine(run.Folder, "a", "study.html"));
        var b = File.ReadAllBytes(Path.Combine(run.Folder, "b", "study.html"));
        Assert.Contains("<svg", System.Text.Encoding.UTF8.GetString(a), StringComparison.Ordinal);
        Assert.Equal(a, b);
    }

    /// <summary>Runs the built command line in a child process, so its environment is its own.</summary>
    internal static void RunCli(string workingDirectory, IDictionary<string, string?> environment, params string[] args)
    {
        var dll = Path.Combine(AppContext.BaseDirectory, "studypress.dll");
        var info = new ProcessStartInfo("dotnet") { WorkingDirectory = workingDirectory, RedirectStandardError = true, RedirectStandardOutput = true };
        info.ArgumentList.Add(dll);
        foreach (var a in args)
        {
            info.ArgumentList.Add(a);
        }

        foreach (var (k, v) in environment)
        {
            info.Environment[k] = v;
        }

        using var p = Process.Start(info)!;
        var err = p.StandardError.ReadToEndAsync();
        var output = p.StandardOutput.ReadToEndAsync();
        Assert.True(p.WaitForExit(120_000), "the child build did not finish");
        Assert.True(p.ExitCode == 0, $"exit {p.ExitCode}: {err.Result}{output.Result}");
    }
}

/// <summary>Finds the repository from the test assembly's location.</summary>
public static class Repository
{
    public static string Root
    {
        get
        {
            var dir = new DirectoryInfo(AppContext.BaseDirectory);
            while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StudyPress.sln")))
            {
                dir = dir.Parent;
            }

            return dir?.FullName ?? throw new InvalidOperationException("repository root not found");
        }
    }
}
