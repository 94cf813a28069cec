using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Repeated;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Repeated;

/// <summary>Reads Reference/repeated-measures (see its SOURCE.md) into long-format data.</summary>
internal static class RepeatedReference
{
    public const string Folder = "repeated-measures";

    /// <summary>A CSV with a header: subject column, within columns, between columns, response.</summary>
    public static RepeatedMeasuresData Load(string file, string subject, string[] within, string[] between, string response = "y")
    {
        var lines = ReferenceFiles.ReadAllText(Folder, file).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var header = lines[0].Trim().Split(',');
        var rows = lines.Skip(1).Select(l => l.Trim().Split(',')).ToList();
        IReadOnlyList<string> Column(string name)
        {
            var j = Array.IndexOf(header, name);
            Assert.True(j >= 0, "no column " + name);
            return [.. rows.Select(r => r[j])];
        }

        var y = Column(response).Select(v => double.Parse(v, NumberStyles.Float, CultureInfo.InvariantCulture)).ToArray();
        return new RepeatedMeasuresData(y, Column(subject), [.. within.Select(Column)], [.. between.Select(Column)]);
    }

    /// <summary>Keeps the measurements for which <paramref name="keep"/> is true.</summary>
    public static RepeatedMeasuresData Where(RepeatedMeasuresData d, Func<int, bool> keep)
    {
        var idx = Enumerable.Range(0, d.Response.Length).Where(keep).ToArray();
        IReadOnlyList<string> Pick(IReadOnlyList<string> col) => [.. idx.Select(i => col[i])];
        return new RepeatedMeasuresData(
            [.. idx.Select(i => d.Response[i])],
            Pick(d.Subject),
            [.. d.Within.Select(Pick)],
            [.. d.Between.Select(Pick)]);
    }

    public static JsonElement Json(string file) =>
        JsonDocument.Parse(ReferenceFiles.ReadAllText(Folder, file)).RootElement.Clone();

    public static double Number(JsonElement root, params string[] path)
    {
        var e = root;
        foreach (var p in path)
        {
            e = e.GetProperty(p);
        }

        return double.Parse(e.GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
    }

    public static string Text(JsonElement root, params string[] path)
    {
        var e = root;
        foreach (var p in path)
        {
            e = e.GetProperty(p);
        }

        return e.GetString()!;
    }

    /// <summary>Asserts |x − c| ≤ rel·|c|.</summary>
    public static void AssertRelative(double x, double c, double rel, string what) =>
        Assert.True(
            Math.Abs(x - c) <= rel * Math.Abs(c),
            string.Create(CultureInfo.InvariantCulture, $"{what}: got {x:R}, expected {c:R} (relative {rel})"));

    /// <summary>Asserts a defined quantity and returns its value.</summary>
    public static double V(Quantity q, string what)
    {
        Assert.True(q.IsDefined, what + " is not defined: " + q.Reason);
        return q.Value;
    }
}
