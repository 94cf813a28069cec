using System.Globalization;
using System.Security.Cryptography;
using nietras.SeparatedValues;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Data;

/// <summary>What the study needs from one dataset: columns and who asked for them (for errors).</summary>
public sealed class DatasetNeeds
{
    public Dictionary<string, SourceLocation> Numeric { get; } = new(StringComparer.Ordinal);

    public Dictionary<string, (FactorSpec Spec, SourceLocation At)> Factors { get; } = new(StringComparer.Ordinal);

    /// <summary>The run-order column, when an analysis needs it (also listed in <see cref="Numeric"/>).</summary>
    public string? Order { get; set; }
}

/// <summary>
/// Reads a CSV/TSV file with Sep: quoted fields, doubled quotes, BOM, CRLF, the dataset's delimiter,
/// decimal mark and missing-value strings. Numeric cells are parsed as <see cref="decimal"/>
/// (exact for decimal text), centred by their exact mean, then converted to double.
/// Every bad cell is reported with its file, line and column; reading goes on so one bad cell does
/// not hide the others (up to the per-file limit of the diagnostic bag).
/// </summary>
public static class CsvLoader
{
    public static LoadedDataset? Load(DatasetSpec spec, byte[] bytes, string displayPath, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        var sha = Convert.ToHexStringLower(SHA256.HashData(bytes));
        if (spec.Sha256 is { } pinned && pinned != sha)
        {
            diagnostics.HashMismatch(spec.ShaLocation ?? spec.PathLocation, spec.Path, pinned, sha);
            return null;
        }

        var errorsBefore = diagnostics.Items.Count;
        var text = TextDecoding.Decode(bytes, displayPath, diagnostics);
        if (text is null)
        {
            return null;
        }

        var file = new SourceLocation(displayPath, 0, 0);
        if (text.Trim().Length == 0)
        {
            diagnostics.EmptyDataFile(file);
            return null;
        }

        using var reader = Sep.Reader(o => o with
        {
            Sep = new Sep(spec.Delimiter),
            HasHeader = false,
            Unescape = true,
            DisableColCountCheck = true,
            DisableFastFloat = true,
        }).FromText(text);

        var headerLine = FirstLine(text);
        if (!reader.MoveNext())
        {
            diagnostics.EmptyDataFile(file);
            return null;
        }

        var headerRow = reader.Current;
        var names = new List<string>();
        for (var i = 0; i < headerRow.ColCount; i++)
        {
            names.Add(headerRow[i].ToString().Trim().TrimStart('\uFEFF'));
        }

        var headerStarts = FieldStarts(headerLine, spec.Delimiter);
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var i = 0; i < names.Count; i++)
        {
            var at = new SourceLocation(displayPath, 0, i < headerStarts.Count ? headerStarts[i] : 0);
            if (names[i].Length == 0)
            {
                diagnostics.EmptyColumnName(at, i);
            }
            else if (index.TryGetValue(names[i], out var first))
            {
                diagnostics.DuplicateColumn(at, names[i], first);
            }
            else
            {
                index[names[i]] = i;
            }
        }

        foreach (var (col, at) in needs.Numeric)
        {
            if (!index.ContainsKey(col))
            {
                diagnostics.UnknownColumn(at, col, spec.Path, DiagnosticBag.Nearest(col, index.Keys));
            }
        }

        foreach (var (_, (f, at)) in needs.Factors)
        {
            if (!index.ContainsKey(f.Column))
            {
                diagnostics.UnknownColumn(at, f.Column, spec.Path, DiagnosticBag.Nearest(f.Column, index.Keys));
            }
        }

        if (diagnostics.Items.Count > errorsBefore)
        {
            return null;
        }

