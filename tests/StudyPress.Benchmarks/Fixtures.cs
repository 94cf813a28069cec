using System.Globalization;
using System.Text;
using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Benchmarks;

/// <summary>Deterministic data for the benchmarks (no files are committed).</summary>
public static class Fixtures
{
    private static readonly SourceLocation At = new("bench.md", 0, 0);

    /// <summary>CSV text with columns run, group (5 levels), y (3 decimals), seeded.</summary>
    public static byte[] OneWayCsv(int rows)
    {
        var rng = new Random(2);
        var sb = new StringBuilder(rows * 20);
        sb.Append("run,group,y\n");
        for (var i = 0; i < rows; i++)
        {
            var g = i % 5;
            var y = 50 + (0.1 * g) + Gauss(rng, 2);
            sb.Append(CultureInfo.InvariantCulture, $"{i + 1},g{g + 1},{y:F3}\n");
        }

        return Encoding.UTF8.GetBytes(sb.ToString());
    }

    public static LoadedDataset? LoadOneWay(byte[] bytes, string path)
    {
        var spec = new DatasetSpec("d", path, null, ',', '.', ["", "NA"], At, At, null);
        var needs = new DatasetNeeds();
        needs.Numeric["y"] = At;
        needs.Factors["group"] = (new FactorSpec("group", "group", null, [], null, At), At);
        return CsvLoader.Load(spec, bytes, path, needs, new DiagnosticBag());
    }

    /// <summary>k groups of n normal values with shifted means.</summary>
    public static double[][] Groups(int k, int n, int seed = 5)
    {
        var rng = new Random(seed);
        var groups = new double[k][];
        for (var g = 0; g < k; g++)
        {
            groups[g] = new double[n];
            for (var i = 0; i < n; i++)
            {
                groups[g][i] = (0.3 * g) + Gauss(rng, 1);
            }
        }

        return groups;
    }

    public static double Gauss(Random rng, double sd)
    {
        var u1 = 1.0 - rng.NextDouble();
        var u2 = rng.NextDouble();
        return sd * Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
