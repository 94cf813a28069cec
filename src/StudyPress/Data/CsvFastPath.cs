using System.Text;
using StudyPress.Binding;

namespace StudyPress.Data;

/// <summary>
/// The byte-level reader for plain files: no quote character, no lone CR, an ASCII delimiter and
/// decimal mark, every row with the header's number of fields, every numeric cell plain decimal
/// text (optional '-', 1 to 18 digits, at most one decimal mark between digits, no negative zero) with the same
/// number of decimals throughout a column, at most 32 levels per factor, all declared and printable
/// ASCII, no line longer than <see cref="DataLimits.MaxFieldBytes"/>. It parses
/// UTF-8 bytes directly in two chunks split at line ends (one per core), keeps numbers as scaled
/// 64-bit integers (value = m × 10^-s) and centres them with an exact integer sum. It gives the
/// same columns, bit for bit, as <see cref="CsvLoader"/>'s general reader; anything else returns
/// null and the general reader starts over (so every message and position is its own).
/// </summary>
internal static class CsvFastPath
{
    private const long MissingMark = long.MinValue;
    private const int MaxLevels = 32;

    /// <summary>Files below this size are parsed on the calling thread (docs/performance.md, "Start-up after Main (round 9)").</summary>
    private const int SmallFileBytes = 1 << 16;

    internal sealed record Result(int Rows, LineNumbers Lines, List<string> Names, Dictionary<string, NumericColumn> Numeric, List<string>[] SeenNames, int[][] Codes);

