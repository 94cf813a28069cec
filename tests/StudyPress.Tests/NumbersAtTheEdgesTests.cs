using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Numbers at the edges, through the whole compiler: tests that are not defined for the data,
/// critical values far in the tail, a level whose responses are all missing.
/// </summary>
public sealed class NumbersAtTheEdgesTests
{
    private static JsonElement One(ManifestView m, string block, string test, string? term, string stat)
    {
        var found = m.Find(block, test, term, stat).ToList();
        Assert.True(found.Count == 1, $"expected one value {block}/{test}/{term}/{stat}, found {found.Count}");
        return found[0];
    }

    private static void AssertUndefined(JsonElement v)
    {
        Assert.Equal(JsonValueKind.Null, v.GetProperty("value").ValueKind);
        Assert.False(string.IsNullOrEmpty(v.GetProperty("reason").GetString()));
    }

    [Fact]
    public void EqualSpreadPairs_BrownForsytheAndLevene_AreNotDefined_AndTheAutomaticRulesSayWhy()
    {
        // Exact hand computation: every group has two values 0.3 apart, so every absolute deviation
        // from the group's median (or mean) is exactly 0.15; both sums of squares of the ANOVA on
        // the deviations are 0 and F = 0/0. The old code reported an F from rounding noise and
        // "variances differ" at alpha 0.1, then switched to Welch and Games–Howell.
        const string study = "---\ntitle: Pairs\nalpha: 0.1\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n"
            + "```anova main\nwelch: auto\n```\n\n```assumptions checks\nof: main\n```\n\n```posthoc pairs\nof: main\nmethod: auto\n```\n";
        const string csv = "g,y\na,10.1\na,10.4\nb,10.2\nb,10.5\nc,10.3\nc,10.6\n";
        using var run = new StudyRun().Study(study).File("data.csv", csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        foreach (var test in new[] { "brown_forsythe", "levene" })
        {
            var f = m.Values.Where(v => v.GetProperty("test").GetString() == test && v.GetProperty("stat").GetString() is "f" or "p").ToList();
            Assert.NotEmpty(f);
            Assert.All(f, AssertUndefined);
        }

        Assert.DoesNotContain(m.Values, v => v.GetProperty("test").GetString() == "welch");
        Assert.DoesNotContain(m.Values, v => v.GetProperty("test").GetString() == "games_howell");
        var html = result.Html!;
        Assert.DoesNotContain("variances differ", html, StringComparison.Ordinal);
        Assert.Contains("the rule did not fire because equal variances could not be checked", html, StringComparison.Ordinal);
        Assert.Contains("the Games–Howell rule did not fire because equal variances could not be checked", html, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("0.02", "g,y\na,1\na,2\nb,3\n", "```anova main\n```\n\n```posthoc pairs\nof: main\n```\n")] // critical t(0.02/2; 1) = 31.8, F(0.02; 1, 1) = 1012.9
    [InlineData("0.0007", "g,y\na,1\na,2\nb,3\nb,5\nb,4\n", "```summary s\n```\n")] // t(0.00035; 1) = 909.5 for the group of two
    [InlineData("0.0005", "g,y\na,1\na,2\nb,3\nb,5\n", "```power plan\ngroups: 2\neffect: 0.4\nn: 2\n```\n")] // F(0.0005; 1, 2) = 1999
    [InlineData("0.01", "g,y\na,1\na,2\nb,3\nb,5\nc,4\n", "```anova main\nwelch: yes\n```\n\n```assumptions checks\nof: main\n```\n\n```posthoc pairs\nof: main\nmethod: tukey\n```\n")] // 2 residual df
    [InlineData("0.01", "g,y\na,1\na,2\nb,3\nc,4\n", "```anova main\n```\n\n```posthoc pairs\nof: main\ncontrol: a\n```\n")] // 1 residual df, F(0.01; 2, 1) = 4999.5
    public void LargeCriticalValues_DoNotCrash(string alpha, string csv, string blocks)
    {
        // Each study was an internal error (exit 70) before: the critical value's inversion failed.
        var study = $"---\ntitle: Edges\nalpha: {alpha}\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n{blocks}";
        using var run = new StudyRun().Study(study).File("data.csv", csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        foreach (var v in m.Values)
        {
            if (v.GetProperty("stat").GetString() is "p" or "p_adj" && v.GetProperty("value").ValueKind == JsonValueKind.Number)
            {
                var p = v.GetProperty("value").GetDouble();
                Assert.InRange(p, 0.0, 1.0);
            }
        }
    }

    [Fact]
    public void LevelWithEveryResponseMissing_IsShownWithNZero_AndMentionedByTheOtherKinds()
    {
        // Exact hand computation: level c has two rows, both with a missing response.
        const string study = "---\ntitle: Missing\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n"
            + "```summary s\n```\n\n```anova main\n```\n\n```posthoc pairs\nof: main\n```\n";
        const string csv = "g,y\na,1.0\na,2.0\na,1.5\nb,3.5\nb,4.0\nb,4.4\nc,\nc,\n";
        using var run = new StudyRun().Study(study).File("data.csv", csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(0, m.Get("s", "summary", "g", "n", "c"));
        Assert.Equal(2, m.Get("s", "summary", "g", "missing", "c"));
        AssertUndefined(m.Find("s", "summary", "g", "mean", "c").Single());
        AssertUndefined(m.Find("s", "summary", "g", "sd", "c").Single());
        Assert.Equal(3, m.Get("s", "summary", "g", "n", "a"));
        var html = result.Html!;
        Assert.Contains("Group &#39;c&#39; has no observations", html.Replace("'", "&#39;", StringComparison.Ordinal), StringComparison.Ordinal);
        Assert.Contains("Group without any observed response (c)", html, StringComparison.Ordinal);
        Assert.Equal(1, m.Get("main", "anova", "g", "df"));
    }

    [Fact]
    public void ConstantGroups_NormalityOfExactlyZeroResiduals_IsNotDefined()
    {
        // Exact hand computation: every group constant, so every residual is exactly 0 (their
        // floating-point values may carry rounding from the centring) and W is 0/0.
        const string study = "---\ntitle: Constant\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\n```\n\n```assumptions checks\nof: main\n```\n";
        const string csv = "g,y\na,0.1\na,0.1\na,0.1\nb,0.7\nb,0.7\nc,10.3\nc,10.3\nc,10.3\n";
        using var run = new StudyRun().Study(study).File("data.csv", csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var w = m.Values.Where(v => v.GetProperty("test").GetString() == "shapiro_wilk" && v.GetProperty("stat").GetString() is "w" or "p").ToList();
        Assert.NotEmpty(w);
        Assert.All(w, AssertUndefined);
        var bart = m.Values.Where(v => v.GetProperty("test").GetString() is "bartlett" or "brown_forsythe" or "levene" && v.GetProperty("stat").GetString() is "statistic" or "f" or "p").ToList();
        Assert.NotEmpty(bart);
        Assert.All(bart, AssertUndefined);
    }

    // Regression: a rule fired on a p-value below 0.001 read "(p = < 0.001 < α = 0.05)". Invented
    // groups with spreads 1 : 5 : 25 (a test of the wording): the sentence carries the relation the
    // number format writes.
    [Fact]
    public void RuleOnATinyP_ReadsPLessThan_NotPEqualsLessThan()
    {
        const string study = "---\ntitle: Spreads\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\nwelch: auto\n```\n\n```posthoc pairs\nof: main\nmethod: auto\n```\n";
        var csv = new System.Text.StringBuilder("g,y\n");
        for (var i = 0; i < 30; i++)
        {
            var z = ((i * 7) % 13) - 6;
            csv.Append(System.Globalization.CultureInfo.InvariantCulture, $"a,{10 + (0.1 * z)}\nb,{10 + (0.5 * z)}\nc,{10 + (2.5 * z)}\n");
        }

        using var run = new StudyRun().Study(study).File("data.csv", csv.ToString());
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("found unequal group variances (p &lt; 0.001 &lt; α = 0.05)", result.Html, StringComparison.Ordinal);
        Assert.Contains("found unequal variances (p &lt; 0.001 &lt; α = 0.05)", result.Html, StringComparison.Ordinal);
        Assert.DoesNotContain("p = &lt;", result.Html, StringComparison.Ordinal);
    }
}
