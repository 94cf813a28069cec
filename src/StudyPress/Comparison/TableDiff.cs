using System.Buffers.Binary;
using System.Numerics;
using System.Runtime.InteropServices;
using System.Text;

namespace StudyPress.Comparison;

/// <summary>A data row as it appears in the file: 1-based line where it starts, and its text.</summary>
public sealed record RowExample(long Line, string Text);

/// <summary>A row whose identifier (first field) stayed while the rest changed.</summary>
public sealed record ChangedRow(long OldLine, string Old, long NewLine, string New);

/// <summary>
/// The row-multiset comparison of two delimited text files (CSV/TSV). The header line is compared
/// on its own; data rows are compared as multisets of their exact text, so reordering is no change.
/// A removed and an added row that share a first field, occurring once on each side, count as one
/// changed row.
/// </summary>
public sealed record TableChanges(
    string? OldHeader,
    string? NewHeader,
    long OldRows,
    long NewRows,
    long Added,
    long Removed,
    long Changed,
    IReadOnlyList<RowExample> AddedExamples,
    IReadOnlyList<RowExample> RemovedExamples,
    IReadOnlyList<ChangedRow> ChangedExamples)
{
    public bool HeaderChanged => !string.Equals(OldHeader, NewHeader, StringComparison.Ordinal);
}

/// <summary>
/// Compares two CSV/TSV files in bounded memory: rows are hashed (128 bits) and counted
/// per hash partition; files larger than <see cref="PartitionBytes"/> are processed in several
/// passes, each holding only the rows of one partition, so memory stays near that size whatever
/// the file size. Rows are records: a quoted field may span lines.
/// </summary>
public static class TableDiff
{
    /// <summary>Roughly how much file one pass keeps in its hash table.</summary>
    public const long PartitionBytes = 16L * 1024 * 1024;

    /// <summary>Examples kept of each kind.</summary>
    public const int Examples = 3;

    /// <summary>At most this many differing rows per side are kept to pair changed rows; beyond it, rows are only counted.</summary>
    public const int MaxPairing = 100_000;

    private const int MaxExampleChars = 200;

    public static bool IsTabular(string path) =>
        Path.GetExtension(path).ToLowerInvariant() is ".csv" or ".tsv" or ".txt" or ".tab";

    public static TableChanges Compare(string oldFile, string newFile, long partitionBytes = PartitionBytes)
    {
        var size = Math.Max(new FileInfo(oldFile).Length, new FileInfo(newFile).Length);
        var partitions = (int)Math.Clamp((size + partitionBytes - 1) / Math.Max(1, partitionBytes), 1, 4096);
        var oldHeader = Header(oldFile);
        var newHeader = Header(newFile);
        var delimiter = Delimiter(newHeader ?? oldHeader ?? string.Empty);
        long added = 0, removed = 0;
        var oldRows = new Counter();
        var newRows = new Counter();
        var removedRows = new List<RowExample>();
        var addedRows = new List<RowExample>();
        for (var p = 0; p < partitions; p++)
        {
            // Net count per row hash, + for the old file and - for the new: this partition's rows only.
            var counts = new Dictionary<UInt128, int>();
            foreach (var (_, _, h) in Rows(oldFile, p, partitions, p == 0 ? oldRows : null))
            {
                counts[h] = counts.GetValueOrDefault(h) + 1;
            }

            foreach (var (_, _, h) in Rows(newFile, p, partitions, p == 0 ? newRows : null))
            {
                counts[h] = counts.GetValueOrDefault(h) - 1;
            }

            var left = new Dictionary<UInt128, int>(counts.Where(c => c.Value > 0));
            var extra = new Dictionary<UInt128, int>(counts.Where(c => c.Value < 0).Select(c => KeyValuePair.Create(c.Key, -c.Value)));
            counts.Clear();
            counts.TrimExcess();

            // The rows left over on each side, in file order (read again only when there are any).
            if (left.Count > 0)
            {
                foreach (var (line, text, h) in Rows(oldFile, p, partitions, null))
                {
                    if (left.TryGetValue(h, out var n) && n > 0)
                    {
                        left[h] = n - 1;
                        removed++;
                        if (removedRows.Count < MaxPairing)
                        {
                            removedRows.Add(new RowExample(line, text));
                        }
                    }
                }
            }

            if (extra.Count > 0)
            {
                foreach (var (line, text, h) in Rows(newFile, p, partitions, null))
                {
                    if (extra.TryGetValue(h, out var n) && n > 0)
                    {
                        extra[h] = n - 1;
                        added++;
                        if (addedRows.Count < MaxPairing)
                        {
                            addedRows.Add(new RowExample(line, text));
                        }
                    }
                }
            }
        }

        removedRows.Sort((a, b) => a.Line.CompareTo(b.Line));
        addedRows.Sort((a, b) => a.Line.CompareTo(b.Line));
        var removedByKey = removedRows.GroupBy(r => FirstField(r.Text, delimiter), StringComparer.Ordinal).Where(g => g.Count() == 1).ToDictionary(g => g.Key, g => g.Single(), StringComparer.Ordinal);
        var addedByKey = addedRows.GroupBy(r => FirstField(r.Text, delimiter), StringComparer.Ordinal).Where(g => g.Count() == 1).ToDictionary(g => g.Key, g => g.Single(), StringComparer.Ordinal);
        var changed = new List<ChangedRow>();
        var pairedOld = new HashSet<long>();
        var pairedNew = new HashSet<long>();
        foreach (var r in removedRows)
        {
            var key = FirstField(r.Text, delimiter);
            if (key.Length > 0 && removedByKey.ContainsKey(key) && addedByKey.TryGetValue(key, out var a))
            {
                changed.Add(new ChangedRow(r.Line, Cut(r.Text), a.Line, Cut(a.Text)));
                pairedOld.Add(r.Line);
                pairedNew.Add(a.Line);
            }
        }

        return new TableChanges(
            oldHeader,
            newHeader,
            oldRows.N,
            newRows.N,
            added - changed.Count,
            removed - changed.Count,
            changed.Count,
            [.. addedRows.Where(r => !pairedNew.Contains(r.Line)).Take(Examples).Select(r => r with { Text = Cut(r.Text) })],
            [.. removedRows.Where(r => !pairedOld.Contains(r.Line)).Take(Examples).Select(r => r with { Text = Cut(r.Text) })],
            [.. changed.Take(Examples)]);
    }

