using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Assumptions;

/// <summary>Readers for the reference files used by the assumption tests.</summary>
internal static class AssumptionsData
{
    /// <summary>Rows of a CSV file with a header line, split on commas.</summary>
    public static IReadOnlyList<string[]> Rows(string folder, string file) =>
        File.ReadAllLines(ReferenceFiles.PathOf(folder, file))
            .Skip(1)
            .Where(l => l.Length > 0)
            .Select(l => l.Split(','))
            .ToList();

    public static double Number(string s) => double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture);

    /// <summary>A one-column CSV as numbers.</summary>
    public static double[] Column(string folder, string file) =>
        Rows(folder, file).Select(r => Number(r[0])).ToArray();

    /// <summary>A two-column CSV (group code, value) as groups in order of first appearance.</summary>
    public static List<double[]> Grouped(string folder, string file)
    {
        var order = new List<string>();
        var map = new Dictionary<string, List<double>>(StringComparer.Ordinal);
        foreach (var r in Rows(folder, file))
        {
            if (!map.TryGetValue(r[0], out var list))
            {
                list = [];
                map[r[0]] = list;
                order.Add(r[0]);
            }

            list.Add(Number(r[1]));
        }

        return order.Select(k => map[k].ToArray()).ToList();
    }

    public static List<double[]> Gear() => Grouped("nist-ehandbook", "gear.csv");

    /// <summary>A string value at a path of property names in a JSON file, parsed as a number.</summary>
    public static double JsonNumber(string folder, string file, params string[] path)
    {
        using var doc = JsonDocument.Parse(ReferenceFiles.ReadAllText(folder, file));
        var e = doc.RootElement;
        foreach (var p in path)
        {
            e = e.GetProperty(p);
        }

        return Number(e.GetString()!);
    }

    public static double[] JsonNumbers(string folder, string file, params string[] path)
    {
        using var doc = JsonDocument.Parse(ReferenceFiles.ReadAllText(folder, file));
        var e = doc.RootElement;
        foreach (var p in path)
        {
            e = e.GetProperty(p);
        }

        return e.EnumerateArray().Select(v => Number(v.GetString()!)).ToArray();
    }
}
