using StudyPress.Cli;
using StudyPress.Reproducibility;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>Batch builds: discovery, parallel builds, the up-to-date cache, --force, failure isolation, PNG figures.</summary>
[Collection("cli")]
public sealed class ReproducibilityBatchTests
{
    /// <summary>Three starter studies a/, b/, c/ with slightly different data.</summary>
    private static StudyRun ThreeStudies()
    {
        var run = new StudyRun();
        foreach (var (name, i) in new[] { ("a", 0), ("b", 1), ("c", 2) })
        {
            run.File($"studies/{name}/study.md", NewCommand.Study)
               .File($"studies/{name}/data/protein.csv", NewCommand.Data.Replace("11.6", "11." + (6 + i).ToString(System.Globalization.CultureInfo.InvariantCulture), StringComparison.Ordinal));
        }

        return run;
    }

    private static string Summary(string output) => output.TrimEnd('\n').Split('\n')[^1];

    [Fact]
    public void Batch_NoChange_SkipsEveryStudy_ForceRebuildsThem()
    {
        using var run = ThreeStudies();
        var first = run.Cli("build", "studies", "--jobs", "1");
        Assert.True(first.Exit == 0, first.Err);
        Assert.Equal("built 3, up to date 0, failed 0", Summary(first.Out));
        var report = File.ReadAllBytes(Path.Combine(run.Folder, "studies", "b", "study.html"));

        var second = run.Cli("build", "studies");
        Assert.Equal(0, second.Exit);
        Assert.Equal("built 0, up to date 3, failed 0", Summary(second.Out));
        Assert.Contains("up to date studies/b/study.html\n", second.Out, StringComparison.Ordinal);

        // Built again three at a time: the same bytes as one at a time.
        var forced = run.Cli("build", "studies", "--force", "--jobs", "3");
        Assert.Equal("built 3, up to date 0, failed 0", Summary(forced.Out));
        Assert.Equal(report, File.ReadAllBytes(Path.Combine(run.Folder, "studies", "b", "study.html")));
    }

    [Fact]
    public void Batch_OneInputChanged_RebuildsOnlyThatStudy()
    {
        using var run = ThreeStudies();
        Assert.Equal(0, run.Cli("build", "studies").Exit);
        File.AppendAllText(Path.Combine(run.Folder, "studies", "b", "data", "protein.csv"), "19,standard,11.7\n");
        var (exit, output, _) = run.Cli("build", "studies");
        Assert.Equal(0, exit);
        Assert.Equal("built 1, up to date 2, failed 0", Summary(output));
        Assert.Contains("wrote studies/b/study.html\n", output, StringComparison.Ordinal);
    }

    [Fact]
    public void Batch_SameSizeAndTimestamp_StillNoticesTheChange()
    {
        using var run = ThreeStudies();
        Assert.Equal(0, run.Cli("build", "studies").Exit);
        var data = Path.Combine(run.Folder, "studies", "a", "data", "protein.csv");
        var stamp = File.GetLastWriteTimeUtc(data);
        var text = File.ReadAllText(data);
        File.WriteAllText(data, text.Replace("13.4", "13.5", StringComparison.Ordinal));
        File.SetLastWriteTimeUtc(data, stamp);
        Assert.Equal(text.Length, new FileInfo(data).Length);
        Assert.Equal("built 1, up to date 2, failed 0", Summary(run.Cli("build", "studies").Out));
    }

    [Fact]
    public void Batch_ReportDeletedOrEdited_IsRebuilt()
    {
        using var run = ThreeStudies();
        Assert.Equal(0, run.Cli("build", "studies").Exit);
        File.Delete(Path.Combine(run.Folder, "studies", "a", "study.html"));
        File.AppendAllText(Path.Combine(run.Folder, "studies", "c", "study.html"), "<!-- edited -->");
        Assert.Equal("built 2, up to date 1, failed 0", Summary(run.Cli("build", "studies").Out));
        Assert.Equal("study.html: fresh\n", new StudyRun().Cli("verify", Path.Combine(run.Folder, "studies", "c", "study.html")).Out.Replace(Path.Combine(run.Folder, "studies", "c") + "/", string.Empty, StringComparison.Ordinal));
    }