    public static Result? TryLoad(DatasetSpec spec, byte[] bytes, int start, int length, DatasetNeeds needs)
    {
        var delimiter = spec.Delimiter;
        var mark = spec.Decimal;
        if (delimiter >= 0x80 || mark >= 0x80 || delimiter == mark || delimiter is '\r' or '\n' or ' ' or '\t' or '-' || char.IsAsciiDigit(delimiter))
        {
            return null;
        }

        var body = bytes.AsSpan(start, length);
        if (HasQuoteOrLoneCr(body))
        {
            return null;
        }

        var nl = body.IndexOf((byte)'\n');
        if (nl < 0)
        {
            return null;
        }

        var headerBytes = body[..nl];
        if (headerBytes.Length > 0 && headerBytes[^1] == (byte)'\r')
        {
            headerBytes = headerBytes[..^1];
        }

        var header = Encoding.UTF8.GetString(headerBytes);
        if (header.Trim().Length == 0)
        {
            return null;
        }

        var names = new List<string>();
        foreach (var part in header.Split(delimiter))
        {
            names.Add(part.Trim().TrimStart('\uFEFF'));
        }

        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (var name in names)
        {
            if (name.Length == 0 || !index.TryAdd(name, index.Count))
            {
                return null;
            }
        }

        var numericNames = needs.Numeric.Keys.ToArray();
        var factorSpecs = needs.Factors.Values.Select(v => v.Spec).ToArray();
        if (numericNames.Any(n => !index.ContainsKey(n)) || factorSpecs.Any(f => !index.ContainsKey(f.Column)))
        {
            return null;
        }

        var expected = names.Count;
        var numericSlot = Enumerable.Repeat(-1, expected).ToArray();
        var numericOf = numericNames.Select(n => index[n]).ToArray();
        var factorOf = factorSpecs.Select(f => index[f.Column]).ToArray();
        for (var c = 0; c < numericOf.Length; c++)
        {
            numericSlot[numericOf[c]] = c;
        }

        var data = body[(nl + 1)..];

        // Two chunks split at a line end; chunk 2 writes from the row after chunk 1's lines. Each
        // byte is counted once: the line count is the two chunks' counts.
        var split = data.Length / 2;
        var cut = split < data.Length ? data[split..].IndexOf((byte)'\n') : -1;
        var firstEnd = cut < 0 ? data.Length : split + cut + 1;
        var unterminated = data.Length > 0 && data[^1] != (byte)'\n' ? 1 : 0;
        var firstLines = data[..firstEnd].Count((byte)'\n') + (firstEnd == data.Length ? unterminated : 0);
        var lineCount = firstLines + data[firstEnd..].Count((byte)'\n') + (firstEnd < data.Length ? unterminated : 0);
        if (lineCount == 0)
        {
            return null;
        }

        // Every array below is written in full for the rows it keeps (the tail past the last row,
        // left by blank lines, is cut off), so none is zeroed first. The run-order column, when no
        // block uses it as a response, is parsed straight to doubles (no scaled integers).
        var missing = spec.Missing.Select(m => Encoding.UTF8.GetBytes(m)).ToArray();
        var valuesOnly = numericNames.Select(n => n == needs.Order && !needs.Responses.Contains(n)).ToArray();
        var mantissas = numericNames.Select((_, c) => valuesOnly[c] ? null : GC.AllocateUninitializedArray<long>(lineCount)).ToArray();
        var doubles = numericNames.Select((_, c) => valuesOnly[c] ? GC.AllocateUninitializedArray<double>(lineCount) : null).ToArray();
        var codes = factorSpecs.Select(_ => GC.AllocateUninitializedArray<int>(lineCount)).ToArray();
        var job = new Job(bytes, delimiter, mark, expected, numericSlot, factorOf, missing, mantissas, doubles, codes);
        var chunks = new[]
        {
            new Chunk(start + nl + 1, firstEnd, 0, 1, numericNames.Length, factorSpecs.Length),
            new Chunk(start + nl + 1 + firstEnd, data.Length - firstEnd, firstLines, 1 + firstLines, numericNames.Length, factorSpecs.Length),
        };
        if (data.Length < SmallFileBytes)
        {
            // A small file is parsed on this thread: starting the thread pool costs more than its rows.
            chunks[0].Ok = job.Parse(chunks[0]);
            chunks[1].Ok = job.Parse(chunks[1]);
        }
        else
        {
            Parallel.For(0, chunks.Length, k => chunks[k].Ok = job.Parse(chunks[k]));
        }
        if (!chunks[0].Ok || !chunks[1].Ok)
        {
            return null;
        }

        // Rows of chunk 2 move down when chunk 1 had blank lines.
        var a = chunks[0];
        var b = chunks[1];
        var rows = a.Rows + b.Rows;
        if (rows == 0)
        {
            return null;
        }

        if (a.Rows < b.FirstRow)
        {
            foreach (var m in mantissas)
            {
                if (m is not null)
                {
                    Array.Copy(m, b.FirstRow, m, a.Rows, b.Rows);
                }
            }

            foreach (var d in doubles)
            {
                if (d is not null)
                {
                    Array.Copy(d, b.FirstRow, d, a.Rows, b.Rows);
                }
            }

            foreach (var c in codes)
            {
                Array.Copy(c, b.FirstRow, c, a.Rows, b.Rows);
            }
        }

        // Factor levels: chunk 1's in order of appearance, then chunk 2's new ones.
        var seenNames = new List<string>[factorSpecs.Length];
        var finalCodes = new int[factorSpecs.Length][];
        for (var c = 0; c < factorSpecs.Length; c++)
        {
            var seenBytes = new List<byte[]>(a.Levels[c]);
            var remap = new int[b.Levels[c].Count];
            for (var k = 0; k < remap.Length; k++)
            {
                var at = seenBytes.FindIndex(x => x.AsSpan().SequenceEqual(b.Levels[c][k]));
                if (at < 0)
                {
                    at = seenBytes.Count;
                    seenBytes.Add(b.Levels[c][k]);
                }

                remap[k] = at;
            }

            seenNames[c] = [.. seenBytes.Select(x => Encoding.UTF8.GetString(x))];
            if (factorSpecs[c].Levels is { } declared && seenNames[c].Any(t => !declared.Contains(t)))
            {
                return null;
            }

            var cc = codes[c];
            for (var i = a.Rows; i < rows; i++)
            {
                if (cc[i] >= 0)
                {
                    cc[i] = remap[cc[i]];
                }
            }

            finalCodes[c] = Trim(cc, rows);
        }

        var numeric = new Dictionary<string, NumericColumn>(StringComparer.Ordinal);
        for (var c = 0; c < numericNames.Length; c++)
        {
            var scale = a.Scale[c] >= 0 ? a.Scale[c] : Math.Max(0, b.Scale[c]);
            if (a.Scale[c] >= 0 && b.Scale[c] >= 0 && a.Scale[c] != b.Scale[c])
            {
                return null;
            }

            var name = numericNames[c];
            numeric[name] = doubles[c] is { } values
                ? ValuesOnly(name, Trim(values, rows), a.Present[c] + b.Present[c])
                : Centre(name, Trim(mantissas[c]!, rows), scale, a.Sum[c] + b.Sum[c], a.Present[c] + b.Present[c]);
        }

        return new Result(rows, Lines(rows, a.Blank, b.Blank), names, numeric, seenNames, finalCodes);
    }

