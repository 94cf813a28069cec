using System.Security.Cryptography;
using System.Text;
using StudyPress.Cli;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary><c>studypress build --pin</c>: writes each input's hash into the header and changes nothing else.</summary>
[Collection("cli")]
public sealed class ReproducibilityPinTests
{
    private const string Body = "\n# Notes\n\nKept exactly: *emphasis*, `code`, trailing spaces   \n\n```anova main\ndata: plots\nfactors: [blend]\n```\n";

    private static string Sha(StudyRun run, string relative) =>
        Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(Path.Combine(run.Folder, relative))));

    private static StudyRun WithData() => new StudyRun().File("data/protein.csv", NewCommand.Data).File("data/copy.csv", NewCommand.Data + "19,standard,11.7\n");

    [Fact]
    public void Pin_NamedShorthand_RewritesThatEntryOnly()
    {
        using var run = WithData();
        var before = "---\ntitle: Pinning   # a comment that stays\ndata:\n   plots: data/protein.csv   # the plots\n   other: \"data/copy.csv\"\nresponse: protein_pct\nfactors: [blend]\n---\n" + Body;
        run.Study(before);
        var (exit, output, err) = run.Cli("build", "--pin", "study.md");
        Assert.True(exit == 0, err);
        Assert.StartsWith("pinned study.md\nwrote study.html\n", output, StringComparison.Ordinal);
        var expected = "---\ntitle: Pinning   # a comment that stays\ndata:\n   plots:\n      path: data/protein.csv   # the plots\n      sha256: " + Sha(run, "data/protein.csv") +
            "\n   other:\n      path: \"data/copy.csv\"\n      sha256: " + Sha(run, "data/copy.csv") + "\nresponse: protein_pct\nfactors: [blend]\n---\n" + Body;
        Assert.Equal(expected, File.ReadAllText(run.StudyPath));
    }

    [Fact]
    public void Pin_TopLevelShorthand_BecomesDatasetNamedData()
    {
        using var run = WithData();
        run.Study("---\ntitle: T\ndata: data/protein.csv\nresponse: protein_pct\nfactors: [blend]\n---\n" + Body.Replace("data: plots\n", string.Empty, StringComparison.Ordinal));
        Assert.Equal(0, run.Cli("build", "--pin", "study.md").Exit);
        Assert.StartsWith("---\ntitle: T\ndata:\n  data:\n    path: data/protein.csv\n    sha256: " + Sha(run, "data/protein.csv") + "\nresponse: protein_pct\nfactors: [blend]\n---\n", File.ReadAllText(run.StudyPath), StringComparison.Ordinal);
    }

    [Fact]
    public void Pin_MapForms_ReplaceStaleHashAndInsertMissingOne()
    {
        using var run = WithData();
        var old = new string('0', 64);
        run.Study("---\ntitle: T\ndata:\n  plots:\n    path: data/protein.csv\n    sha256: " + old + "  # pinned earlier\n    missing: [NA]\n  other:\n    path: data/copy.csv\n    delimiter: \",\"\nresponse: protein_pct\nfactors: [blend]\n---\n" + Body);
        Assert.Equal(0, run.Cli("build", "--pin", "study.md").Exit);
        Assert.StartsWith(
            "---\ntitle: T\ndata:\n  plots:\n    path: data/protein.csv\n    sha256: " + Sha(run, "data/protein.csv") + "  # pinned earlier\n    missing: [NA]\n  other:\n    path: data/copy.csv\n    sha256: " + Sha(run, "data/copy.csv") + "\n    delimiter: \",\"\nresponse: protein_pct\nfactors: [blend]\n---\n",
            File.ReadAllText(run.StudyPath),
            StringComparison.Ordinal);
    }

    [Fact]
    public void Pin_FlowMap_StaysOnItsLine()
    {
        using var run = WithData();
        run.Study("---\ntitle: T\ndata: {plots: data/protein.csv, other: {path: data/copy.csv, delimiter: \",\"}}\nresponse: protein_pct\nfactors: [blend]\n---\n" + Body);
        Assert.Equal(0, run.Cli("build", "--pin", "study.md").Exit);
        Assert.StartsWith(
            "---\ntitle: T\ndata: {plots: {path: data/protein.csv, sha256: " + Sha(run, "data/protein.csv") + "}, other: {path: data/copy.csv, sha256: " + Sha(run, "data/copy.csv") + ", delimiter: \",\"}}\n",
            File.ReadAllText(run.StudyPath),
            StringComparison.Ordinal);
    }

    [Fact]
    public void Pin_CrlfAndByteOrderMark_ArePreserved()
    {
        using var run = WithData();
        var text = "---\r\ntitle: T\r\ndata:\r\n  plots: data/protein.csv\r\nresponse: protein_pct\r\nfactors: [blend]\r\n---\r\n" + Body.Replace("\n", "\r\n", StringComparison.Ordinal);
        run.Bytes("study.md", [0xEF, 0xBB, 0xBF, .. Encoding.UTF8.GetBytes(text)]);
        Assert.Equal(0, run.Cli("build", "--pin", "study.md").Exit);
        var expected = text.Replace("  plots: data/protein.csv\r\n", "  plots:\r\n    path: data/protein.csv\r\n    sha256: " + Sha(run, "data/protein.csv") + "\r\n", StringComparison.Ordinal);
        Assert.Equal([0xEF, 0xBB, 0xBF, .. Encoding.UTF8.GetBytes(expected)], File.ReadAllBytes(run.StudyPath));
    }

    [Fact]
    public void Pin_LoneCarriageReturns_ArePreservedAndVerifyRecomputes()
    {
        // A file with CR-only line ends builds (the parser reads a lone CR as a line end), so
        // pinning and verify --recompute must read its header the same way.
        using var run = WithData();
        var text = "---\rtitle: T\rdata:\r  plots: data/protein.csv\rresponse: protein_pct\rfactors: [blend]\r---\r" + Body.Replace("\n", "\r", StringComparison.Ordinal);
        run.Bytes("study.md", Encoding.UTF8.GetBytes(text));
        var (exit, _, err) = run.Cli("build", "--pin", "study.md");
        Assert.True(exit == 0, err);
        var expected = text.Replace("  plots: data/protein.csv\r", "  plots:\r    path: data/protein.csv\r    sha256: " + Sha(run, "data/protein.csv") + "\r", StringComparison.Ordinal);
        Assert.Equal(expected, File.ReadAllText(run.StudyPath));
        (exit, var output, err) = run.Cli("verify", "--recompute", "study.html");
        Assert.True(exit == 0, output + err);
    }

    [Fact]
    public void Pin_AlreadyPinned_LeavesTheFileAlone()
    {
        using var run = WithData();
        run.Study("---\ntitle: T\ndata:\n  plots: data/protein.csv\nresponse: protein_pct\nfactors: [blend]\n---\n" + Body.Replace("data: plots\n", string.Empty, StringComparison.Ordinal));
        Assert.Equal(0, run.Cli("build", "--pin", "study.md").Exit);
        var pinned = File.ReadAllBytes(run.StudyPath);
        var (exit, output, _) = run.Cli("build", "--pin", "study.md");
        Assert.Equal(0, exit);
        Assert.DoesNotContain("pinned", output, StringComparison.Ordinal);
        Assert.Equal(pinned, File.ReadAllBytes(run.StudyPath));

        // The pin now guards the data: one changed byte stops the build.
        File.AppendAllText(Path.Combine(run.Folder, "data", "protein.csv"), "19,standard,11.7\n");
        var (exit2, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit2);
        Assert.Contains("error: 'data/protein.csv' has SHA-256 ", err, StringComparison.Ordinal);
    }

    [Fact]
    public void Pin_MissingDataFile_FailsAndLeavesStudyUntouched()
    {
        using var run = WithData();
        var text = "---\ntitle: T\ndata:\n  plots: data/nothere.csv\nresponse: protein_pct\nfactors: [blend]\n---\n" + Body;
        run.Study(text);
        var (exit, _, err) = run.Cli("build", "--pin", "study.md");
        Assert.Equal(2, exit);
        Assert.StartsWith("study.md:4:10: error: data file 'data/nothere.csv' not found", err, StringComparison.Ordinal);
        Assert.Equal(text, File.ReadAllText(run.StudyPath));
    }
}
