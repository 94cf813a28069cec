using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;

namespace StudyPress.Data;

/// <summary>
/// One rule, for every data format, for matching a cell to a factor's declared levels and for
/// reporting the cells that match none: once per distinct value (never once per cell), and at the
/// header's level list when the value is a near miss of a declared level that has no rows (the
/// typo is then in the header, or the data use another spelling: either way the header is where
/// the author looks).
/// </summary>
internal static class LevelRules
{
    /// <summary>More distinct unknown values than this are reported in one message.</summary>
    private const int MaxListed = 3;

    private const NumberStyles Numeric = NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent;

    /// <summary>A data value that is not a declared level: where it first stands and in how many rows.</summary>
    public sealed class Stray(string text, SourceLocation first)
    {
        public string Text { get; } = text;

        public SourceLocation First { get; } = first;

        public int Count { get; set; } = 1;
    }

    /// <summary>
    /// The index of the declared level a cell's text names, or -1. Text is compared exactly; when
    /// both read as decimal numbers they are compared as numbers, so a level declared as
    /// <c>120.0</c> matches a cell <c>120</c>.
    /// </summary>
    public static int IndexOf(IReadOnlyList<string> declared, string text)
    {
        for (var i = 0; i < declared.Count; i++)
        {
            if (string.Equals(declared[i], text, StringComparison.Ordinal))
            {
                return i;
            }
        }

        if (!decimal.TryParse(text, Numeric, CultureInfo.InvariantCulture, out var value))
        {
            return -1;
        }

        for (var i = 0; i < declared.Count; i++)
        {
            if (decimal.TryParse(declared[i], Numeric, CultureInfo.InvariantCulture, out var d) && d == value)
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>
    /// Reports the values of one factor that are not declared levels, one message each.
    /// <paramref name="present"/> holds the indices of declared levels that have rows.
    /// </summary>
    public static void Report(FactorSpec factor, IEnumerable<Stray> strays, IReadOnlySet<int> present, DiagnosticBag diagnostics)
    {
        var declared = factor.Levels ?? [];
        var claimed = new HashSet<int>();
        var unclaimed = new List<Stray>();
        foreach (var stray in strays)
        {
            var absent = Enumerable.Range(0, declared.Count).Where(k => !present.Contains(k) && !claimed.Contains(k)).ToList();
            if (DiagnosticBag.Nearest(stray.Text, absent.Select(k => declared[k])) is { } near)
            {
                var k = absent.First(i => declared[i] == near);
                claimed.Add(k);
                var at = factor.LevelLocations.Count > k ? factor.LevelLocations[k] : factor.Location;
                diagnostics.DeclaredLevelNotInData(at, near, factor.Name, stray.Text, stray.Count);
            }
            else
            {
                unclaimed.Add(stray);
            }
        }

        if (unclaimed.Count > MaxListed)
        {
            // Many unknown values are one mistake (a wrong column, or levels not declared yet).
            var first = unclaimed.MinBy(u => (u.First.Line, u.First.Column))!;
            diagnostics.ManyUndeclaredLevels(first.First, factor.Name, factor.Column, [.. unclaimed.Take(MaxListed).Select(u => u.Text)], unclaimed.Count);
            return;
        }

        foreach (var stray in unclaimed)
        {
            diagnostics.UndeclaredLevel(stray.First, stray.Text, factor.Name, DiagnosticBag.Nearest(stray.Text, declared), stray.Count);
        }
    }
}
