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

    /// <summary>
    /// Columns some block uses as its response. The byte-level reader keeps only the values of the
    /// run-order column when it is not one of them (centre 0, no exact values): 16 bytes a row less.
    /// </summary>
    public HashSet<string> Responses { get; } = new(StringComparer.Ordinal);
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
        // A pinned hash is checked before anything else is reported; otherwise the hash is taken
        // on the other core while the file is parsed.
        string? sha = null;
        Task<string>? hashing = null;
        if (spec.Sha256 is { } pinned)
        {
            sha = ContentHash.Hex(bytes);
            if (pinned != sha)
            {
                diagnostics.HashMismatch(spec.ShaLocation ?? spec.PathLocation, spec.Path, pinned, sha);
                return null;
            }
        }
        else if (bytes.Length >= 1 << 20)
        {
            hashing = Task.Run(() => Convert.ToHexStringLower(SHA256.HashData(bytes)));
        }
        else
        {
            sha = ContentHash.Hex(bytes);
        }

        var errorsBefore = diagnostics.Items.Count;
        var body = Utf8Body(bytes);
        if (body is null)
        {
            // Not clean UTF-8: let the decoder report exactly what is wrong.
            _ = TextDecoding.Decode(bytes, displayPath, diagnostics);
            return null;
        }

        var file = new SourceLocation(displayPath, 0, 0);
        if (IsBlank(bytes.AsSpan(body.Value.Start, body.Value.Length)))
        {
            diagnostics.EmptyDataFile(file);
            return null;
        }

        // Plain files (no quote character, ASCII delimiter and decimal mark) are read from the bytes
        // directly; anything irregular returns null and the general reader below starts over, so
        // every message and position is the general reader's.
        LastLoadWasFast = false;
        if (!ForceGeneralPath && CsvFastPath.TryLoad(spec, bytes, body.Value.Start, body.Value.Length, needs) is { } fast)
        {
            LastLoadWasFast = true;
            return Finish(spec, fast.Rows, fast.Lines, fast.Names, fast.Numeric, fast.SeenNames, fast.Codes, needs, diagnostics, errorsBefore, sha, hashing);
        }

        // Quoting and field sizes first: a stray quote must not merge rows, and a huge field must
        // not be buffered by the parser.
        var structure = CsvStructure.Check(bytes.AsSpan(body.Value.Start, body.Value.Length), spec.Delimiter, DataLimits.MaxFieldBytes);
        if (structure.Problem != CsvStructureProblem.None)
        {
            var where = new SourceLocation(displayPath, structure.Line, structure.Column);
            switch (structure.Problem)
            {
                case CsvStructureProblem.QuoteInUnquotedField:
                    diagnostics.QuoteInUnquotedField(where);
                    break;
                case CsvStructureProblem.TextAfterClosingQuote:
                    diagnostics.TextAfterClosingQuote(where);
                    break;
                case CsvStructureProblem.UnterminatedQuote:
                    diagnostics.UnterminatedQuote(where);
                    break;
                default:
                    diagnostics.FieldTooLong(where, DataLimits.MaxFieldBytes);
                    break;
            }

            return null;
        }

        // Decode and parse in chunks from the bytes: the file is never held as one UTF-16 string.
        using var stream = new MemoryStream(bytes, body.Value.Start, body.Value.Length, writable: false);
        using var textReader = new StreamReader(stream, StrictUtf8, detectEncodingFromByteOrderMarks: false, bufferSize: 1 << 16);
        using var reader = Sep.Reader(o => o with
        {
            Sep = new Sep(spec.Delimiter),
            HasHeader = false,
            Unescape = true,
            DisableColCountCheck = true,
            DisableFastFloat = true,
        }).From(textReader);

        if (!reader.MoveNext())
        {
            diagnostics.EmptyDataFile(file);
            return null;
        }

        var headerRow = reader.Current;
        var headerLine = FirstLine(headerRow.Span);
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

        // A file separated by another character reads as one wide column: one message that names
        // the delimiter to set, not one per missing column.
        if (needs.Numeric.Keys.Concat(needs.Factors.Values.Select(v => v.Spec.Column)).Any(c => !index.ContainsKey(c))
            && LikelyDelimiter(headerLine, spec.Delimiter, needs) is { } likely)
        {
            diagnostics.WrongDelimiter(spec.PathLocation, spec.Name, spec.Delimiter, likely);
            return null;
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

        // At most one row per line after the header; arrays grow if a file has lone CR line ends.
        var bodySpan = bytes.AsSpan(body.Value.Start, body.Value.Length);
        var lineCount = bodySpan.Count((byte)'\n') + (bodySpan[^1] == (byte)'\n' ? 0 : 1);
        var capacity = Math.Max(1, lineCount - 1);
        var numericCols = needs.Numeric.Keys.Select(c => (Name: c, Index: index[c])).ToArray();
        var factorCols = needs.Factors.Values.Select(v => (v.Spec, Index: index[v.Spec.Column])).ToArray();
        var numbers = numericCols.Select(_ => new decimal[capacity]).ToArray();
        var doubles = numericCols.Select(_ => (double[]?)null).ToArray();
        var missingFlags = numericCols.Select(_ => new bool[capacity]).ToArray();
        var missingCount = new int[numericCols.Length];

        // Factor levels are interned as they are met (span-keyed lookup, no string per cell).
        var codes = factorCols.Select(_ => new int[capacity]).ToArray();
        var seen = factorCols.Select(_ => new Dictionary<string, int>(StringComparer.Ordinal)).ToArray();
        var seenLookup = seen.Select(d => d.GetAlternateLookup<ReadOnlySpan<char>>()).ToArray();
        var seenNames = factorCols.Select(_ => new List<string>()).ToArray();
        var byNormal = factorCols.Select(_ => new Dictionary<string, int>(StringComparer.Ordinal)).ToArray();
        var seenDeclared = factorCols.Select(_ => new List<bool>()).ToArray();
        var strays = factorCols.Select(_ => new Dictionary<int, LevelRules.Stray>()).ToArray();
        var cellProblems = new Dictionary<(int Column, NumberProblem Problem), List<CellProblem>>();
        CellProblem? ragged = null;
        var raggedDecimalComma = false;
        var missing = new HashSet<string>(spec.Missing, StringComparer.Ordinal).GetAlternateLookup<ReadOnlySpan<char>>();
        var rows = 0;
        var lines = new int[capacity];
        var expected = names.Count;
        while (reader.MoveNext())
        {
            var row = reader.Current;
            var line = row.LineNumberFrom - 1;
            var raw = row.Span;
            if (raw.Length == 0 || (row.ColCount == 1 && raw.Trim().Length == 0))
            {
                // A blank line (commonly the last one) is not a row.
                continue;
            }

            if (rows == capacity)
            {
                capacity *= 2;
                Array.Resize(ref lines, capacity);
                for (var c = 0; c < numericCols.Length; c++)
                {
                    Array.Resize(ref numbers[c], capacity);
                    Array.Resize(ref missingFlags[c], capacity);
                    if (doubles[c] is not null)
                    {
                        Array.Resize(ref doubles[c], capacity);
                    }
                }

                for (var c = 0; c < factorCols.Length; c++)
                {
                    Array.Resize(ref codes[c], capacity);
                }
            }

            var r = rows++;
            lines[r] = line + 1;
            if (row.ColCount != expected)
            {
                // One message per file: the first such row, with a count and, when the extra field
                // comes from decimal commas, the hint.
                if (ragged is null)
                {
                    ragged = new CellProblem(new SourceLocation(displayPath, line, 0), row.ColCount.ToString(CultureInfo.InvariantCulture), string.Empty);
                    raggedDecimalComma = spec.Decimal == '.' && spec.Delimiter == ',' && row.ColCount > expected && LooksLikeDecimalCommas(raw);
                }
                else
                {
                    ragged.Count++;
                }

                AddPlaceholders(r);
                continue;
            }

            for (var c = 0; c < numericCols.Length; c++)
            {
                var cell = row[numericCols[c].Index].Span.Trim();
                if (missing.Contains(cell))
                {
                    missingFlags[c][r] = true;
                    missingCount[c]++;
                    if (doubles[c] is { } dm)
                    {
                        dm[r] = double.NaN;
                    }

                    continue;
                }

                if (doubles[c] is null && TryParseSimple(cell, spec.Decimal, out var simple))
                {
                    numbers[c][r] = simple;
                    continue;
                }

                var cellText = cell.ToString();
                if (NumberRules.Parse(cellText, spec.Decimal, out var exact, out var approx, out var problem))
                {
                    numbers[c][r] = exact;
                    if (doubles[c] is null && exact == 0 && approx != 0)
                    {
                        // Too small for decimal: switch this column to double.
                        var switched = new double[capacity];
                        for (var k = 0; k < r; k++)
                        {
                            switched[k] = missingFlags[c][k] ? double.NaN : (double)numbers[c][k];
                        }

                        doubles[c] = switched;
                    }

                    if (doubles[c] is { } d)
                    {
                        d[r] = approx;
                    }

                    continue;
                }

                if (doubles[c] is { } dn)
                {
                    dn[r] = double.NaN;
                }

                // One message per column and kind of problem (the first cell, with a count), and the
                // decimal-comma hint once per file.
                var kindKey = problem == NumberProblem.DecimalComma ? (-1, problem) : (c, problem);
                if (!cellProblems.TryGetValue(kindKey, out var known))
                {
                    cellProblems[kindKey] = known = [];
                }

                if (known.Count <= MaxCellsListed)
                {
                    known.Add(new CellProblem(CellLocation(displayPath, line, raw, numericCols[c].Index, spec.Delimiter), cellText, numericCols[c].Name));
                }
                else
                {
                    known[0].Count++;
                }
            }

            for (var c = 0; c < factorCols.Length; c++)
            {
                var cell = row[factorCols[c].Index].Span.Trim();
                if (missing.Contains(cell))
                {
                    codes[c][r] = -1;
                    continue;
                }

                if (!seenLookup[c].TryGetValue(cell, out var code))
                {
                    // A new spelling: compared in NFC, so canonically equal spellings are one level.
                    var at = CellLocation(displayPath, line, raw, factorCols[c].Index, spec.Delimiter);
                    var text = cell.ToString();
                    _ = LevelText.Check(text, at, factorCols[c].Spec.Name, diagnostics);
                    var normal = LevelText.Normal(text);
                    if (!byNormal[c].TryGetValue(normal, out code))
                    {
                        if (seenNames[c].Count == DataLimits.MaxLevelsPerFactor)
                        {
                            diagnostics.TooManyLevels(at, factorCols[c].Spec.Name, factorCols[c].Spec.Column, DataLimits.MaxLevelsPerFactor);
                            return null;
                        }

                        code = seenNames[c].Count;
                        byNormal[c][normal] = code;
                        seenNames[c].Add(normal);
                        seenDeclared[c].Add(factorCols[c].Spec.Levels is not { } levels || LevelRules.IndexOf(levels, normal) >= 0);
                    }

                    seen[c][text] = code;
                }

                codes[c][r] = code;
                if (!seenDeclared[c][code])
                {
                    // Reported once per distinct value after the file is read.
                    if (strays[c].TryGetValue(code, out var stray))
                    {
                        stray.Count++;
                    }
                    else
                    {
                        strays[c][code] = new LevelRules.Stray(seenNames[c][code], CellLocation(displayPath, line, raw, factorCols[c].Index, spec.Delimiter));
                    }
                }
            }
        }

        void AddPlaceholders(int r)
        {
            for (var c = 0; c < numericCols.Length; c++)
            {
                numbers[c][r] = 0;
                if (doubles[c] is { } d)
                {
                    d[r] = double.NaN;
                }

                missingFlags[c][r] = true;
                missingCount[c]++;
            }

            for (var c = 0; c < factorCols.Length; c++)
            {
                codes[c][r] = -1;
            }
        }

        if (ragged is not null)
        {
            // Decimal commas make most rows too wide; one odd row is just an odd row.
            var systematic = ragged.Count >= 2 && ragged.Count * 2 >= rows;
            diagnostics.RaggedRow(ragged.At, int.Parse(ragged.Text, CultureInfo.InvariantCulture), expected, ragged.Count, raggedDecimalComma && systematic);
        }

        // A few bad cells are reported each at its place; more than that in one column is one
        // mistake (a text column, another missing-value mark): one message with a count. The
        // decimal-comma hint is given once per file.
        var problemMessages = new List<(NumberProblem Problem, CellProblem Cell)>();
        foreach (var ((_, problem), list) in cellProblems)
        {
            if (list.Count > MaxCellsListed || problem == NumberProblem.DecimalComma)
            {
                list[0].Count += list.Count - 1;
                problemMessages.Add((problem, list[0]));
            }
            else
            {
                problemMessages.AddRange(list.Select(p => (problem, p)));
            }
        }

        foreach (var (problem, p) in problemMessages.OrderBy(e => e.Cell.At.Line).ThenBy(e => e.Cell.At.Column))
        {
            switch (problem)
            {
                case NumberProblem.NotFinite:
                    diagnostics.NotFiniteNumber(p.At, p.Text, p.Column, p.Count);
                    break;
                case NumberProblem.DecimalComma:
                    diagnostics.DecimalCommaHint(p.At, p.Text, p.Column, p.Count);
                    break;
                case NumberProblem.TooLarge:
                    diagnostics.NumberOutOfRange(p.At, p.Text, p.Column, p.Count);
                    break;
                case NumberProblem.TooSmall:
                    diagnostics.NumberTooSmall(p.At, p.Text, p.Column, p.Count);
                    break;
                default:
                    diagnostics.NotNumeric(p.At, p.Text, p.Column, p.Count);
                    break;
            }
        }

        for (var c = 0; c < factorCols.Length; c++)
        {
            if (strays[c].Count > 0)
            {
                var declared = factorCols[c].Spec.Levels!;
                var present = seenNames[c].Select(t => LevelRules.IndexOf(declared, t)).Where(k => k >= 0).ToHashSet();
                LevelRules.Report(factorCols[c].Spec, strays[c].Values, present, diagnostics);
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
                ? Centring.CentreDoubles(numericCols[c].Name, Trim(d, rows))
                : Centring.CentreDecimals(numericCols[c].Name, Trim(numbers[c], rows), missingFlags[c]);
        }

        return Finish(spec, rows, Trim(lines, rows), names, numeric, seenNames, codes.Select(c => Trim(c, rows)).ToArray(), needs, diagnostics, errorsBefore, sha, hashing);
    }

    /// <summary>Test hook (this thread): always take the general reader, to compare it with the byte-level one.</summary>
    [ThreadStatic]
    internal static bool ForceGeneralPath;

    /// <summary>Test hook (this thread): whether the last load on this thread took the byte-level reader.</summary>
    [ThreadStatic]
    internal static bool LastLoadWasFast;

    /// <summary>Bad numeric cells of one kind in one column reported one by one; more make one message.</summary>
    private const int MaxCellsListed = 3;

    /// <summary>A kind of bad numeric cell in one column: the first such cell and how many there are.</summary>
    private sealed class CellProblem(SourceLocation at, string text, string column)
    {
        public SourceLocation At { get; } = at;

        public string Text { get; } = text;

        public string Column { get; } = column;

        public int Count { get; set; } = 1;
    }

    /// <summary>Whether a row's text reads like numbers written with decimal commas in a comma-separated file ("40,6").</summary>
    private static bool LooksLikeDecimalCommas(ReadOnlySpan<char> raw)
    {
        for (var i = 1; i + 1 < raw.Length; i++)
        {
            if (raw[i] == ',' && char.IsAsciiDigit(raw[i - 1]) && char.IsAsciiDigit(raw[i + 1]))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// The delimiter a file's header line was probably written with, when the declared one leaves
    /// needed columns missing and another common one yields them all; else null.
    /// </summary>
    private static char? LikelyDelimiter(ReadOnlySpan<char> headerLine, char declared, DatasetNeeds needs)
    {
        var line = headerLine.ToString();
        foreach (var candidate in new[] { ';', '\t', ',', '|' })
        {
            if (candidate == declared || !line.Contains(candidate, StringComparison.Ordinal))
            {
                continue;
            }

            var names = line.Split(candidate).Select(n => n.Trim().Trim('"').TrimStart('\uFEFF')).ToHashSet(StringComparer.Ordinal);
            if (needs.Numeric.Keys.Concat(needs.Factors.Values.Select(v => v.Spec.Column)).All(names.Contains))
            {
                return candidate;
            }
        }

        return null;
    }

    /// <summary>Final factor codes and levels, absent-level checks and the dataset.</summary>
    private static LoadedDataset? Finish(
        DatasetSpec spec,
        int rows,
        LineNumbers lines,
        List<string> names,
        Dictionary<string, NumericColumn> numeric,
        List<string>[] seenNames,
        int[][] codes,
        DatasetNeeds needs,
        DiagnosticBag diagnostics,
        int errorsBefore,
        string? sha,
        Task<string>? hashing)
    {
        var factorCols = needs.Factors.Values.Select(v => v.Spec).ToArray();
        var factors = new Dictionary<string, CategoricalColumn>(StringComparer.Ordinal);
        for (var c = 0; c < factorCols.Length; c++)
        {
            var f = factorCols[c];
            var levels = f.Levels ?? OrderLevels(seenNames[c]);
            var remap = seenNames[c].Select(t => LevelRules.IndexOf(levels, t)).ToArray();
            var final = codes[c];
            var counts = new int[levels.Count];
            for (var i = 0; i < final.Length; i++)
            {
                var code = final[i];
                if (code >= 0)
                {
                    code = remap[code];
                    final[i] = code;
                    counts[code]++;
                }
            }

            for (var k = 0; k < levels.Count; k++)
            {
                if (counts[k] == 0)
                {
                    diagnostics.AbsentLevel(f.LevelLocations.Count > k ? f.LevelLocations[k] : f.Location, levels[k], f.Name, spec.Path);
                }
            }

            factors[f.Name] = new CategoricalColumn(f.Column, final, levels, counts);
        }

        if (diagnostics.Items.Count > errorsBefore)
        {
            return null;
        }

        return new LoadedDataset
        {
            Spec = spec,
            Path = spec.Path.Replace('\\', '/'),
            Sha256 = sha ?? hashing!.GetAwaiter().GetResult(),
            Rows = rows,
            Lines = lines,
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

    private static readonly System.Text.UTF8Encoding StrictUtf8 = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

    private static T[] Trim<T>(T[] values, int n) => values.Length == n ? values : values[..n];

    /// <summary>
    /// The byte range after a UTF-8 BOM when the bytes are valid UTF-8 without NUL bytes or a
    /// UTF-16 BOM (what <see cref="TextDecoding.Decode"/> accepts); null otherwise.
    /// </summary>
    private static (int Start, int Length)? Utf8Body(byte[] bytes)
    {
        ReadOnlySpan<byte> span = bytes;
        if (span.Length >= 2 && ((span[0] == 0xFF && span[1] == 0xFE) || (span[0] == 0xFE && span[1] == 0xFF)))
        {
            return null;
        }

        var start = span.Length >= 3 && span[0] == 0xEF && span[1] == 0xBB && span[2] == 0xBF ? 3 : 0;
        span = span[start..];
        return span.Contains((byte)0) || !System.Text.Unicode.Utf8.IsValid(span) ? null : (start, span.Length);
    }

    /// <summary>True when the text is only white space (decoded only if a non-ASCII byte is met first).</summary>
    private static bool IsBlank(ReadOnlySpan<byte> utf8)
    {
        foreach (var b in utf8)
        {
            if (b is (byte)' ' or (byte)'\t' or (byte)'\n' or (byte)'\r' or 0x0B or 0x0C)
            {
                continue;
            }

            return b >= 0x80 && System.Text.Encoding.UTF8.GetString(utf8).Trim().Length == 0;
        }

        return true;
    }

    /// <summary>
    /// The common case without allocation: optional '-', 1 to 18 digits with at most one decimal
    /// mark between digits, not zero. Gives the same decimal (value and scale) as
    /// <see cref="decimal.TryParse(string, NumberStyles, IFormatProvider, out decimal)"/>; anything
    /// else returns false and goes the general way.
    /// </summary>
    private static bool TryParseSimple(ReadOnlySpan<char> s, char decimalMark, out decimal exact)
    {
        exact = 0;
        var i = 0;
        var negative = false;
        if (s.Length > 0 && s[0] == '-')
        {
            negative = true;
            i = 1;
        }

        ulong mantissa = 0;
        var digits = 0;
        var scale = -1;
        for (; i < s.Length; i++)
        {
            var ch = s[i];
            if ((uint)(ch - '0') <= 9)
            {
                mantissa = (mantissa * 10) + (uint)(ch - '0');
                digits++;
                if (scale >= 0)
                {
                    scale++;
                }
            }
            else if (ch == decimalMark && scale < 0 && digits > 0)
            {
                scale = 0;
            }
            else
            {
                return false;
            }
        }

        if (digits == 0 || digits > 18 || scale == 0 || mantissa == 0)
        {
            return false;
        }

        exact = new decimal((int)(uint)mantissa, (int)(uint)(mantissa >> 32), 0, negative, (byte)Math.Max(scale, 0));
        return true;
    }

    private static ReadOnlySpan<char> FirstLine(ReadOnlySpan<char> record)
    {
        var nl = record.IndexOf('\n');
        var line = nl < 0 ? record : record[..nl];
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