    /// <summary>
    /// Row r's line from the blank lines met (in order): rows run on from line 2 (the header is
    /// line 1) and skip each blank line. Without a blank line before the last row (the common
    /// case; a trailing blank line is after it) that is line 2 + r, kept without an array.
    /// </summary>
    private static LineNumbers Lines(int rows, List<int> first, List<int> second)
    {
        if (first.Concat(second).All(line => line > rows + 1))
        {
            return LineNumbers.Sequential(2, rows);
        }

        var lines = new int[rows];
        var blanks = first.Concat(second).GetEnumerator();
        var nextBlank = blanks.MoveNext() ? blanks.Current : int.MaxValue;
        var line = 2;
        for (var r = 0; r < rows; r++, line++)
        {
            while (line == nextBlank)
            {
                line++;
                nextBlank = blanks.MoveNext() ? blanks.Current : int.MaxValue;
            }

            lines[r] = line;
        }

        return LineNumbers.From(lines);
    }

    private static T[] Trim<T>(T[] values, int n) => values.Length == n ? values : values[..n];

    /// <summary>Whether the text has a quote character or a CR not followed by LF (one pass over the bytes).</summary>
    private static bool HasQuoteOrLoneCr(ReadOnlySpan<byte> s)
    {
        var at = s.IndexOfAny((byte)'"', (byte)'\r');
        while (at >= 0)
        {
            if (s[at] == (byte)'"' || at + 1 >= s.Length || s[at + 1] != (byte)'\n')
            {
                return true;
            }

            var next = s[(at + 1)..].IndexOfAny((byte)'"', (byte)'\r');
            at = next < 0 ? -1 : at + 1 + next;
        }

        return false;
    }

    private static bool IsBlank(byte b) => b is (byte)' ' or (byte)'\t' or 0x0B or 0x0C;

    /// <summary>
    /// The general reader's centring, from scaled integers: centre = (decimal)(Σm × 10^-s) / n, and
    /// each centred value is (double)(x - centre) with the difference formed exactly, as decimal
    /// subtraction forms it; where that is not certain the decimal subtraction itself is done.
    /// Conversions to double go through <see cref="ExactValues.ToDouble(Int128, byte)"/>, the
    /// decimal conversion's own arithmetic without forming a decimal.
    /// </summary>
    private static NumericColumn Centre(string name, long[] m, int scale, Int128 sum, int n)
    {
        var s = (byte)scale;
        var centre = n > 0 ? ExactValues.Decimal(sum, s) / n : 0m;
        Span<int> bits = stackalloc int[4];
        decimal.GetBits(centre, bits);
        var cScale = (bits[3] >> 16) & 0xFF;
        var cMag = ((UInt128)(uint)bits[2] << 64) | ((UInt128)(uint)bits[1] << 32) | (uint)bits[0];
        var cSigned = bits[3] < 0 ? -(Int128)cMag : (Int128)cMag;
        var max96 = (UInt128.One << 96) - 1;

        // Both operands at the larger scale: x scaled up by 10^up, the centre by 10^cUp.
        var up = Math.Max(0, cScale - scale);
        var cUp = Math.Max(0, scale - cScale);
        var resultScale = (byte)Math.Max(scale, cScale);
        var limit = up <= 28 ? max96 / Pow10(up) : UInt128.Zero;
        var cAligned = cUp == 0 ? cSigned : cSigned * (Int128)Pow10(cUp);
        var xUp = (Int128)Pow10(up);

        var centred = GC.AllocateUninitializedArray<double>(m.Length);
        var raw = GC.AllocateUninitializedArray<double>(m.Length);
        var exact = m;
        var missing = 0;
        const int Block = 1 << 16;
        var missingByBlock = new int[(m.Length + Block - 1) / Block];
        void Fill(int blk)
        {
            var end = Math.Min(m.Length, (blk + 1) * Block);
            var miss = 0;
            for (var i = blk * Block; i < end; i++)
            {
                var v = m[i];
                if (v == MissingMark)
                {
                    centred[i] = double.NaN;
                    raw[i] = double.NaN;
                    exact[i] = 0;
                    miss++;
                    continue;
                }

                raw[i] = ExactValues.ToDouble(v, s);
                var mag = (UInt128)(v < 0 ? -(Int128)v : v);
                if (mag <= limit)
                {
                    var diff = ((Int128)v * xUp) - cAligned;
                    var dm = (UInt128)(diff < 0 ? -diff : diff);
                    if (dm <= max96 && (diff != 0 || v >= 0))
                    {
                        centred[i] = ExactValues.ToDouble(diff, resultScale);
                        continue;
                    }
                }

                centred[i] = (double)(ExactValues.Decimal(v, s) - centre);
            }

            missingByBlock[blk] = miss;
        }

        if (missingByBlock.Length == 1)
        {
            Fill(0); // one block (a small file): no thread pool
        }
        else
        {
            Parallel.For(0, missingByBlock.Length, Fill);
        }

        foreach (var k in missingByBlock)
        {
            missing += k;
        }

        return new NumericColumn(name, centred, raw, (double)centre, missing, ExactValues.Scaled(exact, scale));
    }

