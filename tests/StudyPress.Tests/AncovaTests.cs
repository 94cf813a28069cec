using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.FollowUp;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Covariates in the anova kind (analysis of covariance) through the whole pipeline: the case
/// <c>Cases/ancova/</c> against its references (ICTA maize stand, published and exactly recomputed;
/// Rutherford 2001 via a third-party suite and exactly recomputed; each value's source and status in
/// <c>reference.json</c>), the balanced-covariate property, rows with a missing covariate, the
/// post-hoc and assumptions blocks of an ANCOVA, and the mistakes (one message each, at the key).
/// </summary>
public sealed class AncovaTests
{
    private static string SourceDir([System.Runtime.CompilerServices.CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static string CaseDir => Path.Combine(SourceDir(), "Cases", "ancova");

    private static string Rutherford => File.ReadAllText(Path.Combine(CaseDir, "data", "rutherford-2001-ancova.csv"));

    private static string Maize => File.ReadAllText(Path.Combine(CaseDir, "data", "icta-maize-stand.csv"));

    private static string Study(string keys, string extra = "", string factors = "  group:\n", string response = "y") => $"""
---
title: Ancova fixture
data:
  d: d.csv
response: {response}
factors:
{factors}---

```anova a
{keys}
```
{extra}
""";

    private static StudyRun Run(string keys, string csv, string extra = "", string factors = "  group:\n", string response = "y") =>
        new StudyRun().File("d.csv", csv).Study(Study(keys, extra, factors, response));

    private static int LineOf(string text, string marker)
    {
        var lines = text.Split('\n');
        for (var i = 0; i < lines.Length; i++)
        {
            if (lines[i].Contains(marker, StringComparison.Ordinal))
            {
                return i;
            }
        }

        throw new InvalidOperationException("marker not found: " + marker);
    }

    private static CompilationResult CompileCase()
    {
        var result = Compilation.Compile(Path.Combine(CaseDir, "study.md"), new CompileOptions());
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        return result;
    }

    private static string? Opt(JsonElement e, string name) => e.TryGetProperty(name, out var p) && p.ValueKind == JsonValueKind.String ? p.GetString() : null;

    private static string[] Pair(JsonElement e) => e.TryGetProperty("pair", out var p) && p.ValueKind == JsonValueKind.Array ? [.. p.EnumerateArray().Select(x => x.GetString()!)] : [];

    private static double PairValue(ManifestView m, string block, string stat, string a, string b) =>
        m.Values.Single(v => Opt(v, "block") == block && Opt(v, "stat") == stat && Pair(v).SequenceEqual([a, b])).GetProperty("value").GetDouble();

    /// <summary>Half a unit in the last printed digit (plain or e-notation).</summary>
    private static double Tolerance(string printed)
    {
        var parts = printed.Split('e', 'E');
        var exponent = parts.Length > 1 ? int.Parse(parts[1], CultureInfo.InvariantCulture) : 0;
        var dot = parts[0].IndexOf('.', StringComparison.Ordinal);
        var decimals = dot < 0 ? 0 : parts[0].Length - dot - 1;
        return 0.5 * Math.Pow(10, exponent - decimals);
    }

    [Fact]
    public void Case_MeetsEveryReferenceValue_AtItsPrintedDigits()
    {
        var result = CompileCase();
        using var manifest = JsonDocument.Parse(result.ManifestJson!);
        using var reference = JsonDocument.Parse(File.ReadAllText(Path.Combine(CaseDir, "reference.json")));
        var checks = reference.RootElement.GetProperty("checks").EnumerateArray().ToList();
        Assert.True(checks.Count >= 50, "the case's reference lists its values");
        var values = manifest.RootElement.GetProperty("values").EnumerateArray().ToList();
        foreach (var check in checks)
        {
            var printed = check.GetProperty("value").GetString()!;
            var what = $"{Opt(check, "block")}/{Opt(check, "test")}/{Opt(check, "term")}/{Opt(check, "level")}/{string.Join("-", Pair(check))}/{Opt(check, "stat")}";
            var matches = values.Where(v => Opt(v, "block") == Opt(check, "block") && Opt(v, "test") == Opt(check, "test") && Opt(v, "term") == Opt(check, "term")
                && Opt(v, "level") == Opt(check, "level") && Opt(v, "stat") == Opt(check, "stat") && Pair(v).SequenceEqual(Pair(check))).ToList();
            Assert.True(matches.Count == 1, $"expected one manifest value for {what}, found {matches.Count}");
            var actual = matches[0].GetProperty("value").GetDouble();
            var expected = double.Parse(printed, NumberStyles.Float, CultureInfo.InvariantCulture);
            Assert.True(
                Math.Abs(actual - expected) <= Tolerance(printed) + (1e-12 * Math.Abs(expected)),
                $"{what} = {actual.ToString("R", CultureInfo.InvariantCulture)}, reference {printed} ({Opt(check, "status")}; {Opt(check, "source")})");
        }
    }

    [Fact]
    public void Case_PublishedAdjustedValues_FollowTheDiscrepantSumOfProducts_NotTheData()
    {
        // The publication's adjusted cultivar F (2.98) and slope (0.0636) rest on a total sum of
        // products 15.60 below the printed data's (documented in the shared reference); the data give
        // F = 4.8598 and b = 0.07821 (exact recomputation). The report follows the data.
        var m = new ManifestView(CompileCase().ManifestJson!);
        Assert.NotEqual(2.98, m.Get("maize", "anova", "cultivar", "f"), 2);
        Assert.NotEqual(0.0636, m.Get("maize", "covariate_slope", "plants", "estimate"), 4);
    }

    [Fact]
    public void Case_PostHocComparesAdjustedMeans_NotRawMeans()
    {
        var result = CompileCase();
        var m = new ManifestView(result.ManifestJson!);
        var diff = PairValue(m, "maize_pairs", "diff", "1", "2");
        var adjusted = m.Get("maize", "emmeans", "cultivar", "mean", "1") - m.Get("maize", "emmeans", "cultivar", "mean", "2");
        var raw = m.Get("maize", "means", "cultivar", "mean", "1") - m.Get("maize", "means", "cultivar", "mean", "2");
        Assert.Equal(adjusted, diff, 12);

        // Exact recomputation (shared reference): raw difference 4.8575 - 3.695, adjusted 4.41428444861 - 3.68196424849.
        Assert.Equal(1.1625, raw, 10);
        Assert.Equal(4.41428444861 - 3.68196424849, diff, 10);
        Assert.Contains("comparisons of ADJUSTED means", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void TukeyOfAdjustedMeans_StatisticIsTheStudentizedRange()
    {
        // The table's column is q = √2 |difference| / SE: checked against each pair's own values.
        var m = new ManifestView(CompileCase().ManifestJson!);
        foreach (var (a, b) in new[] { ("1", "2"), ("1", "3"), ("2", "3") })
        {
            var q = PairValue(m, "group_pairs", "statistic", a, b);
            Assert.Equal(Math.Sqrt(2) * Math.Abs(PairValue(m, "group_pairs", "diff", a, b) / PairValue(m, "group_pairs", "se", a, b)), q, 10);
        }
    }

    [Fact]
    public void Assumptions_CheckTheCovarianceModelsResiduals()
    {
        // W of the assumptions block equals W of the ANCOVA residuals from the engine directly, and
        // differs from W of the one-way ANOVA's residuals.
        var m = new ManifestView(CompileCase().ManifestJson!);
        var rows = Rutherford.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(l => l.Split(',')).ToArray();
        var y = rows.Select(r => double.Parse(r[3], CultureInfo.InvariantCulture)).ToArray();
        var x = rows.Select(r => double.Parse(r[2], CultureInfo.InvariantCulture)).ToArray();
        var g = new FactorColumn("group", [.. rows.Select(r => int.Parse(r[1], CultureInfo.InvariantCulture) - 1)], ["1", "2", "3"]);
        var fit = Ancova.Fit(new AncovaInput(y, [g], [new CovariateColumn("covariate", x)], true, SumOfSquaresType.Hierarchical, 0.05));
        var oneWay = FactorialAnova.Fit(new AnovaInput(y, [g], true, SumOfSquaresType.Hierarchical, 0.05));
        var reported = m.Get("group_checks", "shapiro_wilk", "residual", "w");
        Assert.Equal(ShapiroWilk.Test(fit.Residuals).W.Value, reported, 10);
        Assert.NotEqual(ShapiroWilk.Test(oneWay.Residuals).W.Value, reported, 4);
    }

    [Fact]
    public void Assumptions_WithBlocks_CompareTheTreatmentGroups()
    {
        // Additive blocks: the variance checks group the residuals by cultivar (6 groups of 4:
        // df 5 and 18), not by block x cultivar cells of one plot each.
        var m = new ManifestView(CompileCase().ManifestJson!);
        Assert.Equal(5, m.Get("maize_checks", "brown_forsythe", "cultivar", "df1"));
        Assert.Equal(18, m.Get("maize_checks", "brown_forsythe", "cultivar", "df2"));
    }

    [Theory]
    [InlineData("f-distribution")]
    [InlineData("qq")]
    [InlineData("residuals-fitted")]
    [InlineData("interaction")]
    public void FigureOfAnAncova_Builds(string type)
    {
        // The covariate's row of the table has no factor; figures drawn from the table or the
        // covariance model's residuals must name it by its column (this threw before).
        var extra = $"\n```figure f\nof: a\ntype: {type}\n```\n";
        const string keys = "factors: [block, cultivar]\ninteraction: false\ncovariates: plants";
        using var run = Run(keys, Maize, extra, "  cultivar:\n  block:\n", "yield_kg");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("<svg", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void ProseReferences_ReachTheAdjustedValues()
    {
        // Prose references name the new tests like any other: an adjusted mean, the slope, the slopes test.
        const string prose = "\nAdjusted mean of group 3: [=a.emmeans.group.3.mean]; slope [=a.covariate_slope.covariate.estimate]; slopes test: [=a.slopes_homogeneity.p].\n";
        using var run = Run("covariates: covariate", Rutherford, prose);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));

        // Exact recomputation (shared reference): adjusted mean 23.0687109597, slope 1.64906303237, p 0.2292595014.
        var html = result.Html!;
        var at = html.IndexOf("Adjusted mean of group 3:", StringComparison.Ordinal);
        Assert.True(at >= 0);
        var sentence = System.Text.RegularExpressions.Regex.Replace(html[at..html.IndexOf("</p>", at, StringComparison.Ordinal)], "<[^>]+>", string.Empty);
        Assert.Equal("Adjusted mean of group 3: 23.1; slope 1.65; slopes test: p = 0.229.", sentence);
    }

    [Fact]
    public void BalancedCovariate_AdjustedMeansEqualRawMeans()
    {
        // Constructed data (exact arithmetic): every group has covariate values 1, 2, 3, 4, 6, so the
        // group covariate means are equal (3.2) and the adjusted means ȳ_i − b (x̄_i − x̄) equal the raw
        // means whatever the slope; the responses are arbitrary decimals.
        var sb = new System.Text.StringBuilder("group,x,y\n");
        string[] groups = ["a", "b", "c"];
        int[] xs = [1, 2, 3, 4, 6];
        decimal[][] ys = [[3.1m, 4.7m, 4.2m, 6.9m, 8.0m], [5.5m, 5.1m, 7.3m, 7.0m, 9.9m], [2.2m, 3.9m, 3.0m, 5.8m, 6.1m]];
        for (var i = 0; i < groups.Length; i++)
        {
            for (var j = 0; j < xs.Length; j++)
            {
                sb.Append(CultureInfo.InvariantCulture, $"{groups[i]},{xs[j]},{ys[i][j]}\n");
            }
        }

        using var run = Run("covariates: x", sb.ToString());
        var m = run.Manifest();
        for (var i = 0; i < groups.Length; i++)
        {
            var raw = (double)(ys[i].Sum() / ys[i].Length);
            Assert.Equal(raw, m.Get("a", "means", "group", "mean", groups[i]), 12);
            Assert.Equal(raw, m.Get("a", "emmeans", "group", "mean", groups[i]), 10);
        }

        Assert.True(Math.Abs(m.Get("a", "covariate_slope", "x", "estimate")) > 0.1, "the slope is not zero, so the equality is not trivial");
    }

    [Fact]
    public void BalancedCovariate_TwoCrossedFactors_AdjustedCellMeansEqualRawCellMeans()
    {
        // Constructed: a 2 x 2 layout, each cell with covariate values 2, 5, 8 (equal cell means).
        var sb = new System.Text.StringBuilder("group,h,x,y\n");
        var k = 0;
        var cells = new Dictionary<string, List<decimal>>(StringComparer.Ordinal);
        foreach (var a in new[] { "g1", "g2" })
        {
            foreach (var b in new[] { "h1", "h2" })
            {
                var list = cells[a + " / " + b] = [];
                foreach (var x in new[] { 2, 5, 8 })
                {
                    var y = 10m + (k * 1.3m % 4.1m) + x;
                    k++;
                    sb.Append(CultureInfo.InvariantCulture, $"{a},{b},{x},{y}\n");
                    list.Add(y);
                }
            }
        }

        using var run = Run("factors: [group, h]\ncovariates: x", sb.ToString(), factors: "  group:\n  h:\n");
        var m = run.Manifest();
        foreach (var (label, values) in cells)
        {
            Assert.Equal((double)(values.Sum() / values.Count), m.Get("a", "emmeans", "group:h", "mean", label), 10);
        }
    }

    [Fact]
    public void MissingCovariate_RowLeftOut_Counted_AndSaid()
    {
        var csv = Rutherford.Replace("\n5,1,6,10\n", "\n5,1,,10\n", StringComparison.Ordinal);
        Assert.NotEqual(Rutherford, csv);
        using var run = Run("covariates: covariate", csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(22, m.Get("a", "anova", "total", "df"));
        Assert.Equal(7, m.Get("a", "means", "group", "n", "1"));
        Assert.Contains("1 row with a missing covariate value was left out", result.Html, StringComparison.Ordinal);
        Assert.Contains("1 row with a missing value was left out of this analysis", result.Html, StringComparison.Ordinal);

        // The row left out for its covariate is not "used" by the input: 24 rows read, 23 used.
        using var doc = System.Text.Json.JsonDocument.Parse(result.ManifestJson!);
        var input = doc.RootElement.GetProperty("inputs")[0];
        Assert.Equal(24, input.GetProperty("rows").GetInt32());
        Assert.Equal(23, input.GetProperty("rowsUsed").GetInt32());
        Assert.Contains("1 row was not used by any analysis", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void BadCovariateCell_IsOneErrorAtItsCell()
    {
        var csv = Rutherford.Replace("\n5,1,6,10\n", "\n5,1,six,10\n", StringComparison.Ordinal);
        using var run = Run("covariates: covariate", csv);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.EndsWith("d.csv", d.Location.Path, StringComparison.Ordinal);
        Assert.Equal(5, d.Location.Line);
        Assert.Contains("six", d.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("covariates: covariate\nwelch: yes", "SP0270")]
    [InlineData("covariates: covariate\ntransform: log", "SP0270")]
    [InlineData("covariates: covariate\nss-type: 1", "SP0270")]
    [InlineData("covariates: covariate\nfit: reml", "SP0270")]
    [InlineData("covariates: []", "SP0274")]
    [InlineData("covariates: [covariate, covariate]", "SP0273")]
    [InlineData("covariates: y", "SP0273")]
    [InlineData("covariates: group", "SP0273")]
    public void OneMistake_OneMessage_AtTheKey(string keys, string code)
    {
        using var run = Run(keys, Rutherford);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal(code, d.Code);
        Assert.Equal(LineOf(Study(keys), "covariates:"), d.Location.Line);
    }

    [Fact]
    public void UnknownCovariateColumn_IsOneErrorAtItsName()
    {
        using var run = Run("covariates: [covariate, weight]", Rutherford);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal(LineOf(Study("covariates: [covariate, weight]"), "covariates:"), d.Location.Line);
        Assert.Contains("weight", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ConstantCovariate_CannotBeFitted_OneErrorAtCovariates()
    {
        var csv = string.Join("\n", Rutherford.Split('\n').Select((l, i) => i == 0 || l.Length == 0 ? l : string.Join(",", l.Split(',').Select((c, j) => j == 2 ? "4" : c))));
        using var run = Run("covariates: covariate", csv);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0520", d.Code);
        Assert.Equal(LineOf(Study("covariates: covariate"), "covariates:"), d.Location.Line);
        Assert.Contains("constant", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void CovariateWithoutAnyValue_OneErrorAtItsName()
    {
        var csv = string.Join("\n", Rutherford.Split('\n').Select((l, i) => i == 0 || l.Length == 0 ? l : string.Join(",", l.Split(',').Select((c, j) => j == 2 ? string.Empty : c))));
        using var run = Run("covariates: covariate", csv);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0524", d.Code);
        Assert.Equal(LineOf(Study("covariates: covariate"), "covariates:"), d.Location.Line);
    }

    [Fact]
    public void RandomFactor_RefusedAtCovariates()
    {
        const string factors = "  group:\n    role: random\n";
        using var run = Run("covariates: covariate", Rutherford, factors: factors);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0271", d.Code);
        Assert.Equal(LineOf(Study("covariates: covariate", factors: factors), "covariates:"), d.Location.Line);
    }

    [Fact]
    public void AggregatedDataset_RefusedAtCovariates()
    {
        using var run = new StudyRun();
        SourcesAggregateTests.SqliteDb(Path.Combine(run.Folder, "t.sqlite"));
        const string study = """
---
title: Ancova on aggregated data
data:
  agg: { path: t.sqlite, query: "select plot, fert, y from t", aggregate: true }
response: y
factors:
  fert:
---

```anova a
covariates: plot
```
""";
        run.Study(study);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0272", d.Code);
        Assert.Equal(LineOf(study, "covariates:"), d.Location.Line);
    }

    [Theory]
    [InlineData("method: games-howell", "SP0521", "method:")]
    public void PostHocOfAncova_RefusesWhatCannotBeRight(string keys, string code, string marker)
    {
        var extra = $"\n```posthoc p\nof: a\n{keys}\n```\n";
        using var run = Run("covariates: covariate", Rutherford, extra);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal(code, d.Code);
        Assert.Equal(LineOf(Study("covariates: covariate", extra), marker), d.Location.Line);
    }

    [Theory]
    [InlineData("equivalence e", "pair: [\"1\", \"2\"]\nmargin: 1")]
    [InlineData("contrasts c", "compare:\n  first: {\"1\": 1, \"2\": -1}")]
    [InlineData("power w", "n: 10")]
    [InlineData("marginal-means mm", "by: group")]
    public void RawMeansKindsOfAncova_AreOneErrorAtTheBlock(string fence, string keys)
    {
        // These kinds work on raw level means and the plain anova; on an analysis of covariance
        // they would mix raw means with the covariance model's error: one SP0538 at the block.
        var extra = $"\n```{fence}\nof: a\n{keys}\n```\n";
        using var run = Run("covariates: covariate", Rutherford, extra);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0538", d.Code);
        Assert.Equal(LineOf(Study("covariates: covariate", extra), "```" + fence), d.Location.Line);
    }

    [Fact]
    public void PostHocOfAncova_BlockFactor_Refused()
    {
        var extra = "\n```posthoc p\nof: a\nfactor: block\n```\n";
        const string factors = "  cultivar:\n  block:\n    role: block\n";
        const string keys = "factors: [block, cultivar]\ncovariates: plants";
        using var run = Run(keys, Maize, extra, factors, "yield_kg");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0523", d.Code);
        Assert.Equal(LineOf(Study(keys, extra, factors, "yield_kg"), "factor: block"), d.Location.Line);
    }

    [Fact]
    public void SeveralTreatmentsBesideBlocks_NeedInteractionFalse()
    {
        var lines = Maize.Split('\n');
        // Dose in a checkerboard over cultivar x block (row i: cultivar (i - 1) / 4, block (i - 1) % 4), so it is not confounded with either.
        var csv = string.Join("\n", lines.Select((l, i) => l.Length == 0 ? l : i == 0 ? l + ",dose" : l + "," + ((((i - 1) / 4) + ((i - 1) % 4)) % 2 == 0 ? "lo" : "hi")));
        const string factors = "  cultivar:\n  dose:\n  block:\n    role: block\n";
        const string keys = "factors: [block, cultivar, dose]\ncovariates: plants";
        using var run = Run(keys, csv, string.Empty, factors, "yield_kg");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0271", d.Code);
        Assert.Contains("interaction: false", d.Message, StringComparison.Ordinal);

        using var fixedRun = Run(keys + "\ninteraction: false", csv, string.Empty, factors, "yield_kg");
        var fixedResult = fixedRun.Compile();
        Assert.True(fixedResult.Succeeded, string.Join("\n", fixedResult.Diagnostics));
    }
}

/// <summary>The command line on an ANCOVA mistake: one FILE:LINE:COLUMN error, exit status 2, nothing written.</summary>
[Collection("cli")]
public sealed class AncovaCliTests
{
    [Fact]
    public void Mistake_ExitTwo_OneLocatedError_NothingWritten()
    {
        using var run = new StudyRun().File("d.csv", "group,covariate,y\n1,1,2\n1,2,3\n2,1,4\n2,3,6\n").Study("""
---
title: Ancova CLI fixture
data:
  d: d.csv
response: y
factors:
  group:
---

```anova a
covariates: covariate
welch: yes
```
""");
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        var errors = err.Split('\n', StringSplitOptions.RemoveEmptyEntries).Where(l => l.Contains(": error: ", StringComparison.Ordinal)).ToList();
        var line = Assert.Single(errors);
        Assert.StartsWith("study.md:11:1: error: ", line, StringComparison.Ordinal);
        Assert.Contains("'covariates' cannot be combined with 'welch: yes'", line, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", err, StringComparison.Ordinal);
        Assert.False(File.Exists(run.ReportPath));
    }
}
