using System.Globalization;
using System.Numerics;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Data.Sources;

/// <summary>
/// Turns a <see cref="SourceTable"/> into a <see cref="LoadedDataset"/> with the same column
/// records the CSV reader makes: numbers held exactly as decimals when the source gives integers,
/// decimals or decimal text (binary doubles as the shortest decimal text that round-trips), centred
/// by their exact mean; factor levels in the same order and with the same declared-level checks.
/// Dates become a sortable number (days since 1970-01-01, with the time as a fraction).
/// </summary>
public static class TableColumns
{
    private static readonly DateTime Epoch = new(1970, 1, 1, 0, 0, 0, DateTimeKind.Unspecified);

    /// <param name="unknownColumn">Reports a column the study asks for that the table lacks.</param>
    public static LoadedDataset? Build(
        DatasetSpec spec,
        SourceTable table,
        string sha256,
        DatasetNeeds needs,
        DiagnosticBag diagnostics,
        Action<SourceLocation, string, string?> unknownColumn,
        SourceLocation emptyAt)
    {
        var errorsBefore = diagnostics.Items.Count;
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var i = 0; i < table.Names.Count; i++)
        {
            index.TryAdd(table.Names[i], i);
        }

        foreach (var (col, at) in needs.Numeric)
        {
            if (!index.ContainsKey(col))
            {
                unknownColumn(at, col, DiagnosticBag.Nearest(col, index.Keys));
            }
        }

        foreach (var (_, (f, at)) in needs.Factors)
        {
            if (!index.ContainsKey(f.Column))
            {
                unknownColumn(at, f.Column, DiagnosticBag.Nearest(f.Column, index.Keys));
            }
        }

        if (diagnostics.Items.Count > errorsBefore)
        {
            return null;
        }

        var rows = table.Rows.Count;
        if (rows == 0)
        {
            diagnostics.QueryNoRows(emptyAt, spec.Name);
            return null;
        }

        var missing = new HashSet<string>(spec.Missing, StringComparer.Ordinal);
        var numeric = new Dictionary<string, NumericColumn>(StringComparer.Ordinal);
        var binary = new List<string>();
        foreach (var name in needs.Numeric.Keys)
        {
            var c = index[name];
            var exact = new decimal[rows];
            var approx = new double[rows];
            var isMissing = new bool[rows];
            var allExact = true;
            var sawDouble = false;
            for (var r = 0; r < rows; r++)
            {
                var v = table.Rows[r][c];
                if (!ReadNumber(v, spec.Decimal, missing, name == needs.Order, out exact[r], out approx[r], out var isExact, out var isDouble, out var problem))
                {
                    Report(problem, v);
                    isMissing[r] = true;
                    continue;
                }

                if (problem == Problem.Missing)
                {
                    isMissing[r] = true;
                    continue;
                }

                allExact &= isExact;
                sawDouble |= isDouble;

                void Report(Problem p, object? value)
                {
                    var text = (p == Problem.TooSmall && value is SheetNumber sn ? sn.Text : Text(value)) ?? string.Empty;
                    if (value is SheetError)
                    {
                        diagnostics.CellError(table.At(r, c), text, name, table.Where(r, c));
                    }
                    else if (p == Problem.TooSmall)
                    {
                        diagnostics.ValueTooSmall(table.At(r, c), text, name, table.Where(r, c));
                    }
                    else if (p == Problem.NotFinite)
                    {
                        diagnostics.ValueNotFinite(table.At(r, c), text, name, table.Where(r, c));
                    }
                    else
                    {
                        diagnostics.ValueNotNumeric(table.At(r, c), text, name, table.Where(r, c));
                    }
                }
            }

            if (sawDouble)
            {
                binary.Add(name);
            }

            numeric[name] = allExact ? CentreDecimals(name, exact, isMissing) : CentreDoubles(name, approx, isMissing);
        }

