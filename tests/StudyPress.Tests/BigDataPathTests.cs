using System.Globalization;
using System.Text;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The large-data path through the whole pipeline: blocks that select the same rows share one
/// selection (cells and sorted values), cells are sorted by the radix sort above its threshold and
/// in parallel, and the numbers stay those of a direct computation on the file's values.
/// </summary>
public sealed class BigDataPathTests
{
    private const int PerGroup = 7_000;

    /// <summary>Three groups of 7,000 rows with two decimals (fixed seed), in run order; the values of each group.</summary>
    private static (string Csv, Dictionary<string, List<double>> Values) Data()
    {
        var rng = new Random(18);
        var csv = new StringBuilder("run,group,y\n");
        var values = new Dictionary<string, List<double>>(StringComparer.Ordinal) { ["g1"] = [], ["g2"] = [], ["g3"] = [] };
        for (var i = 0; i < 3 * PerGroup; i++)
        {
            var g = "g" + ((i % 3) + 1).ToString(CultureInfo.InvariantCulture);
            var y = Math.Round(50 + (i % 3) + ((rng.NextDouble() - 0.5) * 20), 2);
            var text = y.ToString("F2", CultureInfo.InvariantCulture);
            csv.Append(CultureInfo.InvariantCulture, $"{i + 1},{g},{text}\n");
            values[g].Add(double.Parse(text, CultureInfo.InvariantCulture));
        }

        return (csv.ToString(), values);
    }

    private const string Study = """
---
title: Large study
data:
  d: d.csv
response: y
factors:
  group:
    levels: [g1, g2, g3]
order: run
---

```summary all
```

```summary two
where:
  group: [g1, g3]
```

```anova main
factors: [group]
```

```assumptions checks
of: main
```

```posthoc pairs
of: main
method: tukey
```
""";

    /// <summary>Hyndman and Fan's definition 7 on a LINQ-sorted copy (exact hand computation of the definition).</summary>
    private static double R7(List<double> values, double p)
    {
        var s = values.OrderBy(v => v).ToArray();
        var h = (s.Length - 1) * p;
        var lo = (int)Math.Floor(h);
        return lo + 1 < s.Length ? s[lo] + ((h - lo) * (s[lo + 1] - s[lo])) : s[lo];
    }

    [Fact]
    public void SharedAndFilteredSelections_SummaryOrderStatisticsMatchTheData()
    {
        var (csv, values) = Data();
        using var run = new StudyRun().File("d.csv", csv).Study(Study);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = run.Manifest();
        foreach (var block in new[] { "all", "two" })
        {
            foreach (var g in block == "all" ? new[] { "g1", "g2", "g3" } : ["g1", "g3"])
            {
                var v = values[g];
                Assert.Equal(v.Count, m.Get(block, "summary", "group", "n", g));
                Assert.Equal(v.Min(), m.Get(block, "summary", "group", "min", g));
                Assert.Equal(v.Max(), m.Get(block, "summary", "group", "max", g));
                Assert.Equal(R7(v, 0.5), m.Get(block, "summary", "group", "median", g), 12);
                Assert.Equal(R7(v, 0.25), m.Get(block, "summary", "group", "q1", g), 12);
                Assert.Equal(R7(v, 0.75), m.Get(block, "summary", "group", "q3", g), 12);
            }
        }

        // The filtered summary selected its own rows: no g2 there.
        Assert.Empty(m.Find("two", "summary", "group", "n", "g2"));

        // The anova over the shared selection: level means as computed from the values (exact decimal means rounded once).
        foreach (var (g, v) in values)
        {
            var exact = v.Select(x => (decimal)x).Sum() / v.Count;
            Assert.Equal((double)exact, m.Get("main", "means", "group", "mean", g), 12);
        }

        // Above 5,000 points the box plot says that it draws order statistics, not every point.
        Assert.Contains("evenly spaced order statistics", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void SameInputs_SameManifestBytes()
    {
        var (csv, _) = Data();
        using var a = new StudyRun().File("d.csv", csv).Study(Study);
        using var b = new StudyRun().File("d.csv", csv).Study(Study.Replace("```summary two\nwhere:\n  group: [g1, g3]\n```\n", string.Empty, StringComparison.Ordinal));
        var ma = a.Manifest();
        var mb = b.Manifest();
        // The study without the filtered summary gives the same values for every other block.
        foreach (var stat in new[] { "mean", "median", "q1", "q3", "sd" })
        {
            foreach (var g in new[] { "g1", "g2", "g3" })
            {
                Assert.Equal(ma.Get("all", "summary", "group", stat, g), mb.Get("all", "summary", "group", stat, g));
            }
        }

        Assert.Equal(ma.Get("main", "anova", "group", "f"), mb.Get("main", "anova", "group", "f"));
        Assert.Equal(ma.Get("checks", "brown_forsythe", "group", "f"), mb.Get("checks", "brown_forsythe", "group", "f"));
    }
}

/// <summary>Line numbers kept as first + row when the rows run on line by line, as the array otherwise.</summary>
public sealed class LineNumbersTests
{
    [Fact]
    public void Consecutive_KeptAsFirstPlusRow()
    {
        var lines = StudyPress.Data.LineNumbers.From([2, 3, 4, 5]);
        Assert.Equal([2, 3, 4, 5], lines);
        Assert.Equal(5, lines[3]);
        Assert.Throws<ArgumentOutOfRangeException>(() => lines[4]);
    }

    [Fact]
    public void WithBlankLines_TheArrayItself()
    {
        var lines = StudyPress.Data.LineNumbers.From([2, 3, 5, 6]);
        Assert.Equal(4, lines.Count);
        Assert.Equal(5, lines[2]);
        Assert.Equal([2, 3, 5, 6], lines);
    }

    [Fact]
    public void BlankLineInLargeFile_OutlierLineStillRight()
    {
        // 12,001 rows with a blank line after row 6000 and one far outlier on the row after it:
        // the outlier's line (the data's own line number) is the one the report flags.
        var csv = new System.Text.StringBuilder("run,group,y\n");
        var line = 1;
        var outlierLine = 0;
        for (var i = 0; i < 12_001; i++)
        {
            if (i == 6000)
            {
                csv.Append('\n');
                line++;
            }

            line++;
            var y = i == 6000 ? "500.00" : (50 + (i % 7) - 3 + (i % 3)).ToString("F2", System.Globalization.CultureInfo.InvariantCulture);
            if (i == 6000)
            {
                outlierLine = line;
            }

            csv.Append(System.Globalization.CultureInfo.InvariantCulture, $"{i + 1},g{(i % 3) + 1},{y}\n");
        }

        using var run = new StudyRun().File("d.csv", csv.ToString()).Study("""
---
title: Lines
data:
  d: d.csv
response: y
factors:
  group:
    levels: [g1, g2, g3]
order: run
---

```anova main
factors: [group]
```

```assumptions checks
of: main
```
""");
        var m = run.Manifest();
        Assert.Single(m.Find("checks", "outliers", "residual", "t", "line " + outlierLine.ToString(System.Globalization.CultureInfo.InvariantCulture)));
    }
}