    [Fact]
    public void Batch_StudyEdited_CacheEntryInvalidated()
    {
        using var run = ThreeStudies();
        Assert.Equal(0, run.Cli("build", "studies").Exit);
        var study = Path.Combine(run.Folder, "studies", "c", "study.md");
        Assert.True(BuildCache.IsUpToDate(study, Path.Combine(run.Folder, "studies", "c", "study.html"), new CompileOptions()));
        Assert.False(BuildCache.IsUpToDate(study, Path.Combine(run.Folder, "studies", "c", "study.html"), new CompileOptions { SourceDateEpoch = 1 }));
        File.AppendAllText(study, "\nA new closing sentence.\n");
        Assert.False(BuildCache.IsUpToDate(study, Path.Combine(run.Folder, "studies", "c", "study.html"), new CompileOptions()));
        Assert.Equal("built 1, up to date 2, failed 0", Summary(run.Cli("build", "studies").Out));
    }

    [Fact]
    public void Batch_OneStudyFails_OthersAreBuiltAndItsErrorsShown()
    {
        using var run = ThreeStudies();
        run.File("studies/b/data/protein.csv", "plot,blend,protein_pct\n1,standard,twelve\n");
        var (exit, output, err) = run.Cli("build", "studies", "--jobs", "3");
        Assert.Equal(2, exit);
        Assert.Equal("built 2, up to date 0, failed 1", Summary(output));
        Assert.Contains("failed studies/b/study.md\n", output, StringComparison.Ordinal);
        Assert.Contains("studies/b/data/protein.csv:2:12: error: 'twelve' is not a number in column 'protein_pct'", err, StringComparison.Ordinal);
        Assert.True(File.Exists(Path.Combine(run.Folder, "studies", "a", "study.html")));
        Assert.True(File.Exists(Path.Combine(run.Folder, "studies", "c", "study.html")));
        Assert.False(File.Exists(Path.Combine(run.Folder, "studies", "b", "study.html")));
    }

    [Fact]
    public void Batch_TwoStudiesSameNameIntoOneFolder_IsRefused()
    {
        using var run = ThreeStudies();
        var (exit, _, err) = run.Cli("build", "studies", "--out", "site");
        Assert.Equal(2, exit);
        Assert.Contains("would both write site/study.html", err, StringComparison.Ordinal);
        Assert.False(Directory.Exists(Path.Combine(run.Folder, "site")));
    }

    [Fact]
    public void Batch_BadJobs_IsUsageError()
    {
        using var run = ThreeStudies();
        Assert.Equal(64, run.Cli("build", "studies", "--jobs", "0").Exit);
        Assert.Equal(64, run.Cli("build", "studies", "--jobs", "many").Exit);
    }

    [Fact]
    public void Build_Figures_WritesEachFigureAsPng()
    {
        using var run = ThreeStudies();
        var (exit, _, err) = run.Cli("build", "studies/a/study.md", "--figures", "figs");
        Assert.True(exit == 0, err);
        var expected = Compilation.Compile(Path.Combine(run.Folder, "studies", "a", "study.md"), new CompileOptions()).Figures.Select(f => f.FileName).Order(StringComparer.Ordinal).ToList();
        // Each study's figures have their own folder: the study's path without '.md' (FigurePaths).
        var folder = Path.Combine(run.Folder, "figs", "studies", "a", "study");
        Assert.Equal([folder], Directory.GetDirectories(Path.Combine(run.Folder, "figs", "studies", "a")));
        var written = Directory.GetFiles(folder).Select(f => Path.GetFileName(f)).Order(StringComparer.Ordinal).ToList();
        Assert.NotEmpty(expected);
        Assert.Equal(expected, written);
        foreach (var f in written)
        {
            Assert.Equal([0x89, (byte)'P', (byte)'N', (byte)'G'], File.ReadAllBytes(Path.Combine(folder, f)).Take(4).ToArray());
        }
    }
}
