using System.Text.RegularExpressions;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>verify --recompute reads numbers in generated sentences (data-style) by their own style.</summary>
[Collection("cli")]
public sealed partial class VerifyStyledNumbersTests
{
    [GeneratedRegex("(data-style=\"report-p\" tabindex=\"0\">)([^<]+)(<)")]
    private static partial Regex StyledP();

    [Fact]
    public void Verify_ReportWithMethodsText_IsFreshAndAnEditedStyledNumberIsAltered()
    {
        using var run = new StudyRun();
        var example = Path.Combine(Repository.Root, "examples", "spray-nozzles");
        foreach (var file in Directory.GetFiles(example, "*", SearchOption.AllDirectories).Where(f => !f.EndsWith(".html", StringComparison.Ordinal)))
        {
            run.Bytes(Path.GetRelativePath(example, file), File.ReadAllBytes(file));
        }

        Assert.Equal(0, run.Cli("build", "study.md", "--quiet").Exit);
        var (exit, output, err) = run.Cli("verify", "--recompute", "study.html");
        Assert.True(exit == 0, output + err);
        Assert.Contains("study.html: fresh", output, StringComparison.Ordinal);

        var html = File.ReadAllText(run.ReportPath);
        Assert.Matches(StyledP(), html);
        File.WriteAllText(run.ReportPath, StyledP().Replace(html, m => m.Groups[1].Value + ".999" + m.Groups[3].Value, 1));
        (exit, output, _) = run.Cli("verify", "--recompute", "study.html");
        Assert.Equal(1, exit);
        Assert.Contains("altered", output, StringComparison.Ordinal);
    }
}
