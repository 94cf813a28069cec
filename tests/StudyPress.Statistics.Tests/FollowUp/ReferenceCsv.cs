using System.Globalization;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

/// <summary>Reads the small comma-separated reference files of this folder (header row, no quoting).</summary>
internal static class ReferenceCsv
{
    public static (string[] Header, string[][] Rows) Read(params string[] path)
    {
        var lines = File.ReadAllLines(ReferenceFiles.PathOf(path)).Where(l => l.Length > 0).ToArray();
        return (lines[0].Split(','), [.. lines.Skip(1).Select(l => l.Split(','))]);
    }

    public static double Number(string s) => double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture);

    /// <summary>Groups a numeric column by a label column, levels in order of first appearance.</summary>
    public static (string[] Levels, double[][] Groups) GroupBy(string[][] rows, int labelColumn, int valueColumn)
    {
        var levels = new List<string>();
        var groups = new List<List<double>>();
        foreach (var r in rows)
        {
            var i = levels.IndexOf(r[labelColumn]);
            if (i < 0)
            {
                levels.Add(r[labelColumn]);
                groups.Add([]);
                i = levels.Count - 1;
            }

            groups[i].Add(Number(r[valueColumn]));
        }

        return ([.. levels], [.. groups.Select(g => g.ToArray())]);
    }
}
