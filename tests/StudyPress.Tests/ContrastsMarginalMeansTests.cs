using System.Globalization;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Contrasts of a factor in an anova with other factors are contrasts of the model's estimated
/// marginal means (equal-weight averages of the fitted cells over the other factors), not of raw
/// pooled means. Data: NIST/SEMATECH e-Handbook JAHANMI2 (section 1.3.5.5; ceramic strength),
/// labs 1–4 × batch, made unbalanced by keeping, in data order, only the first 10 bars of lab 1
/// batch 1, 20 of lab 2 batch 2 and 25 of lab 3 batch 1 (30 elsewhere; N = 205). Expected values:
/// exact hand computation in rational arithmetic (Python fractions) from the full-factorial
/// formulas EMMᵢ = (ȳᵢ₁ + ȳᵢ₂)/2, Var = σ² (1/nᵢ₁ + 1/nᵢ₂)/4, MSE = pooled within-cell SS / 197,
/// contrast SS = L²/Σ cᵢ² vᵢ, joint SS = L′(CVC′)⁻¹L, printed to 12 significant digits.
/// </summary>
public sealed class ContrastsMarginalMeansTests
{
    private static string Csv()
    {
        var lines = File.ReadAllLines(ReferenceFiles.PathOf("nist-ehandbook", "jahanmi2.csv"));
        var header = lines[0].Split(',');
        int Col(string name) => Array.IndexOf(header, name);
        var keep = new Dictionary<(string, string), int> { [("1", "1")] = 10, [("2", "2")] = 20, [("3", "1")] = 25 };
        var count = new Dictionary<(string, string), int>();
        var rows = lines.Skip(1).Select(l => l.Split(',')).OrderBy(r => int.Parse(r[Col("id")], CultureInfo.InvariantCulture));
        var text = new System.Text.StringBuilder("lab,batch,strength\n");
        foreach (var r in rows)
        {
            var key = (r[Col("lab")], r[Col("batch")]);
            if (key.Item1 is not ("1" or "2" or "3" or "4"))
            {
                continue;
            }

            var seen = count.GetValueOrDefault(key);
            if (seen < keep.GetValueOrDefault(key, 30))
            {
                count[key] = seen + 1;
                text.Append(key.Item1).Append(',').Append(key.Item2).Append(',').Append(r[Col("strength")]).Append('\n');
            }
        }

        return text.ToString();
    }

    private const string Study = """
---
title: Contrasts of estimated marginal means
data:
  d: d.csv
response: strength
factors:
  lab:
    levels: ["1", "2", "3", "4"]
  batch:
    levels: ["1", "2"]
---

```anova a
factors: [lab, batch]
ss-type: 3
```

```contrasts c
of: a
factor: lab
compare:
  1 vs 2: {"1": 1, "2": -1}
  12 vs 34: {"1": 1, "2": 1, "3": -1, "4": -1}
adjust: none
```

```contrasts t
of: a
factor: lab
trend: 1
adjust: none
```
""";

    private static void Close(double expected, double actual, string what) =>
        Assert.True(Math.Abs(actual - expected) <= 1e-9 * Math.Max(1, Math.Abs(expected)), $"{what}: {actual.ToString("R", CultureInfo.InvariantCulture)} vs {expected.ToString("R", CultureInfo.InvariantCulture)}");

    [Fact]
    public void UnbalancedTwoWay_ContrastsAreOfEstimatedMarginalMeans()
    {
        using var run = new StudyRun().File("d.csv", Csv()).Study(Study);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);

        // Exact hand computation (see the class summary).
        Close(-16.27765, m.Get("c", "contrast", "lab", "estimate", "1 vs 2"), "1 vs 2 estimate");
        Close(14.6156541882, m.Get("c", "contrast", "lab", "se", "1 vs 2"), "1 vs 2 SE");
        Close(7.32202666667, m.Get("c", "contrast", "lab", "estimate", "12 vs 34"), "12 vs 34 estimate");
        Close(18.7522536764, m.Get("c", "contrast", "lab", "se", "12 vs 34"), "12 vs 34 SE");
        Assert.Equal(197, m.Get("c", "contrast", "lab", "df", "1 vs 2"));

        // Linear trend over equal weights (−3, −1, 1, 3), lack of fit = joint SS of the quadratic and
        // cubic, total = joint SS of all three = the factor's marginal (type 3) SS.
        Close(17.8724733333, m.Get("t", "contrast", "lab", "estimate", "linear"), "linear estimate");
        Close(43.9218506851, m.Get("t", "contrast", "lab", "se", "linear"), "linear SE");
        Close(652.998915947, m.Get("t", "contrast", "lab", "ss", "linear"), "linear SS");
        Close(13218.1882036, m.Get("t", "contrast", "lab", "ss", "lack of fit"), "lack-of-fit SS");
        Close(13657.8514595, m.Get("t", "contrast", "lab", "ss", "between levels"), "joint SS");
        Close(13657.8514595, m.Get("a", "anova", "lab", "ss"), "anova type 3 SS of lab");
        Assert.Contains("This total is the sum of squares of lab in the anova table.", result.Html, StringComparison.Ordinal);
    }

    // Regression: these used to be contrasts of raw means pooled over batch, with a caution.
    [Fact]
    public void UnbalancedTwoWay_NoPooledMeansCaution_AndTheMethodSaysMarginalMeans()
    {
        using var run = new StudyRun().File("d.csv", Csv()).Study(Study);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.DoesNotContain("raw means pooled over the other factors", result.Html, StringComparison.Ordinal);
        Assert.Contains("estimated marginal means of lab", result.Html, StringComparison.Ordinal);
    }
}
