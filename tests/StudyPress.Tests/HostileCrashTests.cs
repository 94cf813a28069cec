using System.Diagnostics;
using System.Globalization;
using System.Text;
using StudyPress.Rendering;
using StudyPress.Tests.Support;
using StudyPress.Reproducibility;

namespace StudyPress.Tests;

/// <summary>
/// Crash safety: a build killed part-way leaves the previous report intact; temporary files left by
/// a killed write are removed by the next build; an internal error is one line and exit 70.
/// </summary>
[Collection("cli")]
public sealed class HostileCrashTests
{
    private const string Csv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,a,2.4\n4,b,3.5\n5,b,4.0\n6,b,3.3\n7,c,5.5\n8,c,6.0\n9,c,5.1\n";

    /// <summary>A study with enough blocks and figures that its build takes a moment.</summary>
    private static string BigStudy(string title)
    {
        var sb = new StringBuilder($"---\ntitle: {title}\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n");
        for (var i = 0; i < 60; i++)
        {
            sb.Append(CultureInfo.InvariantCulture, $"```anova a{i}\n```\n\n```assumptions\nof: a{i}\n```\n\n```posthoc\nof: a{i}\n```\n\n");
        }

        return sb.ToString();
    }

    [Fact]
    public void Build_KilledAtSeveralPoints_LeavesThePreviousReportByteIdentical()
    {
        using var run = new StudyRun().Study(BigStudy("First version")).File("data.csv", Csv);
        Assert.Equal(0, run.Cli("build", "study.md", "--quiet").Exit);
        var previous = File.ReadAllBytes(run.ReportPath);
        run.Study(BigStudy("Second version"));
        var interrupted = 0;
        foreach (var delay in new[] { 0, 150, 300, 500, 800, 1200, 1700, 2500 })
        {
            using var child = Start(run.Folder, "build", "study.md", "--quiet");
            var finished = child.WaitForExit(delay);
            if (!finished)
            {
                child.Kill(entireProcessTree: true);
                child.WaitForExit();
                interrupted++;
            }

            var now = File.ReadAllBytes(run.ReportPath);
            if ((finished && child.ExitCode == 0) || !now.AsSpan().SequenceEqual(previous))
            {
                // The build completed before this kill point, or was killed after its rename and
                // before the process ended (a real race, likelier the faster a build is): either
                // way the report must be the new one, whole, never a mixture or a cut-off file.
                var text = Encoding.UTF8.GetString(now);
                Assert.Contains("Second version", text, StringComparison.Ordinal);
                Assert.EndsWith("</html>\n", text, StringComparison.Ordinal);
                Assert.Null(ReportIntegrity.Problem(text));
                File.WriteAllBytes(run.ReportPath, previous);
            }
            else
            {
                Assert.Equal(previous, now);
            }

            // Only the killed child's own temporary file may remain (a kill between write and rename).
            Assert.All(Directory.GetFiles(run.Folder, ".*.tmp"), f => Assert.Contains(".study.html." + child.Id.ToString(CultureInfo.InvariantCulture) + ".", f, StringComparison.Ordinal));
        }

        Assert.True(interrupted > 0, "no kill point interrupted the build; make the study bigger");

        // The next build completes and removes any leftover temporary file.
        Assert.Equal(0, run.Cli("build", "study.md", "--quiet").Exit);
        Assert.Contains("Second version", File.ReadAllText(run.ReportPath), StringComparison.Ordinal);
        Assert.Empty(Directory.GetFiles(run.Folder, ".*.tmp"));
    }

    [Fact]
    public void Write_StaleTemporaryOfADeadProcess_IsRemovedByTheNextWrite()
    {
        using var run = new StudyRun();
        var target = Path.Combine(run.Folder, "study.html");
        var stale = AtomicFile.TemporaryPath(target, int.MaxValue);
        var live = AtomicFile.TemporaryPath(target, Environment.ProcessId == 1 ? 2 : 1); // pid 1 always runs
        var other = AtomicFile.TemporaryPath(Path.Combine(run.Folder, "other.html"), int.MaxValue);
        File.WriteAllText(stale, "half a report");
        File.WriteAllText(live, "someone else's write in progress");
        File.WriteAllText(other, "another target's leftover");
        AtomicFile.Write(target, Encoding.UTF8.GetBytes("whole"));
        Assert.Equal("whole", File.ReadAllText(target));
        Assert.False(File.Exists(stale));
        Assert.True(File.Exists(live));
        Assert.True(File.Exists(other));
    }

    [Fact]
    public void Cli_InternalError_PrintsOneLineAskingForAReportAndExits70()
    {
        // The seam: an output stream that fails. Nothing in the build catches that, so it reaches
        // the command line's last-resort handler exactly like a bug would.
        using var run = new StudyRun().Study("---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n```anova main\n```\n").File("data.csv", Csv);
        var err = new StringWriter(CultureInfo.InvariantCulture);
        var exit = StudyPress.Cli.StudyPressCommand.Run(["build", run.StudyPath], new FailingWriter(), err);
        Assert.Equal(70, exit);
        var lines = err.ToString().TrimEnd('\n').Split('\n');
        Assert.Single(lines);
        Assert.StartsWith("studypress: internal error: InvalidOperationException: the output stream is broken.", lines[0], StringComparison.Ordinal);
        Assert.Contains("please report it", lines[0], StringComparison.Ordinal);
    }

    private static Process Start(string folder, params string[] args)
    {
        var info = new ProcessStartInfo("dotnet") { WorkingDirectory = folder, RedirectStandardError = true, RedirectStandardOutput = true };
        info.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "studypress.dll"));
        foreach (var a in args)
        {
            info.ArgumentList.Add(a);
        }

        return Process.Start(info)!;
    }

    private sealed class FailingWriter : TextWriter
    {
        public override Encoding Encoding => Encoding.UTF8;

        public override void Write(char value) => throw new InvalidOperationException("the output stream is broken");
    }
}
