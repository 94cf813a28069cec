using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// How the repeated kind words its tables: factor labels instead of column names, and the
/// comparison of the classical and mixed-model routes by decision at α as well as by number.
/// Data: the golden case's copy of Doncaster and Davey (2007), model 6.3 (one measurement removed
/// as a fixture).
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

    [Fact]
    public void RoutesCompared_ByDecisionAtAlpha_NotOnlyByNumber()
    {
        // Subject 1 of group A 3 loses its B 2 measurement: the routes' numbers differ.
        var csv = string.Join("\n", File.ReadAllText(Path.Combine(SourceDir(), "Cases", "kinds", "repeated", "data", "doncaster-davey-model-6-3.csv"))
            .Split('\n').Where(l => !string.Equals(l.TrimEnd('\r'), "1,3,2,16.4482", StringComparison.Ordinal)));
        using var run = new StudyRun().File("d.csv", csv).Study("""
---
title: Routes fixture
data:
  d: d.csv
response: y
factors: [subject, A, B]
---

```repeated r
subject: subject
within: B
between: A
labels: per-group
correction: none
```
""");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Contains("same decision at α", System.Net.WebUtility.HtmlDecode(result.Html), StringComparison.Ordinal);
        var differ = new[] { "A", "B", "A:B" }.Where(t => (m.Get("r", "anova", t, "p") < 0.05) != (m.Get("r", "anova_reml", t, "p") < 0.05)).ToList();
        if (differ.Count > 0)
        {
            Assert.Contains("the classical and mixed-model routes reach different decisions for", result.Html, StringComparison.Ordinal);
        }
        else
        {
            Assert.Contains("but every term gets the same decision at α", System.Net.WebUtility.HtmlDecode(result.Html), StringComparison.Ordinal);
            Assert.DoesNotContain("reach different decisions", result.Html, StringComparison.Ordinal);
        }
    }
}
