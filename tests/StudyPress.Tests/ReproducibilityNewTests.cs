using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary><c>studypress new DIR</c>: a starter study that builds cleanly and never overwrites.</summary>
[Collection("cli")]
public sealed class ReproducibilityNewTests
{
    [Fact]
    public void New_WritesAStudyThatBuildsWithoutMessages()
    {
        using var run = new StudyRun();
        var (exit, output, err) = run.Cli("new", "wheat");
        Assert.True(exit == 0, err);
        Assert.Equal("wrote wheat/study.md\nwrote wheat/data/protein.csv\nnext: studypress build wheat/study.md\n", output);
        var build = run.Cli("build", "wheat/study.md");
        Assert.Equal((0, string.Empty), (build.Exit, build.Err));
        var html = File.ReadAllText(Path.Combine(run.Folder, "wheat", "study.html"));
        Assert.Contains("Invented example", html, StringComparison.Ordinal);
        Assert.Equal("wheat/study.html: fresh\n", run.Cli("verify", "--recompute", "wheat/study.html").Out);
    }

    [Fact]
    public void New_ExistingFiles_RefusedAndUntouched()
    {
        using var run = new StudyRun().File("wheat/study.md", "my own study\n");
        var (exit, output, err) = run.Cli("new", "wheat");
        Assert.Equal(2, exit);
        Assert.Equal(string.Empty, output);
        Assert.Equal("wheat/study.md:1:1: error: the file already exists; 'studypress new' never overwrites files (choose another folder)\n", err);
        Assert.Equal("my own study\n", File.ReadAllText(Path.Combine(run.Folder, "wheat", "study.md")));
        Assert.False(File.Exists(Path.Combine(run.Folder, "wheat", "data", "protein.csv")));
    }

    [Fact]
    public void New_UnknownOption_IsUsageError()
    {
        using var run = new StudyRun();
        Assert.Equal(64, run.Cli("new", "--frobnicate").Exit);
        Assert.Equal(64, run.Cli("new", "a", "--frobnicate").Exit);
        Assert.Empty(Directory.GetFileSystemEntries(run.Folder));
    }
}
