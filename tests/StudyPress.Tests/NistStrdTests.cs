using System.Globalization;
using System.Text;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Accuracy of the one-way ANOVA through the whole pipeline (study file → CSV → manifest) against
/// the certified values of the NIST Statistical Reference Datasets for ANOVA
/// (https://www.itl.nist.gov/div898/strd/anova/anova.html; files and notes in Reference/nist-strd-anova).
/// Each certified value is printed to 15 significant digits; we require a log relative error of
/// at least 14.5 (every printed digit) for every certified df, SS, MS, F and R² of every dataset,
/// the "higher difficulty" SmLs07-09 included: the sums of squares of exact decimal data are
/// computed exactly and rounded once.
/// </summary>
public sealed class NistStrdTests
{
    private const double RequiredDigits = 14.5;

    public static TheoryData<string> Datasets() =>
        ["SiRstv", "SmLs01", "SmLs02", "SmLs03", "AtmWtAg", "SmLs04", "SmLs05", "SmLs06", "SmLs07", "SmLs08", "SmLs09"];

    [Theory]
    [MemberData(nameof(Datasets))]
    public void OneWayAnova_NistStrdDataset_MatchesEveryCertifiedDigit(string name)
    {
        using var certified = JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-strd-anova", "certified.json")));
        var entry = certified.RootElement.GetProperty("datasets").GetProperty(name);
        var values = entry.GetProperty("certified");
        var lines = File.ReadAllLines(ReferenceFiles.PathOf("nist-strd-anova", name + ".dat"));
        var first = entry.GetProperty("data_first_line").GetInt32();
        var last = entry.GetProperty("data_last_line").GetInt32();

        // The data rows are "group response", copied as text so no digit is lost on the way.
        var csv = new StringBuilder("group,response\n");
        for (var i = first - 1; i < last; i++)
        {
            var parts = lines[i].Split(' ', StringSplitOptions.RemoveEmptyEntries);
            csv.Append(parts[0]).Append(',').Append(parts[1]).Append('\n');
        }

        using var run = new StudyRun()
            .File("data.csv", csv.ToString())
            .Study("""
                ---
                title: NIST StRD check
                data: data.csv
                response: response
                factors:
                  group:
                ---

                ```anova a
                welch: no
                ```
                """);
        var m = run.Manifest();

        var checks = new (string Term, string Stat, string Key)[]
        {
            ("group", "df", "between_df"),
            ("group", "ss", "between_ss"),
            ("group", "ms", "between_ms"),
            ("group", "f", "f_statistic"),
            ("residual", "df", "within_df"),
            ("residual", "ss", "within_ss"),
            ("residual", "ms", "within_ms"),
        };
        foreach (var (term, stat, key) in checks)
        {
            var c = double.Parse(values.GetProperty(key).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
            var x = m.Get("a", "anova", term, stat);
            var lre = Accuracy.Lre(x, c);
            Assert.True(lre >= RequiredDigits, $"{name} {key}: got {x.ToString("R", CultureInfo.InvariantCulture)}, certified {c.ToString("R", CultureInfo.InvariantCulture)}, LRE {lre.ToString("F2", CultureInfo.InvariantCulture)}");
        }

        // R² = SS_between / SS_total, also certified.
        var r2 = m.Get("a", "anova", "group", "eta2");
        var r2c = double.Parse(values.GetProperty("r_squared").GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
        Assert.True(Accuracy.Lre(r2, r2c) >= RequiredDigits, $"{name} R²: LRE {Accuracy.Lre(r2, r2c).ToString("F2", CultureInfo.InvariantCulture)}");
    }
}