    /// <summary>
    /// The run-order column when no block uses it as a response: only its values are needed (the
    /// order of the observations), so it is kept with centre 0 (centred = values) and no exact values.
    /// The parse wrote each value as <see cref="ExactValues.ToDouble(long, byte)"/> of its scaled
    /// integer at the column's one scale (NaN when missing).
    /// </summary>
    private static NumericColumn ValuesOnly(string name, double[] values, int present) =>
        new(name, values, values, 0, values.Length - present, null);

    private static UInt128 Pow10(int k)
    {
        UInt128 p = 1;
        for (var i = 0; i < k; i++)
        {
            p *= 10;
        }

        return p;
    }

    private sealed class Chunk(int start, int length, int firstRow, int firstLine, int numeric, int factors)
    {
        public int Start { get; } = start;

        public int Length { get; } = length;

        public int FirstRow { get; } = firstRow;

        /// <summary>1-based line number of the chunk's first line.</summary>
        public int FirstLine { get; } = firstLine;

        public int Rows { get; set; }

        public bool Ok { get; set; }

        public int[] Scale { get; } = Enumerable.Repeat(-1, numeric).ToArray();

        public Int128[] Sum { get; } = new Int128[numeric];

        public int[] Present { get; } = new int[numeric];

        public List<byte[]>[] Levels { get; } = [.. Enumerable.Range(0, factors).Select(_ => new List<byte[]>())];

        /// <summary>1-based line numbers of the chunk's blank lines, in order.</summary>
        public List<int> Blank { get; } = [];
    }

    private sealed class Job(byte[] bytes, char delimiter, char mark, int expected, int[] numericSlot, int[] factorOf, byte[][] missing, long[]?[] mantissas, double[]?[] doubles, int[][] codes)
    {
        public bool Parse(Chunk chunk)
        {
            var text = bytes.AsSpan(chunk.Start, chunk.Length);
            var delim = (byte)delimiter;
            var dot = (byte)mark;
            var row = chunk.FirstRow;
            var lineNo = chunk.FirstLine;
            var factorCount = factorOf.Length;
            var lastHit = new int[factorCount];
            Span<int> fieldStart = stackalloc int[Math.Min(expected, 256)];
            Span<int> fieldEnd = stackalloc int[Math.Min(expected, 256)];
            if (expected > 256)
            {
                return false;
            }

            var pos = 0;
            while (pos < text.Length)
            {
                // The line's end and its fields in one pass over its bytes (positions from the
                // line's start; a CR before the LF ends the last field, never another: a lone CR
                // sent the file to the general reader).
                var lineStart = pos;
                var count = 0;
                var from = 0;
                var at = pos;
                for (; at < text.Length; at++)
                {
                    var b = text[at];
                    if (b == (byte)'\n')
                    {
                        break;
                    }

                    if (b == delim)
                    {
                        if (count == expected - 1)
                        {
                            return false;
                        }

                        fieldStart[count] = from;
                        fieldEnd[count++] = at - lineStart;
                        from = at - lineStart + 1;
                    }
                }

                var line = text[lineStart..at];
                pos = at < text.Length ? at + 1 : at;
                lineNo++;
                if (line.Length > 0 && line[^1] == (byte)'\r')
                {
                    line = line[..^1];
                }

                if (line.Length > DataLimits.MaxFieldBytes)
                {
                    return false; // a field may be too long: the general reader checks and reports
                }

                fieldStart[count] = from;
                fieldEnd[count++] = line.Length;
                if (count == 1 && AllBlank(line))
                {
                    chunk.Blank.Add(lineNo);
                    continue; // a blank line is not a row
                }

                if (count != expected)
                {
                    return false;
                }

                var r = row++;
                for (var f = 0; f < count; f++)
                {
                    var c = numericSlot[f];
                    if (c < 0)
                    {
                        continue;
                    }

                    var cell = TrimAscii(line[fieldStart[f]..fieldEnd[f]]);
                    if (IsMissing(cell))
                    {
                        if (mantissas[c] is { } mm)
                        {
                            mm[r] = MissingMark;
                        }
                        else
                        {
                            doubles[c]![r] = double.NaN;
                        }

                        continue;
                    }

                    if (!TryScaled(cell, dot, out var v, out var sc))
                    {
                        return false;
                    }

                    if (chunk.Scale[c] != sc)
                    {
                        if (chunk.Scale[c] >= 0)
                        {
                            return false;
                        }

                        chunk.Scale[c] = sc;
                    }

                    if (mantissas[c] is { } m)
                    {
                        m[r] = v;
                    }
                    else
                    {
                        doubles[c]![r] = ExactValues.ToDouble(v, (byte)sc);
                    }

                    chunk.Sum[c] += v;
                    chunk.Present[c]++;
                }

                for (var c = 0; c < factorCount; c++)
                {
                    var f = factorOf[c];
                    var cell = TrimAscii(line[fieldStart[f]..fieldEnd[f]]);
                    if (IsMissing(cell))
                    {
                        codes[c][r] = -1;
                        continue;
                    }

                    var levels = chunk.Levels[c];
                    var code = lastHit[c];
                    if (code >= levels.Count || !cell.SequenceEqual(levels[code]))
                    {
                        code = -1;
                        for (var k = 0; k < levels.Count; k++)
                        {
                            if (cell.SequenceEqual(levels[k]))
                            {
                                code = k;
                                break;
                            }
                        }

                        if (code < 0)
                        {
                            var s = Encoding.UTF8.GetString(cell);
                            if (levels.Count == MaxLevels || s.Length == 0 || s.Trim().Length != s.Length || cell.IndexOfAnyInRange((byte)0, (byte)0x1F) >= 0 || cell.IndexOfAnyInRange((byte)0x7F, (byte)0xFF) >= 0)
                            {
                                return false;
                            }

                            code = levels.Count;
                            levels.Add(cell.ToArray());
                        }

                        lastHit[c] = code;
                    }

                    codes[c][r] = code;
                }
            }

            chunk.Rows = row - chunk.FirstRow;
            return true;
        }

