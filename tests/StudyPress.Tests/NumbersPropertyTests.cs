using System.Globalization;
using System.Text;
using System.Text.Json;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Engine-wide properties through the whole compiler, on small random one- and two-way designs
/// with residual df ≥ 1 and random alphas (tiny ones such as 1e-12 included): no internal error,
/// every reported p-value in [0, 1], and no finite statistic where the exact computation is 0/0
/// (Brown–Forsythe and Levene when the absolute deviations are constant within every group;
/// Bartlett and Welch when a group has zero variance).
/// </summary>
public sealed class NumbersPropertyTests
{
    // Few distinct values, so ties, constant groups and equal spreads are common.
    private static readonly string[] Values = ["1.1", "1.4", "2", "2.3", "10.1", "10.4", "0.7"];

    private static readonly double[] Alphas = [1e-12, 1e-9, 1e-6, 0.0005, 0.0007, 0.01, 0.02, 0.05, 0.1, 0.3, 0.9];

    private sealed record Design(bool TwoWay, int[][] Picks, double Alpha);

    private static Gen<Design> Designs =>
        from twoWay in Gen.Elements(false, true)
        from cells in Gen.Choose(2, twoWay ? 6 : 4)
        from picks in Gen.Choose(0, Values.Length - 1).ArrayOf().Where(a => a.Length is >= 1 and <= 4).ArrayOf(twoWay ? 4 : cells)
        from alpha in Gen.OneOf(Gen.Elements(Alphas), Gen.Choose(1, 300).Select(e => Math.Pow(10, -e / 25.0)))
        where picks.Sum(p => p.Length) > picks.Length
        select new Design(twoWay, picks, alpha);

    private static (string Study, string Csv) Render(Design d)
    {
        var csv = new StringBuilder(d.TwoWay ? "a,b,y\n" : "g,y\n");
        for (var c = 0; c < d.Picks.Length; c++)
        {
            foreach (var p in d.Picks[c])
            {
                csv.Append(d.TwoWay ? $"a{c / 2},b{c % 2}," : $"g{c},").Append(Values[p]).Append('\n');
            }
        }

        var alpha = d.Alpha.ToString("R", CultureInfo.InvariantCulture);
        var factors = d.TwoWay ? "  a:\n  b:\n" : "  g:\n";
        var factor = d.TwoWay ? "a" : "g";
        var study = $"---\ntitle: Property\nalpha: {alpha}\ndata: data.csv\nresponse: y\nfactors:\n{factors}---\n\n"
            + "```summary s\n```\n\n```anova main\nwelch: " + (d.TwoWay ? "no" : "yes") + "\n```\n\n```assumptions checks\nof: main\n```\n\n"
            + $"```posthoc pairs\nof: main\nfactor: {factor}\nmethod: auto\n```\n\n```ranks r\nfactor: {factor}\n```\n\n```power plan\ngroups: 3\neffect: 0.4\nn: 3\n```\n";
        return (study, csv.ToString());
    }

    private static bool ConstantDeviations(IReadOnlyList<string> g) =>
        g.Distinct(StringComparer.Ordinal).Count() == 1
        || (g.Distinct(StringComparer.Ordinal).Count() == 2 && g.Count(v => v == g[0]) * 2 == g.Count);

    [Property(MaxTest = 40)]
    public Property Pipeline_NoInternalError_PValuesInRange_NoValueFromZeroOverZero()
    {
        return Prop.ForAll(Designs.ToArbitrary(), d =>
        {
            var (study, csv) = Render(d);
            using var run = new StudyRun().Study(study).File("data.csv", csv);
            var result = run.Compile();
            if (!result.Succeeded)
            {
                // Every generated study is valid (every cell has data, residual df >= 1): it must compile.
                // An internal error would have thrown out of Compile.
                return false.Label(string.Join("\n", result.Diagnostics) + "\n" + study + csv);
            }

            var m = new ManifestView(result.ManifestJson!);
            foreach (var v in m.Values)
            {
                var stat = v.GetProperty("stat").GetString();
                if (stat is "p" or "p_adj" && v.GetProperty("value").ValueKind == JsonValueKind.Number)
                {
                    var p = v.GetProperty("value").GetDouble();
                    if (!(p >= 0 && p <= 1))
                    {
                        return false.Label($"p = {p} for {v}");
                    }
                }
            }

            // The cells' raw values (two-way: the cells of a × b, which the checks use).
            var groups = d.Picks.Select(p => p.Select(i => Values[i]).ToList()).ToList();
            if (groups.All(ConstantDeviations))
            {
                foreach (var test in new[] { "brown_forsythe", "levene" })
                {
                    foreach (var v in m.Values.Where(v => v.GetProperty("test").GetString() == test && v.GetProperty("stat").GetString() is "f" or "p"))
                    {
                        if (v.GetProperty("value").ValueKind != JsonValueKind.Null)
                        {
                            return false.Label($"{test} is finite where it is 0/0: {v}\n{csv}");
                        }
                    }
                }
            }

            if (groups.Any(g => g.Distinct(StringComparer.Ordinal).Count() == 1 && g.Count > 1))
            {
                foreach (var v in m.Values.Where(v => v.GetProperty("test").GetString() is "bartlett" or "welch" && v.GetProperty("stat").GetString() is "statistic" or "f" or "p"))
                {
                    if (v.GetProperty("value").ValueKind != JsonValueKind.Null)
                    {
                        return false.Label($"a zero-variance group, yet {v}\n{csv}");
                    }
                }
            }

            return true.ToProperty();
        });
    }
}