    private static string Cut(string s) => s.Length <= MaxExampleChars ? s : s[..MaxExampleChars] + "…";

    private static char Delimiter(string header)
    {
        var best = ',';
        var most = header.Count(c => c == ',');
        foreach (var c in new[] { '\t', ';' })
        {
            var n = header.Count(x => x == c);
            if (n > most)
            {
                best = c;
                most = n;
            }
        }

        return best;
    }

    private static string FirstField(string row, char delimiter)
    {
        var i = row.IndexOf(delimiter, StringComparison.Ordinal);
        return (i < 0 ? row : row[..i]).Trim().Trim('"');
    }

    private static string? Header(string file)
    {
        foreach (var (_, text) in Records(file))
        {
            return text;
        }

        return null;
    }

    /// <summary>
    /// Data rows (header and empty lines skipped) whose hash falls in partition <paramref name="p"/>
    /// of <paramref name="of"/>; <paramref name="all"/>, when given, counts every data row.
    /// </summary>
    private static IEnumerable<(long Line, string Text, UInt128 Hash)> Rows(string file, int p, int of, Counter? all)
    {
        var first = true;
        foreach (var (line, text) in Records(file))
        {
            if (first)
            {
                first = false;
                continue;
            }

            if (text.Length == 0)
            {
                continue;
            }

            if (all is not null)
            {
                all.N++;
            }

            var h = Hash(text);
            if (of == 1 || (int)((ulong)(h >> 64) % (ulong)of) == p)
            {
                yield return (line, text, h);
            }
        }
    }

    /// <summary>
    /// A 128-bit hash of a row's text (two 64-bit lanes over its UTF-16 code units, each finished
    /// with the SplitMix64 mixer). Rows are compared by this hash; two different rows of one
    /// comparison sharing all 128 bits is not a practical concern.
    /// </summary>
    internal static UInt128 Hash(ReadOnlySpan<char> text)
    {
        var bytes = MemoryMarshal.AsBytes(text);
        var h1 = 0x9E3779B97F4A7C15UL ^ (ulong)bytes.Length;
        var h2 = 0xC2B2AE3D27D4EB4FUL + (ulong)bytes.Length;
        var i = 0;
        for (; i + 8 <= bytes.Length; i += 8)
        {
            var k = BinaryPrimitives.ReadUInt64LittleEndian(bytes[i..]);
            h1 = BitOperations.RotateLeft((h1 ^ k) * 0xFF51AFD7ED558CCDUL, 29);
            h2 = BitOperations.RotateLeft((h2 + k) * 0xC4CEB9FE1A85EC53UL, 31) ^ (h1 >> 7);
        }

        ulong tail = 0;
        for (; i < bytes.Length; i++)
        {
            tail = (tail << 8) | bytes[i];
        }

        h1 = Mix(h1 ^ tail ^ 0xA5A5A5A5UL);
        h2 = Mix(h2 + tail + h1);
        return new UInt128(Mix(h2 ^ h1), h1);
    }

    private static ulong Mix(ulong z)
    {
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        return z ^ (z >> 31);
    }

    private sealed class Counter
    {
        public long N { get; set; }
    }

    /// <summary>Records of a delimited file: lines, joined while a quoted field is open; BOM and line ends dropped.</summary>
    private static IEnumerable<(long Line, string Text)> Records(string file)
    {
        using var reader = new StreamReader(file, new UTF8Encoding(false), detectEncodingFromByteOrderMarks: true, bufferSize: 1 << 16);
        long lineNo = 0;
        StringBuilder? open = null;
        long start = 0;
        var quotes = 0;
        while (reader.ReadLine() is { } line)
        {
            lineNo++;
            if (open is null)
            {
                start = lineNo;
                quotes = 0;
            }
            else
            {
                open.Append('\n');
            }

            quotes += line.AsSpan().Count('"');
            if (quotes % 2 == 1)
            {
                (open ??= new StringBuilder()).Append(line);
                continue;
            }

            if (open is not null)
            {
                open.Append(line);
                yield return (start, open.ToString());
                open = null;
            }
            else
            {
                yield return (start, line);
            }
        }

        if (open is not null)
        {
            yield return (start, open.ToString());
        }
    }
}