        var numericCols = needs.Numeric.Keys.Select(c => (Name: c, Index: index[c])).ToArray();
        var factorCols = needs.Factors.Values.Select(v => (v.Spec, Index: index[v.Spec.Column])).ToArray();
        var numbers = numericCols.Select(_ => new List<decimal>()).ToArray();
        var doubles = numericCols.Select(_ => (List<double>?)null).ToArray();
        var missingFlags = numericCols.Select(_ => new List<bool>()).ToArray();
        var levelText = factorCols.Select(_ => new List<string?>()).ToArray();
        var missing = new HashSet<string>(spec.Missing, StringComparer.Ordinal);
        var rows = 0;
        var lines = new List<int>();
        var expected = names.Count;
        while (reader.MoveNext())
        {
            var row = reader.Current;
            rows++;
            var line = row.LineNumberFrom - 1;
            var raw = row.Span;
            if (raw.Length == 0 || (row.ColCount == 1 && raw.Trim().Length == 0))
            {
                // A blank line (commonly the last one) is not a row.
                rows--;
                continue;
            }

            lines.Add(line + 1);
            if (UnterminatedQuote(raw, spec.Delimiter) is { } quoteAt)
            {
                diagnostics.UnterminatedQuote(new SourceLocation(displayPath, line, quoteAt));
                break;
            }

            if (row.ColCount != expected)
            {
                diagnostics.RaggedRow(new SourceLocation(displayPath, line, 0), row.ColCount, expected);
                AddPlaceholders();
                continue;
            }

            for (var c = 0; c < numericCols.Length; c++)
            {
                var cell = row[numericCols[c].Index].Span.Trim();
                var cellText = cell.ToString();
                if (missing.Contains(cellText))
                {
                    numbers[c].Add(0);
                    doubles[c]?.Add(double.NaN);
                    missingFlags[c].Add(true);
                    continue;
                }

                missingFlags[c].Add(false);
                if (ParseNumber(cellText, spec.Decimal, out var exact, out var approx, out var problem))
                {
                    numbers[c].Add(exact);
                    if (doubles[c] is null && exact == 0 && approx != 0)
                    {
                        // Too small for decimal: switch this column to double.
                        doubles[c] = [.. numbers[c].Take(numbers[c].Count - 1).Select((v, k) => missingFlags[c][k] ? double.NaN : (double)v)];
                    }

                    doubles[c]?.Add(approx);
                    continue;
                }

                numbers[c].Add(0);
                doubles[c]?.Add(double.NaN);
                var at = CellLocation(displayPath, line, raw, numericCols[c].Index, spec.Delimiter);
                switch (problem)
                {
                    case NumberProblem.NotFinite:
                        diagnostics.NotFiniteNumber(at, cellText, numericCols[c].Name);
                        break;
                    case NumberProblem.DecimalComma:
                        diagnostics.DecimalCommaHint(at, cellText, numericCols[c].Name);
                        break;
                    case NumberProblem.TooLarge:
                        diagnostics.NumberOutOfRange(at, cellText, numericCols[c].Name);
                        break;
                    default:
                        diagnostics.NotNumeric(at, cellText, numericCols[c].Name);
                        break;
                }
            }

            for (var c = 0; c < factorCols.Length; c++)
            {
                var cellText = row[factorCols[c].Index].Span.Trim().ToString();
                if (missing.Contains(cellText))
                {
                    levelText[c].Add(null);
                    continue;
                }

                levelText[c].Add(cellText);
                if (factorCols[c].Spec.Levels is { } declared && !declared.Contains(cellText))
                {
                    diagnostics.UndeclaredLevel(
                        CellLocation(displayPath, line, raw, factorCols[c].Index, spec.Delimiter),
                        cellText,
                        factorCols[c].Spec.Name,
                        DiagnosticBag.Nearest(cellText, declared));
                }
            }
        }

        void AddPlaceholders()
        {
            for (var c = 0; c < numericCols.Length; c++)
            {
                numbers[c].Add(0);
                doubles[c]?.Add(double.NaN);
                missingFlags[c].Add(true);
            }

            for (var c = 0; c < factorCols.Length; c++)
            {
                levelText[c].Add(null);
            }
        }

