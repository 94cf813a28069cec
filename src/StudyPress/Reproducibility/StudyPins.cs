using System.Security.Cryptography;
using System.Text;
using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Diagnostics;
using StudyPress.Rendering;
using StudyPress.Syntax;

namespace StudyPress.Reproducibility;

/// <summary>
/// Writes the current SHA-256 of each input into the study header (<c>data.NAME.sha256</c>),
/// editing the text at the positions the YAML reader recorded, so every other byte of the study
/// file stays as it was (comments, quoting, order, line ends, a byte-order mark). A shorthand
/// entry (<c>data: file.csv</c> or <c>name: file.csv</c>) is rewritten into the map form with
/// <c>path</c> and <c>sha256</c> at the indentation of its neighbours.
/// </summary>
public static class StudyPins
{
    private const int DefaultIndentStep = 2;

    /// <summary>Pins the study's inputs and writes the study file atomically when anything changed.</summary>
    /// <returns>Null after an error (reported); else whether the file was rewritten.</returns>
    public static bool? PinFile(string studyPath, bool allowOutside, DiagnosticBag diagnostics)
    {
        var file = StudyHeaderReader.Read(studyPath, diagnostics);
        if (file is null)
        {
            return null;
        }

        var pinned = Pin(studyPath, file, allowOutside, diagnostics);
        if (pinned is null)
        {
            return null;
        }

        if (pinned.AsSpan().SequenceEqual(file.Bytes))
        {
            return false;
        }

        AtomicFile.Write(studyPath, pinned);
        return true;
    }

    /// <summary>The study file's bytes with every input pinned to its current hash; null after an error.</summary>
    public static byte[]? Pin(string studyPath, StudyHeaderFile file, bool allowOutside, DiagnosticBag diagnostics)
    {
        var studyDir = Path.GetDirectoryName(Path.GetFullPath(studyPath))!;
        var hashes = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var spec in file.Header.Datasets)
        {
            if (spec.Format == Binding.DataFormat.Postgres)
            {
                continue; // a server has no file to pin
            }

            if (Hash(studyDir, spec, allowOutside, diagnostics) is { } h)
            {
                hashes[spec.Name] = h;
            }
        }

        if (diagnostics.HasErrors)
        {
            return null;
        }

        var text = file.Text;
        var editor = new TextEditor(text);
        var eol = text.Contains("\r\n", StringComparison.Ordinal) ? "\r\n" : text.Contains('\r', StringComparison.Ordinal) ? "\r" : "\n";
        var top = file.Map;
        var dataEntry = top.Entries.First(e => e.Key.Value == "data");
        var topFlow = editor.IsFlow(top);
        switch (dataEntry.Value)
        {
            case YScalar single:
                // 'data: file.csv' is one dataset named 'data'.
                Shorthand(editor, dataEntry, single, "data", hashes["data"], topFlow, [dataEntry.Key.Location.Column + DefaultIndentStep, dataEntry.Key.Location.Column + (2 * DefaultIndentStep)], eol, studyPath, diagnostics, wrapName: "data");
                break;
            case YMapping dm:
                var flow = topFlow || editor.IsFlow(dm);
                foreach (var e in dm.Entries)
                {
                    if (!hashes.TryGetValue(e.Key.Value, out var hash))
                    {
                        continue;
                    }

                    if (e.Value is YScalar s)
                    {
                        var step = Math.Max(1, e.Key.Location.Column - dataEntry.Key.Location.Column);
                        Shorthand(editor, e, s, e.Key.Value, hash, flow, [e.Key.Location.Column + step], eol, studyPath, diagnostics, wrapName: null);
                    }
                    else if (e.Value is YMapping m)
                    {
                        MapForm(editor, m, hash, flow || editor.IsFlow(m), eol, studyPath, diagnostics);
                    }
                }

                break;
        }

        if (diagnostics.HasErrors)
        {
            return null;
        }

        var result = Encoding.UTF8.GetBytes(editor.Apply());
        result = file.HasBom ? [0xEF, 0xBB, 0xBF, .. result] : result;

