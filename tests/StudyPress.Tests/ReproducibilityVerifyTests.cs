using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;
using StudyPress.Cli;
using StudyPress.Rendering;
using StudyPress.Reproducibility;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary><c>studypress verify</c>: fresh, stale (which file), altered (with --recompute), unreadable.</summary>
[Collection("cli")]
public sealed partial class ReproducibilityVerifyTests
{
    /// <summary>The starter study from <c>studypress new</c>, built into study.html.</summary>
    internal static StudyRun Built()
    {
        var run = new StudyRun().File("study.md", NewCommand.Study).File("data/protein.csv", NewCommand.Data);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
        return run;
    }

    [Fact]
    public void Verify_UntouchedReport_IsFresh()
    {
        using var run = Built();
        Assert.Equal((0, "study.html: fresh\n", string.Empty), run.Cli("verify", "study.html"));
        Assert.Equal((0, "study.html: fresh\n", string.Empty), run.Cli("verify", "study.html", "--recompute"));
    }

    [Fact]
    public void Verify_OneDataByteEdited_ReportsThatFileStale()
    {
        using var run = Built();
        var path = Path.Combine(run.Folder, "data", "protein.csv");
        var bytes = File.ReadAllBytes(path);
        var at = Encoding.ASCII.GetString(bytes).IndexOf("12.9", StringComparison.Ordinal) + 3;
        bytes[at] = (byte)'8';
        File.WriteAllBytes(path, bytes);

        var (exit, output, _) = run.Cli("verify", "study.html");
        Assert.Equal(1, exit);
        Assert.Equal("study.html: stale (changed: data/protein.csv)\n", output);
        // A stale report is not recomputed: it is stale whatever the numbers say.
        Assert.Equal("study.html: stale (changed: data/protein.csv)\n", run.Cli("verify", "--recompute", "study.html").Out);
    }

    [Fact]
    public void Verify_StudyEditedAndInputMissing_NamesBoth()
    {
        using var run = Built();
        File.AppendAllText(run.StudyPath, "\nOne more sentence.\n");
        File.Delete(Path.Combine(run.Folder, "data", "protein.csv"));
        var (exit, output, _) = run.Cli("verify", "study.html");
        Assert.Equal(1, exit);
        Assert.Equal("study.html: stale (changed: study.md; missing: data/protein.csv)\n", output);
    }

    [Fact]
    public void Verify_VisibleNumberEdited_ReportsAlteredWithAndWithoutRecompute()
    {
        using var run = Built();
        var html = File.ReadAllText(run.ReportPath);
        var m = ShownNumber().Match(html);
        Assert.True(m.Success);
        var shown = m.Groups["text"].Value;
        var edited = shown.Replace(shown[^1], shown[^1] == '1' ? '2' : '1');
        File.WriteAllText(run.ReportPath, html[..m.Groups["text"].Index] + edited + html[(m.Groups["text"].Index + shown.Length)..]);

        // The inputs are unchanged, but the shown number is not its manifest value: altered with or without --recompute.
        var expected = $"study.html: altered ({m.Groups["id"].Value} shows {edited}, its manifest value rounds to {shown})\n";
        Assert.Equal((1, expected, string.Empty), run.Cli("verify", "study.html"));
        Assert.Equal((1, expected, string.Empty), run.Cli("verify", "study.html", "--recompute"));
    }

    [Fact]
    public void Verify_ManifestValueEditedBelowTheShownDigits_RecomputeFindsOtherValues()
    {
        using var run = Built();
        var html = File.ReadAllText(run.ReportPath);
        // The F statistic of the blend term: change its 12th significant digit, which no
        // visible number shows, so only recomputation can tell.
        var m = Regex.Match(html, "\"id\": \"(?<id>v\\d+)\",\\s*\"block\": \"main\",\\s*\"test\": \"anova\",\\s*\"term\": \"blend\",[^}]*?\"stat\": \"f\",\\s*\"value\": (?<v>[0-9.]+)");
        Assert.True(m.Success);
        var value = double.Parse(m.Groups["v"].Value, CultureInfo.InvariantCulture);
        var changed = (value * (1 + 1e-11)).ToString("R", CultureInfo.InvariantCulture);
        var g = m.Groups["v"];
        File.WriteAllText(run.ReportPath, html[..g.Index] + changed + html[(g.Index + g.Length)..]);

        var (exit, output, _) = run.Cli("verify", "study.html", "--recompute");
        Assert.Equal(1, exit);
        Assert.Equal($"study.html: altered (recompiling gives other values: {m.Groups["id"].Value} (f) was {changed}, now {m.Groups["v"].Value})\n", output);
    }

    [Fact]
    public void Verify_ProseEdited_RecomputeReportsBytesDiffer()
    {
        using var run = Built();
        var html = File.ReadAllText(run.ReportPath);
        File.WriteAllText(run.ReportPath, html.Replace("Eighteen field plots", "Nineteen field plots", StringComparison.Ordinal));
        Assert.Equal((1, "study.html: altered (the report's bytes differ from a rebuild)\n", string.Empty), run.Cli("verify", "study.html", "--recompute"));
    }

