using System.Globalization;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>Loads the reference data used by the factorial ANOVA tests and builds inputs from them.</summary>
internal static class FactorialTestData
{
    /// <summary>Centre subtracted (exactly, in decimal) from the JAHANMI2 strengths, as the compiler does.</summary>
    public const decimal JahanmiCentre = 650m;

    private static readonly Lazy<Table> JahanmiTable = new(() => Table.Read(ReferenceFiles.PathOf("nist-ehandbook", "jahanmi2.csv")));

    private static readonly Lazy<Table> PoisonsTable = new(() => Table.Read(ReferenceFiles.PathOf("box-cox-poisons", "poisons.csv")));

    public static Table Jahanmi => JahanmiTable.Value;

    public static Table Poisons => PoisonsTable.Value;

    /// <summary>A factor from a column; levels sorted ordinally (so "-1" comes before "1").</summary>
    public static FactorColumn Factor(string name, IReadOnlyList<string> values)
    {
        var levels = values.Distinct().OrderBy(v => v, StringComparer.Ordinal).ToList();
        var codes = values.Select(v => levels.IndexOf(v)).ToArray();
        return new FactorColumn(name, codes, levels);
    }

    /// <summary>Centred response: (double)(value - centre), the subtraction done in decimal.</summary>
    public static double[] Centred(IEnumerable<string> values, decimal centre) =>
        [.. values.Select(v => (double)(decimal.Parse(v, NumberStyles.Float, CultureInfo.InvariantCulture) - centre))];

    /// <summary>JAHANMI2 strength (centred at 650) on the named factor columns, for the rows kept.</summary>
    public static AnovaInput JahanmiInput(
        IReadOnlyList<string> factorColumns,
        bool interactions,
        SumOfSquaresType type,
        Func<int, bool>? keepRow = null)
    {
        var t = Jahanmi;
        var rows = Enumerable.Range(0, t.RowCount).Where(i => keepRow?.Invoke(i) ?? true).ToArray();
        var y = Centred(rows.Select(i => t["strength"][i]), JahanmiCentre);
        var factors = factorColumns.Select(c => Factor(c, [.. rows.Select(i => t[c][i])])).ToList();
        return new AnovaInput(y, factors, interactions, type, 0.05);
    }

    /// <summary>
    /// A deterministic unbalanced subset of JAHANMI2: every row is kept except some rows of chosen
    /// cells of (table speed, batch), so that the cell counts differ strongly (120, 84, 90, 40).
    /// </summary>
    public static bool UnbalancedRow(int i)
    {
        var t = Jahanmi;
        var ts = t["table_speed_x1"][i];
        var b = t["batch"][i];
        var id = int.Parse(t["id"][i], CultureInfo.InvariantCulture);
        return (ts, b) switch
        {
            ("-1", "2") => id % 12 < 7,   // keep 7 of 12
            ("1", "1") => id % 24 < 19,   // keep 19 of 24
            ("1", "2") => id % 3 == 0,    // keep 1 of 3
            _ => true,
        };
    }

    public static AnovaInput With(this AnovaInput input, SumOfSquaresType type) => input with { SsType = type };

    /// <summary>A CSV table of strings.</summary>
    public sealed class Table
    {
        private readonly Dictionary<string, string[]> _columns;

        private Table(Dictionary<string, string[]> columns, int rows)
        {
            _columns = columns;
            RowCount = rows;
        }

        public int RowCount { get; }

        public string[] this[string column] => _columns[column];

        public static Table Read(string path)
        {
            var lines = File.ReadAllLines(path).Where(l => l.Length > 0).ToArray();
            var header = lines[0].Split(',');
            var cells = lines.Skip(1).Select(l => l.Split(',')).ToArray();
            var cols = new Dictionary<string, string[]>(StringComparer.Ordinal);
            for (var c = 0; c < header.Length; c++)
            {
                cols[header[c]] = [.. cells.Select(r => r[c])];
            }

            return new Table(cols, cells.Length);
        }
    }
}
