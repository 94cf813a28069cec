using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The repeated kind's tables, decisions and simple effects print the factors' labels, not their
/// column names. Data: the golden case's copy of Doncaster and Davey (2007), model 6.3.
/// </summary>
public sealed class RepeatedLabelsTests
{
    private static string SourceDir([System.Runtime.CompilerServices.CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    [Fact]
    public void TermsAreWrittenWithLabels()
    {
        var csv = File.ReadAllText(Path.Combine(SourceDir(), "Cases", "kinds", "repeated", "data", "doncaster-davey-model-6-3.csv"));
        using var run = new StudyRun().File("d.csv", csv).Study("""
---
title: Labels fixture
data:
  d: d.csv
response: y
factors:
  subject:
    label: Tank
  A:
    label: Stocking density
  B:
    label: Season
---

```repeated r
subject: subject
within: B
between: A
labels: per-group
simple: always
```
""");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var text = System.Net.WebUtility.HtmlDecode(result.Html);
        Assert.Contains("Within subjects: Season", text, StringComparison.Ordinal);
        Assert.Contains("Stocking density × Season", text, StringComparison.Ordinal);
        Assert.Contains("Error: Season × Tank(Stocking density)", text, StringComparison.Ordinal);
        Assert.Contains("Error: Tank(Stocking density)", text, StringComparison.Ordinal);
        Assert.Contains("Season at Stocking density ", text, StringComparison.Ordinal);
        Assert.DoesNotContain("Error: B × ", text, StringComparison.Ordinal);

        // The manifest keeps the names: labels are for readers only.
        Assert.Contains("\"term\": \"A:B\"", System.Text.Encoding.UTF8.GetString(result.ManifestJson!), StringComparison.Ordinal);
    }
}