        var factors = new Dictionary<string, CategoricalColumn>(StringComparer.Ordinal);
        foreach (var (f, _) in needs.Factors.Values)
        {
            var c = index[f.Column];
            var text = new string?[rows];
            var distinct = new HashSet<string>(StringComparer.Ordinal);
            var strays = new Dictionary<string, LevelRules.Stray>(StringComparer.Ordinal);
            var present = new HashSet<int>();
            for (var r = 0; r < rows; r++)
            {
                var t = Text(table.Rows[r][c])?.Trim();
                if (t is null || missing.Contains(t))
                {
                    continue;
                }

                if (!LevelText.CheckUtf8(table.Rows[r][c], f.Column, table.At(r, c), table.Where(r, c), diagnostics))
                {
                    continue;
                }

                // Compared in NFC (LevelText), so canonically equal spellings are one level.
                _ = LevelText.Check(t, table.At(r, c), f.Name, diagnostics);
                t = LevelText.Normal(t);
                if (distinct.Add(t) && distinct.Count > DataLimits.MaxLevelsPerFactor)
                {
                    diagnostics.TooManyLevels(table.At(r, c), f.Name, f.Column, DataLimits.MaxLevelsPerFactor);
                    return null;
                }

                text[r] = t;
                if (f.Levels is { } declared)
                {
                    var k = LevelRules.IndexOf(declared, t);
                    if (k >= 0)
                    {
                        present.Add(k);
                    }
                    else if (strays.TryGetValue(t, out var stray))
                    {
                        stray.Count++;
                    }
                    else
                    {
                        strays[t] = new LevelRules.Stray(t, table.At(r, c));
                    }
                }
            }

            if (strays.Count > 0)
            {
                LevelRules.Report(f, strays.Values, present, diagnostics);
                continue;
            }

            var levels = f.Levels ?? CsvLoader.OrderLevels(text.Where(t => t is not null).Select(t => t!).Distinct(StringComparer.Ordinal));
            var lookup = levels.Select((l, k) => (l, k)).ToDictionary(p => p.l, p => p.k, StringComparer.Ordinal);
            var codes = text.Select(t => t is null ? -1 : lookup.TryGetValue(t, out var k) ? k : LevelRules.IndexOf(levels, t)).ToArray();
            var counts = new int[levels.Count];
            foreach (var code in codes.Where(code => code >= 0))
            {
                counts[code]++;
            }

            for (var k = 0; k < levels.Count; k++)
            {
                if (counts[k] == 0)
                {
                    diagnostics.AbsentLevel(f.LevelLocations.Count > k ? f.LevelLocations[k] : f.Location, levels[k], f.Name, spec.Path);
                }
            }

            factors[f.Name] = new CategoricalColumn(f.Column, codes, levels, counts);
        }

        if (diagnostics.Items.Count > errorsBefore)
        {
            return null;
        }