        // Read the edited header back: it must declare the same datasets, now pinned.
        var check = new DiagnosticBag();
        var reread = StudyHeaderReader.Read(studyPath, result, check);
        var same = reread is not null &&
            reread.Header.Datasets.Count == file.Header.Datasets.Count &&
            reread.Header.Datasets.Zip(file.Header.Datasets).All(p =>
                p.First.Name == p.Second.Name && p.First.Path == p.Second.Path && p.First.Sha256 == hashes.GetValueOrDefault(p.First.Name) &&
                p.First.Delimiter == p.Second.Delimiter && p.First.Decimal == p.Second.Decimal && p.First.Missing.SequenceEqual(p.Second.Missing));
        if (!same)
        {
            diagnostics.CannotPin(dataEntry.Key.Location, "data", "the header layout is not one this version can edit safely");
            return null;
        }

        return result;
    }

    private static string? Hash(string studyDir, DatasetSpec spec, bool allowOutside, DiagnosticBag diagnostics)
    {
        // The same real, regular file the build reads (never a pipe or device, which would block or never end).
        if (PathGuard.Locate(studyDir, spec, allowOutside, diagnostics) is not { } real)
        {
            return null;
        }

        try
        {
            using var stream = File.OpenRead(real);
            return Convert.ToHexStringLower(SHA256.HashData(stream));
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            diagnostics.FileNotFound(spec.PathLocation, "data file", spec.Path);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            diagnostics.FileUnreadable(spec.PathLocation, spec.Path, e.Message);
        }

        return null;
    }

    /// <summary>
    /// <c>name: file.csv</c> becomes <c>name:</c> / <c>  path: file.csv</c> / <c>  sha256: …</c>
    /// (block form) or <c>name: {path: file.csv, sha256: …}</c> inside a flow map.
    /// </summary>
    private static void Shorthand(TextEditor editor, YEntry entry, YScalar value, string name, string hash, bool flow, int[] indents, string eol, string studyPath, DiagnosticBag diagnostics, string? wrapName)
    {
        var raw = editor.ScalarToken(value, flow);
        if (raw is null)
        {
            diagnostics.CannotPin(value.Location, name, "its path is not written on one line");
            return;
        }

        var (line, start, end) = raw.Value;
        var token = editor.Line(line)[start..end];
        if (flow)
        {
            var inner = "{path: " + token + ", sha256: " + hash + "}";
            editor.Replace(line, start, line, end, wrapName is null ? inner : "{" + wrapName + ": " + inner + "}");
            return;
        }

        var colon = editor.ColonAfterKey(entry.Key);
        if (colon is null)
        {
            diagnostics.CannotPin(entry.Key.Location, name, "the ':' after its name was not found");
            return;
        }

        var pad = new string(' ', indents[^1]);
        var replacement = new StringBuilder();
        if (wrapName is not null)
        {
            replacement.Append(eol).Append(' ', indents[0]).Append(wrapName).Append(':');
        }

        replacement.Append(eol).Append(pad).Append("path: ").Append(token);
        editor.Replace(entry.Key.Location.Line, colon.Value + 1, line, end, replacement.ToString());
        editor.InsertLineAfter(line, pad + "sha256: " + hash, eol);
    }

    private static void MapForm(TextEditor editor, YMapping map, string hash, bool flow, string eol, string studyPath, DiagnosticBag diagnostics)
    {
        if (map.Entries.FirstOrDefault(e => e.Key.Value == "sha256") is { } shaEntry)
        {
            if (shaEntry.Value is YScalar { Value: var old } s && editor.ScalarToken(s, flow) is var (l, a, b))
            {
                if (old != hash)
                {
                    editor.Replace(l, a, l, b, hash);
                }

                return;
            }

            diagnostics.CannotPin(shaEntry.Value.Location, "sha256", "its value is not a single value on one line");
            return;
        }

        var pathEntry = map.Entries.First(e => e.Key.Value == "path");
        if (pathEntry.Value is not YScalar pathValue || editor.ScalarToken(pathValue, flow) is not var (line, _, end))
        {
            diagnostics.CannotPin(pathEntry.Value.Location, "path", "its value is not written on one line");
            return;
        }

        if (flow)
        {
            editor.Replace(line, end, line, end, ", sha256: " + hash);
        }
        else
        {
            editor.InsertLineAfter(line, new string(' ', pathEntry.Key.Location.Column) + "sha256: " + hash, eol);
        }
    }

    /// <summary>Edits by (line, column) positions of the original text, applied together at the end.</summary>
    private sealed class TextEditor
    {
        private readonly string text;
        private readonly List<int> lineStarts = [0];
        private readonly List<(int Start, int End, string Text)> edits = [];

        public TextEditor(string text)
        {
            this.text = text;
            for (var i = 0; i < text.Length; i++)
            {
                // LF, CRLF and a lone CR each end a line, as in the parser.
                if (text[i] == '\n' || (text[i] == '\r' && (i + 1 == text.Length || text[i + 1] != '\n')))
                {
                    lineStarts.Add(i + 1);
                }
            }
        }

        /// <summary>A line without its line end.</summary>
        public string Line(int line)
        {
            var start = lineStarts[line];
            var end = line + 1 < lineStarts.Count ? lineStarts[line + 1] - 1 : text.Length;
            return text[start..end].TrimEnd('\r');
        }

        public bool IsFlow(YNode node)
        {
            var l = Line(node.Location.Line);
            return node.Location.Column < l.Length && l[node.Location.Column] is '{';
        }

        public void Replace(int line, int col, int endLine, int endCol, string replacement) =>
            edits.Add((lineStarts[line] + col, lineStarts[endLine] + endCol, replacement));

        public void InsertLineAfter(int line, string content, string eol)
        {
            var at = line + 1 < lineStarts.Count ? lineStarts[line + 1] : text.Length;
            edits.Add((at, at, content + eol));
        }

        /// <summary>The column of the ':' that ends a mapping key, or null.</summary>
        public int? ColonAfterKey(YScalar key)
        {
            var l = Line(key.Location.Line);
            var end = key.Quoted ? QuotedEnd(l, key.Location.Column) : key.Location.Column + key.Value.Length;
            if (end < 0)
            {
                return null;
            }

            while (end < l.Length && l[end] is ' ' or '\t')
            {
                end++;
            }

            return end < l.Length && l[end] == ':' ? end : null;
        }

        /// <summary>
        /// Where a scalar's source text lies, when it is written on one line and reads back as its
        /// value (plain scalars) or is closed on that line (quoted ones).
        /// </summary>
        public (int Line, int Start, int End)? ScalarToken(YScalar scalar, bool flow)
        {
            var line = scalar.Location.Line;
            var l = Line(line);
            var start = scalar.Location.Column;
            if (start > l.Length)
            {
                return null;
            }

            if (scalar.Quoted)
            {
                var q = QuotedEnd(l, start);
                return q < 0 ? null : (line, start, q);
            }

            var i = start;
            while (i < l.Length)
            {
                var c = l[i];
                if ((c == '#' && i > start && l[i - 1] is ' ' or '\t') || (flow && c is ',' or ']' or '}'))
                {
                    break;
                }

                i++;
            }

            while (i > start && l[i - 1] is ' ' or '\t')
            {
                i--;
            }

            return l[start..i] == scalar.Value ? (line, start, i) : null;
        }

        public string Apply()
        {
            var sb = new StringBuilder(text);
            foreach (var (start, end, replacement) in edits.OrderByDescending(e => e.Start))
            {
                sb.Remove(start, end - start).Insert(start, replacement);
            }

            return sb.ToString();
        }

        private static int QuotedEnd(string l, int start)
        {
            if (start >= l.Length)
            {
                return -1;
            }

            var quote = l[start];
            for (var i = start + 1; i < l.Length; i++)
            {
                if (quote == '"' && l[i] == '\\')
                {
                    i++;
                }
                else if (l[i] == quote)
                {
                    if (quote == '\'' && i + 1 < l.Length && l[i + 1] == '\'')
                    {
                        i++;
                        continue;
                    }

                    return i + 1;
                }
            }

            return -1;
        }
    }
}