    [Fact]
    public void Verify_ReportInOutFolder_ResolvesStudyAndInputs()
    {
        using var run = new StudyRun().File("study.md", NewCommand.Study).File("data/protein.csv", NewCommand.Data);
        Assert.Equal(0, run.Cli("build", "study.md", "--out", "site/reports").Exit);
        Assert.Equal((0, "site/reports/study.html: fresh\n", string.Empty), run.Cli("verify", "--recompute", "site/reports/study.html"));
        File.AppendAllText(Path.Combine(run.Folder, "data", "protein.csv"), "19,standard,11.7\n");
        Assert.Equal("site/reports/study.html: stale (changed: data/protein.csv)\n", run.Cli("verify", "site/reports/study.html").Out);
    }

    [Fact]
    public void Verify_BuildTimeRecorded_RecomputeUsesIt()
    {
        using var run = new StudyRun().File("study.md", NewCommand.Study).File("data/protein.csv", NewCommand.Data);
        var result = Compilation.Compile(run.StudyPath, new CompileOptions { SourceDateEpoch = 1700000000 });
        Assert.True(result.Succeeded);
        AtomicFile.Write(run.ReportPath, Encoding.UTF8.GetBytes(result.Html!));
        Assert.Contains("2023-11-14T22:13:20Z", result.Html, StringComparison.Ordinal);
        Assert.Equal(Freshness.Fresh, ReportVerifier.Verify(run.ReportPath, recompute: true).State);
    }

    [Fact]
    public void Verify_SeveralReports_WorstExitWins()
    {
        using var run = Built();
        run.File("other.html", "<html><body>hello</body></html>");
        var (exit, output, err) = run.Cli("verify", "study.html", "other.html", "gone.html");
        Assert.Equal(2, exit);
        Assert.Equal("study.html: fresh\n", output);
        Assert.Equal(
            "other.html:1:1: error: no results manifest found; is this a studypress report?\n" +
            "gone.html:1:1: error: no such file\n",
            err);
    }

    [Fact]
    public void Verify_UsageErrors_Exit64()
    {
        using var run = Built();
        Assert.Equal(64, run.Cli("verify", "--frobnicate", "study.html").Exit);
        Assert.Equal(64, run.Cli("verify").Exit);
    }

    [Fact]
    public void Cli_MistypedCommandOrOption_SuggestsOneFix_Exit64()
    {
        using var run = Built();
        var (exit, _, err) = run.Cli("bulid", "study.md");
        Assert.Equal(64, exit);
        Assert.Equal("studypress: error: unknown command 'bulid'; did you mean 'build'?\nTry 'studypress --help'.\n", err);
        (exit, _, err) = run.Cli("build", "--outt", "x", "study.md");
        Assert.Equal(64, exit);
        Assert.StartsWith("studypress: error: unknown option '--outt'; did you mean '--out'?", err, StringComparison.Ordinal);
    }

    [Fact]
    public void Cli_VersionAndHelp_ShowVersionAndValueNames()
    {
        using var run = new StudyRun();
        var (exit, shortOut, _) = run.Cli("-v");
        Assert.Equal(0, exit);
        var (_, longOut, _) = run.Cli("--version");
        Assert.Equal(longOut, shortOut);
        Assert.NotEmpty(shortOut.Trim()); // the entry assembly's version (the test host's, in this in-process run)
        var (_, help, _) = run.Cli("build", "--help");
        Assert.Contains("--out <DIR>", help, StringComparison.Ordinal);
        Assert.Contains("--json <FILE>", help, StringComparison.Ordinal);
    }

    [Fact]
    public void Cli_AbsoluteStudyPath_IsPrintedAsGiven()
    {
        using var run = Built();
        var study = Path.Combine(run.Folder, "study.md");
        File.WriteAllText(study, File.ReadAllText(study).Replace("```anova", "```anova\nwelsh: yes", StringComparison.Ordinal));
        var (exit, _, err) = run.Cli("build", study);
        Assert.Equal(2, exit);
        Assert.StartsWith(study + ":", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("build", "--pin")]
    [InlineData("verify", "--recompute")]
    [InlineData("watch", "--out")]
    [InlineData("new", "DIR")]
    public void Cli_EveryCommand_HasHelp(string command, string mentions)
    {
        using var run = new StudyRun();
        var (exit, output, _) = run.Cli(command, "--help");
        Assert.Equal(0, exit);
        Assert.Contains(mentions, output, StringComparison.Ordinal);
    }

    [GeneratedRegex("data-v=\"(?<id>v\\d+)\" tabindex=\"0\">(?<text>[0-9][0-9.]*)<")]
    private static partial Regex ShownNumber();
}
