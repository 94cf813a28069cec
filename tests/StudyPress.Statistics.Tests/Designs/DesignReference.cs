using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Designs;

/// <summary>Reads the design reference files (Reference/rcbd, split-plot, nested, icc; see each SOURCE.md).</summary>
internal static class DesignReference
{
    /// <summary>A CSV with a header: the named label columns (in that order) and the response column.</summary>
    public static DesignData Load(string folder, string file, string response, params string[] factors)
    {
        var lines = ReferenceFiles.ReadAllText(folder, file).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var header = lines[0].Trim().Split(',');
        var rows = lines.Skip(1).Select(l => l.Trim().Split(',')).ToList();
        var y = rows.Select(r => double.Parse(r[Array.IndexOf(header, response)], NumberStyles.Float, CultureInfo.InvariantCulture)).ToArray();
        var labels = factors.Select(f =>
        {
            var j = Array.IndexOf(header, f);
            Assert.True(j >= 0, "no column " + f);
            return (IReadOnlyList<string>)[.. rows.Select(r => r[j])];
        }).ToList();
        return new DesignData(y, labels);
    }

    /// <summary>Keeps the rows for which <paramref name="keep"/> is true.</summary>
    public static DesignData Where(DesignData data, Func<int, bool> keep)
    {
        var idx = Enumerable.Range(0, data.Response.Length).Where(keep).ToArray();
        return new DesignData(
            [.. idx.Select(i => data.Response[i])],
            [.. data.Labels.Select(col => (IReadOnlyList<string>)[.. idx.Select(i => col[i])])]);
    }

    public static JsonElement Expected(string folder, string file) =>
        JsonDocument.Parse(ReferenceFiles.ReadAllText(folder, file)).RootElement.Clone();

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

    /// <summary>Asserts |x − c| ≤ rel·|c|.</summary>
    public static void AssertRelative(double x, double c, double rel, string what) =>
        Assert.True(
            Math.Abs(x - c) <= rel * Math.Abs(c),
            string.Create(CultureInfo.InvariantCulture, $"{what}: got {x:R}, expected {c:R} (relative {rel})"));

    /// <summary>Checks df, SS, MS (and F, p, error df when given) of a row against an exact-recomputation object.</summary>
    public static void AssertExactRow(StrataRow row, JsonElement e, string what, double rel = 1e-9)
    {
        Assert.Equal(int.Parse(e.GetProperty("df").GetString()!, CultureInfo.InvariantCulture), row.Df);
        AssertRelative(row.SumOfSquares, Parse(e, "ss"), rel, what + " SS");
        AssertRelative(row.MeanSquare.Value, Parse(e, "ms"), rel, what + " MS");
        if (e.TryGetProperty("f", out _))
        {
            AssertRelative(row.F.Value, Parse(e, "f"), rel, what + " F");
            AssertRelative(row.P.Value, Parse(e, "p"), rel, what + " p");
            Assert.Equal(Parse(e, "error_term_df"), row.DfDenominator.Value);
        }
    }

    /// <summary>
    /// Checks df, SS, MS, F, p of a row against published values at their printed digits (half a
    /// unit of the last digit). With <paramref name="oneUnit"/> MS and F are allowed one unit: for
    /// the rows where the source printed a value derived from rounded intermediates or truncated
    /// (named at the call).
    /// </summary>
    public static void AssertPublishedRow(StrataRow row, JsonElement e, string what, bool oneUnit = false)
    {
        void Check(double x, string printed, string label)
        {
            if (oneUnit)
            {
                var pv = double.Parse(printed, NumberStyles.Float, CultureInfo.InvariantCulture);
                var dot = printed.IndexOf('.', StringComparison.Ordinal);
                var unit = Math.Pow(10, -(dot < 0 ? 0 : printed.Length - dot - 1));
                Assert.True(Math.Abs(x - pv) <= unit * (1 + 1e-9), string.Create(CultureInfo.InvariantCulture, $"{label}: got {x:R}, printed {printed} (±{unit})"));
            }
            else
            {
                Accuracy.AssertRoundsTo(x, printed, label);
            }
        }

        Assert.Equal(int.Parse(e.GetProperty("df").GetString()!, CultureInfo.InvariantCulture), row.Df);
        Accuracy.AssertRoundsTo(row.SumOfSquares, e.GetProperty("ss").GetString()!, what + " SS");
        if (e.TryGetProperty("ms", out var ms))
        {
            Check(row.MeanSquare.Value, ms.GetString()!, what + " MS");
        }

        if (e.TryGetProperty("f", out var f))
        {
            Check(row.F.Value, f.GetString()!, what + " F");
        }

        if (e.TryGetProperty("p", out var p))
        {
            Accuracy.AssertRoundsTo(row.P.Value, p.GetString()!, what + " p");
        }
    }

    private static double Parse(JsonElement e, string name) =>
        double.Parse(e.GetProperty(name).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
}