        return new LoadedDataset
        {
            Spec = spec,
            Path = spec.Path.Replace('\\', '/'),
            Sha256 = sha256,
            Rows = rows,
            Lines = table.Lines,
            ColumnNames = table.Names,
            Numeric = numeric,
            Factors = factors,
            Order = needs.Order is { } o ? numeric[o] : null,
            Used = new bool[rows],
            SourceNote = binary.Count == 0 ? null : BinaryNote(table.SourceWords, binary),
        };
    }

    /// <summary>The report's note for a dataset whose numbers came as binary floating point.</summary>
    public static string BinaryNote(string sourceWords, IReadOnlyList<string> columns) =>
        $"{sourceWords} held binary doubles in {StudyPress.Charts.NumberText.Noun(columns.Count, "column")} {string.Join(", ", columns.Select(c => "'" + c + "'"))}: each value was read as the shortest decimal text that gives back the same double, so no more than about 15–17 significant digits were ever stored.";

    internal enum Problem
    {
        None,
        Missing,
        NotNumber,
        NotFinite,

        /// <summary>Not zero, but nearer to 0 than ±1e-300 (NumberRules.MinMagnitude).</summary>
        TooSmall,
    }

    /// <summary>Reads one cell as a number; false with a problem for a cell that is not one.</summary>
    internal static bool ReadNumber(object? v, char decimalMark, HashSet<string> missing, bool dates, out decimal exact, out double approx, out bool isExact, out bool isDouble, out Problem problem)
    {
        exact = 0;
        approx = 0;
        isExact = true;
        isDouble = false;
        problem = Problem.None;
        switch (v)
        {
            case null or DBNull:
                problem = Problem.Missing;
                return true;
            case long or int or short or sbyte or byte or ushort or uint or ulong:
                exact = Convert.ToDecimal(v, CultureInfo.InvariantCulture);
                approx = (double)exact;
                return true;
            case decimal d:
                exact = d;
                approx = (double)d;
                return true;
            case BigInteger big:
                if (big >= (BigInteger)decimal.MinValue && big <= (BigInteger)decimal.MaxValue)
                {
                    exact = (decimal)big;
                    approx = (double)exact;
                    return true;
                }

                isExact = false;
                approx = (double)big;
                return true;
            case double or float:
                {
                    var x = Convert.ToDouble(v, CultureInfo.InvariantCulture);
                    isDouble = true;
                    if (!double.IsFinite(x))
                    {
                        problem = Problem.NotFinite;
                        return false;
                    }

                    approx = x;
                    var shortest = v is float f ? f.ToString("R", CultureInfo.InvariantCulture) : x.ToString("R", CultureInfo.InvariantCulture);
                    isExact = TryDecimal(shortest, out exact) && (exact != 0 || x == 0);
                    if (isExact)
                    {
                        approx = double.Parse(shortest, NumberStyles.Float, CultureInfo.InvariantCulture);
                    }

                    return true;
                }

            case SheetNumber n:
                {
                    isDouble = true;
                    if (!double.TryParse(n.Text, NumberStyles.Float, CultureInfo.InvariantCulture, out approx) || !double.IsFinite(approx))
                    {
                        problem = Problem.NotNumber;
                        return false;
                    }

                    if (NumberRules.IsUnderflow(n.Text, approx))
                    {
                        problem = Problem.TooSmall;
                        return false;
                    }

                    isExact = TryDecimal(n.Text, out exact) && (exact != 0 || approx == 0);
                    return true;
                }

            case DateTime dt:
                exact = (decimal)(dt.Ticks - Epoch.Ticks) / TimeSpan.TicksPerDay;
                approx = (double)exact;
                return true;
            case DateOnly day:
                exact = day.DayNumber - DateOnly.FromDateTime(Epoch).DayNumber;
                approx = (double)exact;
                return true;
            case DateTimeOffset dto:
                exact = (decimal)(dto.UtcTicks - Epoch.Ticks) / TimeSpan.TicksPerDay;
                approx = (double)exact;
                return true;
            case string s:
                return ReadText(s.Trim(), decimalMark, missing, dates, out exact, out approx, out isExact, out problem);
            case SheetError:
                problem = Problem.NotNumber;
                return false;
            default:
                problem = Problem.NotNumber;
                return false;
        }
    }

    private static bool ReadText(string t, char decimalMark, HashSet<string> missing, bool dates, out decimal exact, out double approx, out bool isExact, out Problem problem)
    {
        exact = 0;
        approx = 0;
        isExact = true;
        problem = Problem.None;
        if (missing.Contains(t))
        {
            problem = Problem.Missing;
            return true;
        }

        // The CSV reader's rules (NumberRules); a decimal-comma hint is not given for table cells.
        if (NumberRules.Parse(t, decimalMark, out exact, out approx, out var rule))
        {
            isExact = exact != 0 || approx == 0;
            return true;
        }

        if (rule is NumberProblem.TooSmall)
        {
            problem = Problem.TooSmall;
            return false;
        }

        if (rule is NumberProblem.NotFinite or NumberProblem.TooLarge)
        {
            problem = Problem.NotFinite;
            return false;
        }

        if (dates && TryDate(t, out exact))
        {
            approx = (double)exact;
            return true;
        }

        problem = Problem.NotNumber;
        return false;
    }

    /// <summary>ISO 8601 date or date-time text as days since 1970-01-01.</summary>
    internal static bool TryDate(string t, out decimal days)
    {
        days = 0;
        string[] formats = ["yyyy-MM-dd", "yyyy-MM-dd'T'HH:mm", "yyyy-MM-dd'T'HH:mm:ss", "yyyy-MM-dd'T'HH:mm:ss.FFFFFFF", "yyyy-MM-dd HH:mm", "yyyy-MM-dd HH:mm:ss", "yyyy-MM-dd HH:mm:ss.FFFFFFF"];
        if (DateTime.TryParseExact(t, formats, CultureInfo.InvariantCulture, DateTimeStyles.None, out var dt))
        {
            days = (decimal)(dt.Ticks - Epoch.Ticks) / TimeSpan.TicksPerDay;
            return true;
        }

        return false;
    }

    private static bool TryDecimal(string text, out decimal value) =>
        decimal.TryParse(text, NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent, CultureInfo.InvariantCulture, out value);

    /// <summary>A cell as text, for factor levels and messages; null for a missing cell.</summary>
    public static string? Text(object? v) => v switch
    {
        null or DBNull => null,
        string s => s,
        SheetNumber n => NormaliseSheetNumber(n.Text),
        SheetError e => e.Text,
        double d => d.ToString("R", CultureInfo.InvariantCulture),
        float f => f.ToString("R", CultureInfo.InvariantCulture),
        decimal m => m.ToString(CultureInfo.InvariantCulture),
        bool b => b ? "true" : "false",
        DateOnly day => day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture),
        DateTime dt => dt.TimeOfDay == TimeSpan.Zero ? dt.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) : dt.ToString("yyyy-MM-dd'T'HH:mm:ss.FFFFFFF", CultureInfo.InvariantCulture),
        IFormattable x => x.ToString(null, CultureInfo.InvariantCulture),
        _ => v.ToString(),
    };

    /// <summary>Spreadsheet number text as a level: "2" stays "2", "1E-3" becomes "0.001".</summary>
    private static string NormaliseSheetNumber(string text) =>
        text.Contains('E', StringComparison.OrdinalIgnoreCase) && TryDecimal(text, out var d) ? d.ToString(CultureInfo.InvariantCulture) : text;

    // The centring is the CSV reader's (NumberRules), so that the same numbers give the same columns.
    private static NumericColumn CentreDecimals(string name, decimal[] values, bool[] missing) => Centring.CentreDecimals(name, values, missing);

    private static NumericColumn CentreDoubles(string name, double[] approx, bool[] missing) =>
        Centring.CentreDoubles(name, [.. approx.Select((v, i) => missing[i] ? double.NaN : v)]);
}
