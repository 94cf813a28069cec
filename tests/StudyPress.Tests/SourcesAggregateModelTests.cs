using System.Text.RegularExpressions;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// An anova block on aggregated data (<c>aggregate: true</c>) seen by the blocks that describe or
/// draw it: a <c>figure</c> that needs the rows is one error at the figure block (not a built figure
/// block with a note), the figures drawn from the table or the comparisons are drawn, and a
/// <c>methods</c> block describes the aggregated ANOVA (design, model, decisions, results) and says
/// what was not computed because the rows were not read. The data are those of
/// <see cref="SourcesAggregateTests.Rows"/> in SQLite.
/// </summary>
public sealed partial class SourcesAggregateModelTests
{
    private const string Header = """
        ---
        title: Aggregated anova, described and drawn
        data:
          agg: { path: t.sqlite, query: "select plot, fert, soil, y from t order by plot", aggregate: true }
        response: y
        factors:
          fert:
          soil:
        ---

        ```summary s1
        data: agg
        by: [fert]
        ```

        ```anova a1
        data: agg
        factors: [fert]
        ```

        """;

    private static StudyRun Run(string blocks)
    {
        var run = new StudyRun().Study(Header + blocks);
        SourcesAggregateTests.SqliteDb(Path.Combine(run.Folder, "t.sqlite"));
        return run;
    }

    /// <summary>The 1-based line of the first line of <paramref name="text"/> that starts with <paramref name="prefix"/>.</summary>
    private static int LineOf(string text, string prefix) =>
        text.Split('\n').Select((l, i) => (l, i)).First(p => p.l.StartsWith(prefix, StringComparison.Ordinal)).i + 1;

    [Theory]
    [InlineData("box", "s1")]
    [InlineData("means", "s1")]
    [InlineData("box", "a1")]
    [InlineData("means", "a1")]
    [InlineData("qq", "a1")]
    [InlineData("residual-histogram", "a1")]
    [InlineData("residuals-fitted", "a1")]
    [InlineData("interaction", "a1")]
    public void Figure_ThatDrawsRows_IsOneErrorAtTheFigureBlock(string type, string of)
    {
        var blocks = $"```figure f1\ntype: {type}\nof: {of}\n```\n";
        using var run = Run(blocks);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        var d = Assert.Single(result.Diagnostics);
        Assert.Equal("SP0338", d.Code);
        var line = LineOf(Header + blocks, "```figure f1");
        Assert.EndsWith(
            $"study.md:{line}:1: error: dataset 'agg': a '{type}' figure draws the rows of block '{of}', and the database aggregates this dataset (aggregate: true); on aggregated data only 'f-distribution' and 'intervals' figures are drawn (declare a second dataset on the same file with a sampling query for the other figures)",
            d.ToString(),
            StringComparison.Ordinal);
    }