        private readonly bool[] missingLength = MissingLengths(missing);

        private static bool[] MissingLengths(byte[][] missing)
        {
            var lengths = new bool[65];
            foreach (var m in missing)
            {
                lengths[Math.Min(m.Length, 64)] = true;
            }

            return lengths;
        }

        private bool IsMissing(ReadOnlySpan<byte> cell)
        {
            if (!missingLength[Math.Min(cell.Length, 64)])
            {
                return false;
            }

            foreach (var m in missing)
            {
                if (cell.SequenceEqual(m))
                {
                    return true;
                }
            }

            return false;
        }

        private static bool AllBlank(ReadOnlySpan<byte> line)
        {
            foreach (var b in line)
            {
                if (!IsBlank(b))
                {
                    return false;
                }
            }

            return true;
        }

        private static ReadOnlySpan<byte> TrimAscii(ReadOnlySpan<byte> s)
        {
            var a = 0;
            var b = s.Length;
            while (a < b && IsBlank(s[a]))
            {
                a++;
            }

            while (b > a && IsBlank(s[b - 1]))
            {
                b--;
            }

            return s[a..b];
        }

        /// <summary>CsvLoader's plain decimal text: optional '-', 1 to 18 digits, one mark between digits, not a negative zero.</summary>
        private static bool TryScaled(ReadOnlySpan<byte> s, byte mark, out long value, out int scale)
        {
            value = 0;
            scale = -1;
            var i = 0;
            var negative = false;
            if (s.Length > 0 && s[0] == (byte)'-')
            {
                negative = true;
                i = 1;
            }

            long mantissa = 0;
            var digits = 0;
            for (; i < s.Length; i++)
            {
                var d = (uint)(s[i] - (byte)'0');
                if (d <= 9)
                {
                    mantissa = (mantissa * 10) + d;
                    digits++;
                    if (scale >= 0)
                    {
                        scale++;
                    }
                }
                else if (s[i] == mark && scale < 0 && digits > 0)
                {
                    scale = 0;
                }
                else
                {
                    return false;
                }

                if (digits > 18)
                {
                    return false;
                }
            }

            // Zero only without a sign (the general reader's "-0" keeps its sign bit).
            if (digits == 0 || scale == 0 || (mantissa == 0 && negative))
            {
                return false;
            }

            scale = Math.Max(scale, 0);
            value = negative ? -mantissa : mantissa;
            return true;
        }
    }
}
