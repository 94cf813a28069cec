using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Nonparametric;

/// <summary>Reads the Friedman reference files (Reference/friedman, see its SOURCE.md).</summary>
internal static class FriedmanData
{
    /// <summary>
    /// A long-format CSV (block, treatment, value) as a block × treatment matrix, blocks and
    /// treatments in the order of first appearance. Fails unless every cell appears exactly once.
    /// </summary>
    public static (string[] Treatments, double[][] Blocks) Load(string file)
    {
        var lines = ReferenceFiles.ReadAllText("friedman", file).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var blocks = new List<string>();
        var treatments = new List<string>();
        var cells = new Dictionary<(string, string), double>();
        foreach (var line in lines.Skip(1))
        {
            var f = line.Trim().Split(',');
            Assert.Equal(3, f.Length);
            if (!blocks.Contains(f[0]))
            {
                blocks.Add(f[0]);
            }

            if (!treatments.Contains(f[1]))
            {
                treatments.Add(f[1]);
            }

            cells.Add((f[0], f[1]), double.Parse(f[2], NumberStyles.Float, CultureInfo.InvariantCulture));
        }

        Assert.Equal(blocks.Count * treatments.Count, cells.Count);
        return ([.. treatments], [.. blocks.Select(b => treatments.Select(t => cells[(b, t)]).ToArray())]);
    }

    /// <summary>The expected-value JSON file's root.</summary>
    public static JsonElement Expected(string file) =>
        JsonDocument.Parse(ReferenceFiles.ReadAllText("friedman", file)).RootElement.Clone();

    /// <summary>A value stored as a string, at a path of property names.</summary>
    public static string Text(JsonElement root, params string[] path)
    {
        var e = root;
        foreach (var p in path)
        {
            e = e.GetProperty(p);
        }

        return e.GetString()!;
    }

    public static double Number(JsonElement root, params string[] path) =>
        double.Parse(Text(root, path), NumberStyles.Float, CultureInfo.InvariantCulture);

    public static double[] Numbers(JsonElement root, params string[] path)
    {
        var e = root;
        foreach (var p in path)
        {
            e = e.GetProperty(p);
        }

        return [.. e.EnumerateArray().Select(x => double.Parse(x.GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture))];
    }

    /// <summary>Asserts |x − c| ≤ rel·|c|.</summary>
    public static void AssertRelative(double x, double c, double rel, string what) =>
        Assert.True(
            Math.Abs(x - c) <= rel * Math.Abs(c),
            string.Create(CultureInfo.InvariantCulture, $"{what}: got {x:R}, expected {c:R} (relative {rel})"));
}
