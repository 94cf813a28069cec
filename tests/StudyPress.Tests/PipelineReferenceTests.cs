using System.Globalization;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The analysis blocks, compiled from study files, against the NIST/SEMATECH e-Handbook of
/// Statistical Methods (DOI 10.18434/M32189) worked examples; files and notes in
/// Reference/nist-ehandbook (SOURCE.md). Tolerances follow the reference collection's table.
/// </summary>
public sealed class PipelineReferenceTests
{
    private static JsonElement Published(string file) =>
        JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-ehandbook", file))).RootElement.GetProperty("published");

    private static double D(JsonElement e, string name) =>
        double.Parse(e.GetProperty(name).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);

    private static void AssertRelative(double x, double expected, double tolerance, string what) =>
        Assert.True(Math.Abs(x - expected) <= tolerance * Math.Abs(expected), $"{what}: got {x.ToString("R", CultureInfo.InvariantCulture)}, published {expected.ToString("R", CultureInfo.InvariantCulture)}");

    [Fact]
    public void AssumptionsBlock_Gear_MatchesHandbookLeveneAndBartlett()
    {
        // e-Handbook 1.3.5.10 (Levene test, median-centred: W = 1.705910) and 1.3.5.7 (Bartlett: T = 20.78580).
        using var run = new StudyRun()
            .File("gear.csv", File.ReadAllText(ReferenceFiles.PathOf("nist-ehandbook", "gear.csv")))
            .Study("---\ntitle: GEAR\ndata: gear.csv\nresponse: diameter\nfactors:\n  batch:\n---\n\n```anova a\n```\n\n```assumptions c\n```\n");
        var m = run.Manifest();
        var levene = Published("eda35a-levene-gear.expected.json");
        var bartlett = Published("eda357-bartlett-gear.expected.json");
        AssertRelative(m.Get("c", "brown_forsythe", "batch", "f"), D(levene, "W"), 1e-5, "Brown–Forsythe W");
        Assert.Equal(9, m.Get("c", "brown_forsythe", "batch", "df1"));
        Assert.Equal(90, m.Get("c", "brown_forsythe", "batch", "df2"));
        AssertRelative(m.Get("c", "bartlett", "batch", "statistic"), D(bartlett, "T"), 1e-5, "Bartlett T");
        Assert.Equal(9, m.Get("c", "bartlett", "batch", "df"));
        // The handbook rejects equal variances by Bartlett (T > 16.919) but not by Levene (W < 1.9855).
        Assert.True(m.Get("c", "bartlett", "batch", "p") < 0.05);
        Assert.True(m.Get("c", "brown_forsythe", "batch", "p") > 0.05);
    }

    [Fact]
    public void PosthocBlock_TukeyPrc471_MatchesHandbookIntervals()
    {
        // e-Handbook 7.4.7.1 Tukey's method: six simultaneous 95 % intervals, printed to 2 decimals.
        var p = Published("prc471-tukey.expected.json").GetProperty("intervals");
        using var run = new StudyRun()
            .File("data.csv", File.ReadAllText(ReferenceFiles.PathOf("nist-ehandbook", "prc471-tukey-4levels.csv")))
            .Study("---\ntitle: Tukey\ndata: data.csv\nresponse: value\nfactors:\n  level:\n---\n\n```anova a\n```\n\n```posthoc t\nmethod: tukey\n```\n");
        var m = run.Manifest();
        var pairs = m.Values.Where(v => v.GetProperty("block").GetString() == "t" && v.GetProperty("test").GetString() == "tukey_hsd").ToList();
        foreach (var interval in p.EnumerateObject())
        {
            // "mu2-mu1" names levels 2 and 1; the report may list the pair either way round.
            var levels = interval.Name.Replace("mu", string.Empty, StringComparison.Ordinal).Split('-');
            double Stat(string a, string b, string stat) => pairs.Single(v =>
                v.GetProperty("pair")[0].GetString() == a && v.GetProperty("pair")[1].GetString() == b && v.GetProperty("stat").GetString() == stat).GetProperty("value").GetDouble();
            var direct = pairs.Any(v => v.GetProperty("pair")[0].GetString() == levels[0] && v.GetProperty("pair")[1].GetString() == levels[1]);
            var (low, high) = direct
                ? (Stat(levels[0], levels[1], "ci_low"), Stat(levels[0], levels[1], "ci_high"))
                : (-Stat(levels[1], levels[0], "ci_high"), -Stat(levels[1], levels[0], "ci_low"));
            Assert.True(Math.Abs(low - D(interval.Value, "lower")) <= 0.01, $"{interval.Name} lower: {low}");
            Assert.True(Math.Abs(high - D(interval.Value, "upper")) <= 0.01, $"{interval.Name} upper: {high}");
        }
    }

    [Fact]
    public void AnovaBlock_Jahanmi2FourFactorMainEffects_MatchesHandbookTable()
    {
        // e-Handbook 1.3.5.5 Multi-factor ANOVA, JAHANMI2.DAT: balanced 2x2x2x2 main-effects model.
        // The page prints single-precision values: relative 1e-4 for SS, MS, F and 1e-6 for means.
        var p = Published("eda355-multifactor-anova-jahanmi2.expected.json");
        using var run = new StudyRun()
            .File("data.csv", File.ReadAllText(ReferenceFiles.PathOf("nist-ehandbook", "jahanmi2.csv")))
            .Study("---\ntitle: JAHANMI2\ndata: data.csv\nresponse: strength\nfactors:\n  table_speed:\n    column: table_speed_x1\n  down_feed_rate:\n    column: down_feed_rate_x2\n  wheel_grit_size:\n    column: wheel_grit_x3\n  batch:\n---\n\n```anova a\ninteraction: false\n```\n");
        var m = run.Manifest();
        foreach (var term in new[] { "table_speed", "down_feed_rate", "wheel_grit_size", "batch" })
        {
            var row = p.GetProperty(term);
            Assert.Equal(1, m.Get("a", "anova", term, "df"));
            AssertRelative(m.Get("a", "anova", term, "ss"), D(row, "ss"), 1e-4, term + " SS");
            AssertRelative(m.Get("a", "anova", term, "f"), D(row, "f"), 1e-4, term + " F");
            foreach (var level in p.GetProperty("level_means").GetProperty(term).EnumerateObject())
            {
                AssertRelative(m.Get("a", "means", term, "mean", level.Name), double.Parse(level.Value.GetString()!, CultureInfo.InvariantCulture), 1e-6, $"{term} mean at {level.Name}");
            }
        }

        Assert.Equal(475, m.Get("a", "anova", "residual", "df"));
        AssertRelative(m.Get("a", "anova", "residual", "ss"), D(p.GetProperty("residual"), "ss"), 1e-4, "residual SS");
        AssertRelative(m.Get("a", "anova", "residual", "ms"), D(p.GetProperty("residual"), "ms"), 1e-4, "residual MS");
        AssertRelative(m.Get("a", "anova", "total", "ss"), D(p.GetProperty("total_corrected"), "ss"), 1e-4, "total SS");
        AssertRelative(m.Get("a", "anova", "batch", "f_crit"), D(p, "critical_F_upper_alpha_0.05_df_1_475"), 1e-5, "critical F");
    }
}