    [Fact]
    public void Figure_FromTheTableOrTheComparisons_IsDrawnOnAggregatedData()
    {
        using var run = Run("```posthoc p1\nof: a1\nmethod: tukey\n```\n\n```figure f1\ntype: f-distribution\nof: a1\n```\n\n```figure f2\ntype: intervals\nof: p1\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains(result.Figures, f => f.FileName.Contains("_f1_f-distribution-", StringComparison.Ordinal));
        Assert.Contains(result.Figures, f => f.FileName.EndsWith("_f2_intervals.png", StringComparison.Ordinal));
        Assert.DoesNotContain("cannot be drawn", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void Methods_DescribesTheAggregatedAnova()
    {
        using var run = Run("```posthoc p1\nof: a1\n```\n\n```methods m1\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var text = Text(result.Html!);
        var manifest = new ManifestView(result.ManifestJson!);

        // Design: the cells' counts, recorded under the methods block (the table's total df + 1 observations).
        var total = manifest.Get("m1", "design", "a1", "n_total");
        Assert.Equal(manifest.Get("a1", "anova", "total", "df") + 1, total);
        Assert.Equal(total, new[] { "low", "mid", "high" }.Sum(l => manifest.Get("m1", "design", "a1", "n", l)));
        Assert.Contains("The rows were not read: the database aggregated them into per-cell counts, means and sums of squares (aggregate: true)", text, StringComparison.Ordinal);

        // Model, decisions, results.
        Assert.Contains("A one-way fixed-effects analysis of variance was fitted by weighted least squares on the cell means", text, StringComparison.Ordinal);
        Assert.Contains("Bartlett's test on the group variances, χ²(", text, StringComparison.Ordinal);
        Assert.Contains("For fert, the F test", text, StringComparison.Ordinal);
        Assert.Contains("For the pairwise comparisons of fert,", text, StringComparison.Ordinal);
        Assert.Contains("Dunn's rank comparisons were not available, as they need the ranks of the rows", text, StringComparison.Ordinal);

        // What was not computed, said plainly; nothing claims a check that did not run.
        Assert.Contains("The model's assumptions were not checked, and no rank test or least-squares means were computed", text, StringComparison.Ordinal);
        Assert.DoesNotContain("Brown–Forsythe test gave", text, StringComparison.Ordinal);
        Assert.DoesNotContain("rows read", text, StringComparison.Ordinal);
        Assert.Contains("aggregated by the database into", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Methods_DesignFromTheRowsAndFromTheDatabaseCells_IsTheSame()
    {
        // The cell table is one view on both routes: the same counts, total and dropped rows.
        using var run = new StudyRun().Study("""
            ---
            title: One cell table
            data:
              raw: { path: t.sqlite, query: "select plot, fert, soil, y from t order by plot" }
              agg: { path: t.sqlite, query: "select plot, fert, soil, y from t order by plot", aggregate: true }
            response: y
            factors:
              fert:
              soil:
            ---

            ```anova r2
            data: raw
            factors: [fert, soil]
            ```

            ```anova a2
            data: agg
            factors: [fert, soil]
            ```

            ```methods m1
            ```
            """);
        SourcesAggregateTests.SqliteDb(Path.Combine(run.Folder, "t.sqlite"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var manifest = new ManifestView(result.ManifestJson!);
        string[] stats = ["n_total", "dropped_missing"];
        foreach (var stat in stats)
        {
            Assert.Equal(manifest.Get("m1", "design", "r2", stat), manifest.Get("m1", "design", "a2", stat));
        }

        // Cell sizes of SourcesAggregateTests.Rows (exact hand count: 3 + ((2f + s) mod 4) + f rows
        // per cell; plot 5, the third of low / sand, has no response).
        var cells = new Dictionary<string, double>(StringComparer.Ordinal)
        {
            ["low / clay"] = 3, ["low / sand"] = 3, ["mid / clay"] = 6, ["mid / sand"] = 7, ["high / clay"] = 5, ["high / sand"] = 6,
        };
        foreach (var (label, n) in cells)
        {
            Assert.Equal(n, manifest.Get("m1", "design", "r2", "n", label));
            Assert.Equal(n, manifest.Get("m1", "design", "a2", "n", label));
        }

        Assert.Equal(1, manifest.Get("m1", "design", "a2", "dropped_missing"));
    }

    /// <summary>The methods paragraphs' text (tags dropped, entities of quotes restored).</summary>
    private static string Text(string html)
    {
        var paragraphs = MethodsParagraph().Matches(html).Select(m => m.Groups[1].Value);
        return TagPattern().Replace(string.Join("\n", paragraphs), string.Empty).Replace("&#39;", "'", StringComparison.Ordinal);
    }

    [GeneratedRegex("<p class=\"methods-[a-z]+\">(.*?)</p>", RegexOptions.Singleline)]
    private static partial Regex MethodsParagraph();

    [GeneratedRegex("<[^>]+>")]
    private static partial Regex TagPattern();
}