        if (diagnostics.Items.Count > errorsBefore)
        {
            return null;
        }

        if (rows == 0)
        {
            diagnostics.NoDataRows(file);
            return null;
        }

        var numeric = new Dictionary<string, NumericColumn>(StringComparer.Ordinal);
        for (var c = 0; c < numericCols.Length; c++)
        {
            numeric[numericCols[c].Name] = doubles[c] is { } d
                ? CentreDoubles(numericCols[c].Name, [.. d])
                : CentreDecimals(numericCols[c].Name, numbers[c], missingFlags[c]);
        }

        var factors = new Dictionary<string, CategoricalColumn>(StringComparer.Ordinal);
        for (var c = 0; c < factorCols.Length; c++)
        {
            var f = factorCols[c].Spec;
            var levels = f.Levels ?? OrderLevels(levelText[c].Where(t => t is not null).Select(t => t!).Distinct(StringComparer.Ordinal));
            var lookup = levels.Select((l, k) => (l, k)).ToDictionary(p => p.l, p => p.k, StringComparer.Ordinal);
            var codes = levelText[c].Select(t => t is null ? -1 : lookup[t]).ToArray();
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
            Sha256 = sha,
            Rows = rows,
            Lines = [.. lines],
            ColumnNames = names,
            Numeric = numeric,
            Factors = factors,
            Order = needs.Order is { } o ? numeric[o] : null,
            Used = new bool[rows],
        };
    }

    /// <summary>Numeric order when every level reads as a number, else ordinal text order.</summary>
    public static IReadOnlyList<string> OrderLevels(IEnumerable<string> levels)
    {
        var list = levels.ToList();
        var allNumeric = list.All(l => decimal.TryParse(l, NumberStyles.Float, CultureInfo.InvariantCulture, out _));
        return allNumeric
            ? [.. list.OrderBy(l => decimal.Parse(l, NumberStyles.Float, CultureInfo.InvariantCulture)).ThenBy(l => l, StringComparer.Ordinal)]
            : [.. list.OrderBy(l => l, StringComparer.Ordinal)];
    }

    private enum NumberProblem
    {
        None,
        NotNumber,
        NotFinite,
        DecimalComma,
        TooLarge,
    }

    private static bool ParseNumber(string text, char decimalMark, out decimal exact, out double approx, out NumberProblem problem)
    {
        exact = 0;
        approx = 0;
        problem = NumberProblem.None;
        var t = text;
        if (decimalMark == ',')
        {
            if (t.Contains('.', StringComparison.Ordinal))
            {
                problem = NumberProblem.NotNumber;
                return false;
            }

            t = t.Replace(',', '.');
        }

        const NumberStyles style = NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent;
        if (decimal.TryParse(t, style, CultureInfo.InvariantCulture, out exact))
        {
            approx = double.Parse(t, style, CultureInfo.InvariantCulture);
            return true;
        }

        if (double.TryParse(t, style, CultureInfo.InvariantCulture, out approx))
        {
            if (double.IsNaN(approx) || t.Any(char.IsLetter) && !t.Contains('e', StringComparison.OrdinalIgnoreCase))
            {
                problem = NumberProblem.NotFinite;
                return false;
            }

            if (double.IsFinite(approx))
            {
                // Outside decimal's range but a finite double: keep the double.
                exact = 0;
                problem = NumberProblem.None;
                approx = approx == 0 ? 0 : approx;
                if (Math.Abs(approx) > 1e300)
                {
                    problem = NumberProblem.TooLarge;
                    return false;
                }

                return true;
            }

            problem = NumberProblem.TooLarge;
            return false;
        }

        if (double.TryParse(t, NumberStyles.Float, CultureInfo.InvariantCulture, out var special) && !double.IsFinite(special))
        {
            problem = NumberProblem.NotFinite;
            return false;
        }

        var lower = t.ToLowerInvariant();
        if (lower is "nan" or "inf" or "-inf" or "+inf" or "infinity" or "-infinity" or "+infinity" or "∞" or "-∞")
        {
            problem = NumberProblem.NotFinite;
            return false;
        }

        if (decimalMark == '.' && text.Contains(',', StringComparison.Ordinal) &&
            decimal.TryParse(text.Replace(',', '.'), style, CultureInfo.InvariantCulture, out _))
        {
            problem = NumberProblem.DecimalComma;
            return false;
        }

        problem = NumberProblem.NotNumber;
        return false;
    }

    private static NumericColumn CentreDecimals(string name, List<decimal> values, List<bool> missing)
    {
        decimal sum = 0;
        var n = 0;
        try
        {
            for (var i = 0; i < values.Count; i++)
            {
                if (!missing[i])
                {
                    sum += values[i];
                    n++;
                }
            }
        }
        catch (OverflowException)
        {
            return CentreDoubles(name, [.. values.Select((v, i) => missing[i] ? double.NaN : (double)v)]);
        }

        var centre = n > 0 ? sum / n : 0m;
        var centred = new double[values.Count];
        var raw = new double[values.Count];
        for (var i = 0; i < values.Count; i++)
        {
            centred[i] = missing[i] ? double.NaN : (double)(values[i] - centre);
            raw[i] = missing[i] ? double.NaN : (double)values[i];
        }

        return new NumericColumn(name, centred, raw, (double)centre, values.Count - n, [.. values]);
    }

    private static NumericColumn CentreDoubles(string name, double[] values)
    {
        var present = values.Where(v => !double.IsNaN(v)).ToArray();
        var centre = present.Length > 0 ? StudyPress.Statistics.Groups.Mean(present) : 0;
        var centred = values.Select(v => double.IsNaN(v) ? double.NaN : v - centre).ToArray();
        return new NumericColumn(name, centred, values, centre, values.Length - present.Length, null);
    }

    private static string FirstLine(string text)
    {
        var nl = text.IndexOf('\n', StringComparison.Ordinal);
        var line = nl < 0 ? text : text[..nl];
        line = line.TrimEnd('\r');
        return line.StartsWith('\uFEFF') ? line[1..] : line;
    }

    /// <summary>Character offsets where each field of a raw record starts (quotes respected).</summary>
    internal static List<int> FieldStarts(ReadOnlySpan<char> raw, char delimiter)
    {
        var starts = new List<int> { 0 };
        var inQuote = false;
        for (var i = 0; i < raw.Length; i++)
        {
            var ch = raw[i];
            if (ch == '"')
            {
                inQuote = !inQuote;
            }
            else if (ch == delimiter && !inQuote)
            {
                starts.Add(i + 1);
            }
        }

        return starts;
    }

    private static int? UnterminatedQuote(ReadOnlySpan<char> raw, char delimiter)
    {
        var inQuote = false;
        var openedAt = -1;
        for (var i = 0; i < raw.Length; i++)
        {
            if (raw[i] != '"')
            {
                continue;
            }

            if (!inQuote)
            {
                openedAt = i;
            }

            inQuote = !inQuote;
        }

        _ = delimiter;
        return inQuote ? openedAt : null;
    }

    private static SourceLocation CellLocation(string path, int line, ReadOnlySpan<char> raw, int field, char delimiter)
    {
        var starts = FieldStarts(raw, delimiter);
        var offset = field < starts.Count ? starts[field] : 0;
        // Skip leading blanks so the column points at the cell's text.
        while (offset < raw.Length && raw[offset] == ' ')
        {
            offset++;
        }

        var before = raw[..offset];
        var newlines = before.Count('\n');
        var lastNl = before.LastIndexOf('\n');
        return new SourceLocation(path, line + newlines, lastNl < 0 ? offset : offset - lastNl - 1);
    }
}
