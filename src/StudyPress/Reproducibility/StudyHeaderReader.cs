using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Reproducibility;

/// <summary>A study's header read on its own: the YAML map with positions, and the bound header.</summary>
public sealed class StudyHeaderFile
{
    /// <summary>The decoded study text (BOM dropped, line ends as in the file).</summary>
    public required string Text { get; init; }

    /// <summary>True when the file started with a UTF-8 byte-order mark.</summary>
    public required bool HasBom { get; init; }

    public required byte[] Bytes { get; init; }

    public required YMapping Map { get; init; }

    public required StudyHeader Header { get; init; }
}

/// <summary>
/// Reads only the header of a study (no Markdown body, no data, no analysis), for the build
/// cache, the watcher, pinning and verification: which inputs a study has and where they are
/// written. Positions are the same as the compiler's (zero-based line and column in characters).
/// </summary>
public static class StudyHeaderReader
{
    public static StudyHeaderFile? Read(string studyPath, DiagnosticBag diagnostics)
    {
        byte[] bytes;
        try
        {
            bytes = File.ReadAllBytes(studyPath);
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            diagnostics.FileNotFound(SourceLocation.None(studyPath), "study file", studyPath);
            return null;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            diagnostics.FileUnreadable(SourceLocation.None(studyPath), studyPath, e.Message);
            return null;
        }

        return Read(studyPath, bytes, diagnostics);
    }

    public static StudyHeaderFile? Read(string studyPath, byte[] bytes, DiagnosticBag diagnostics)
    {
        var text = TextDecoding.Decode(bytes, studyPath, diagnostics);
        if (text is null)
        {
            return null;
        }

        // The same split as the parser's, so positions agree (a lone CR ends a line too).
        if (HeaderSplit.Find(HeaderSplit.NormaliseLineEnds(text), studyPath, diagnostics) is not var (lines, end))
        {
            return null;
        }

        var node = YamlReader.Read(string.Join('\n', lines[1..end]), studyPath, 1, 0, diagnostics);
        if (diagnostics.HasErrors)
        {
            return null;
        }

        YMapping map;
        if (node is YMapping m)
        {
            map = m;
        }
        else if (node is null)
        {
            map = new YMapping([], new SourceLocation(studyPath, 1, 0));
        }
        else
        {
            diagnostics.ExpectedMapping(node.Location, "the header");
            return null;
        }

        var header = HeaderBinder.Bind(map, studyPath, diagnostics);
        if (diagnostics.HasErrors)
        {
            return null;
        }

        return new StudyHeaderFile
        {
            Text = text,
            HasBom = bytes.Length >= 3 && bytes[0] == 0xEF && bytes[1] == 0xBB && bytes[2] == 0xBF,
            Bytes = bytes,
            Map = map,
            Header = header,
        };
    }

    /// <summary>Full paths of the study's input files, in header order.</summary>
    public static IReadOnlyList<string> InputPaths(string studyPath, StudyHeader header)
    {
        var dir = Path.GetDirectoryName(Path.GetFullPath(studyPath))!;
        return [.. header.Datasets.Select(d => Path.GetFullPath(Path.Combine(dir, d.Path)))];
    }
}
