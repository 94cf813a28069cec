using System.Globalization;
using System.Net;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using StudyPress.Diagnostics;
using StudyPress.Reproducibility;
using StudyPress.Rendering;

namespace StudyPress.Comparison;

/// <summary>
/// Reads one side of a comparison: a report (<c>.html</c>, manifest embedded), a results
/// manifest (<c>.json</c> from <c>build --json</c>), or a study (<c>.md</c>, compiled in memory,
/// nothing written). Problems go to the diagnostic bag; the result is then null.
/// </summary>
public static partial class SnapshotReader
{
    /// <summary>The most a report or manifest file may hold to be compared.</summary>
    public const long MaxReportBytes = 64L * 1024 * 1024;

    public static BuildSnapshot? Read(string path, CompileOptions options, DiagnosticBag diagnostics, string? label = null)
    {
        var ext = Path.GetExtension(path).ToLowerInvariant();
        if (ext is not (".html" or ".htm" or ".json" or ".md"))
        {
            diagnostics.DiffUnknownKind(SourceLocation.None(path), path);
            return null;
        }

        if (Directory.Exists(path))
        {
            diagnostics.DiffUnreadable(SourceLocation.None(path), path, "it is a folder");
            return null;
        }

        if (!File.Exists(path))
        {
            diagnostics.FileNotFound(SourceLocation.None(path), ext == ".md" ? "study file" : "file", path);
            return null;
        }

        if (ext == ".md")
        {
            return FromStudy(path, label ?? path, options, diagnostics);
        }

        string text;
        try
        {
            if (new FileInfo(path).Length > MaxReportBytes)
            {
                diagnostics.FileTooLarge(SourceLocation.None(path), "the file", path, new FileInfo(path).Length, MaxReportBytes);
                return null;
            }

            text = File.ReadAllText(path, new UTF8Encoding(false, true));
        }
        catch (DecoderFallbackException)
        {
            diagnostics.DiffUnreadable(SourceLocation.None(path), path, "it is not UTF-8 text");
            return null;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            diagnostics.FileUnreadable(SourceLocation.None(path), path, e.Message);
            return null;
        }

        return ext == ".json"
            ? FromManifestText(path, label ?? path, text, diagnostics)
            : FromReportText(path, label ?? path, text, diagnostics);
    }

    /// <summary>Compiles a study in memory and reads the report it would write.</summary>
    public static BuildSnapshot? FromStudy(string studyPath, string label, CompileOptions options, DiagnosticBag diagnostics, Func<string, string>? relabel = null)
    {
        var result = Compilation.Compile(studyPath, options);
        if (!result.Succeeded)
        {
            foreach (var d in result.Diagnostics)
            {
                diagnostics.Add(relabel is null ? d : d with { Location = d.Location with { Path = relabel(d.Location.Path) } });
            }

            return null;
        }

        var header = StudyHeaderReader.Read(studyPath, new DiagnosticBag());
        var studyDir = Path.GetDirectoryName(Path.GetFullPath(studyPath))!;
        var snapshot = Parse(label, SnapshotSource.Study, result.Html!, Encoding.UTF8.GetString(result.ManifestJson!), isReport: true, diagnostics, studyPath);
        if (snapshot is null)
        {
            return null;
        }

        // The real path: the file the build just read (links and '..' resolved as the kernel does).
        return Rebuild(snapshot, header?.Header.Alpha, "study header", input => Data.PathGuard.RealPath(Path.Combine(studyDir, input.Path)));
    }

    public static BuildSnapshot? FromReportText(string path, string label, string html, DiagnosticBag diagnostics)
    {
        var snapshot = Parse(label, SnapshotSource.Report, html, null, isReport: true, diagnostics, path);
        return snapshot is null ? null : WithStudyOnDisk(snapshot, path, html);
    }

    public static BuildSnapshot? FromManifestText(string path, string label, string json, DiagnosticBag diagnostics)
    {
        var snapshot = Parse(label, SnapshotSource.Manifest, string.Empty, json, isReport: false, diagnostics, path);
        return snapshot is null ? null : WithStudyOnDisk(snapshot, path, null);
    }

    /// <summary>
    /// A report or manifest records its study (relative to the report's folder) and inputs by hash.
    /// Where the files on disk still have those hashes, alpha comes from the study header and the
    /// inputs can be compared row by row; otherwise alpha is read from the report's text.
    /// </summary>
    private static BuildSnapshot WithStudyOnDisk(BuildSnapshot snapshot, string reportPath, string? html)
    {
        var folder = Path.GetDirectoryName(Path.GetFullPath(reportPath))!;
        var study = Path.GetFullPath(Path.Combine(folder, snapshot.StudyPath));
        double? alpha = null;
        var alphaSource = "not found";
        string? studyDir = null;
        if (File.Exists(study) && HashOf(study) == snapshot.StudySha256)
        {
            studyDir = Path.GetDirectoryName(study)!;
            if (StudyHeaderReader.Read(study, new DiagnosticBag()) is { } header)
            {
                alpha = header.Header.Alpha;
                alphaSource = "study header";
            }
        }

        if (alpha is null && html is not null && AlphaInText().Match(html) is { Success: true } m &&
            double.TryParse(m.Groups[1].Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var a) && a is > 0 and < 1)
        {
            alpha = a;
            alphaSource = "report text";
        }

        return Rebuild(snapshot, alpha, alphaSource, input =>
        {
            if (studyDir is null)
            {
                return null;
            }

            // Only a regular file is hashed: a named pipe or device would block or never end.
            var file = Data.PathGuard.RealPath(Path.Combine(studyDir, input.Path));
            return Data.FileKinds.Lstat(file) == Data.FileKind.Regular && HashOf(file) == input.Sha256 ? file : null;
        });
    }

    private static BuildSnapshot Rebuild(BuildSnapshot s, double? alpha, string alphaSource, Func<SnapshotInput, string?> local) => s with
    {
        Alpha = alpha,
        AlphaSource = alpha is null ? "not found" : alphaSource,
        Inputs = [.. s.Inputs.Select(i => i with { LocalFile = local(i) })],
    };

    internal static string HashOf(string file)
    {
        try
        {
            using var stream = File.OpenRead(file);
            return Convert.ToHexStringLower(SHA256.HashData(stream));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return string.Empty;
        }
    }

    private static BuildSnapshot? Parse(string label, SnapshotSource source, string page, string? json, bool isReport, DiagnosticBag diagnostics, string path)
    {
        var at = SourceLocation.None(path);
        var body = string.Empty;
        if (isReport)
        {
            var manifest = ReportManifest.FromHtml(page, out var problem);
            if (manifest is null)
            {
                diagnostics.DiffUnreadable(at, path, problem!);
                return null;
            }

            json ??= manifest.Json;
            body = page[..manifest.ElementOffset];
        }

        try
        {
            using var doc = JsonDocument.Parse(json!);
            var root = doc.RootElement;
            if (root.ValueKind != JsonValueKind.Object || !root.TryGetProperty("format", out var format) || format.GetString() is not { } f || !f.StartsWith("studypress-results/", StringComparison.Ordinal))
            {
                diagnostics.DiffUnreadable(at, path, "it is not a studypress results manifest (no \"format\": \"studypress-results/…\")");
                return null;
            }

            var displays = isReport ? Displays(body) : new Dictionary<string, Dictionary<string, string>>(StringComparer.Ordinal);
            var values = new List<SnapshotValue>();
            var blocks = new List<(string Id, string Kind)>();
            var blockSeen = new HashSet<string>(StringComparer.Ordinal);
            if (isReport)
            {
                foreach (Match m in SectionStart().Matches(body))
                {
                    var id = WebUtility.HtmlDecode(m.Groups[2].Value);
                    if (blockSeen.Add(id))
                    {
                        blocks.Add((id, m.Groups[1].Value));
                    }
                }
            }

            foreach (var v in root.GetProperty("values").EnumerateArray())
            {
                var id = v.TryGetProperty("id", out var idp) ? idp.GetString() ?? string.Empty : string.Empty;
                var value = v.GetProperty("value");
                var pair = v.TryGetProperty("pair", out var pp) && pp.ValueKind == JsonValueKind.Array
                    ? (IReadOnlyList<string>)[.. pp.EnumerateArray().Select(x => x.GetString() ?? string.Empty)]
                    : null;
                var sv = new SnapshotValue(
                    Str(v, "block")!,
                    Str(v, "test")!,
                    Str(v, "term"),
                    Str(v, "level"),
                    pair,
                    Str(v, "stat")!,
                    value.ValueKind == JsonValueKind.Number ? value.GetDouble() : null,
                    Str(v, "reason"),
                    displays.TryGetValue(id, out var shown) ? shown : new Dictionary<string, string>(StringComparer.Ordinal));
                if (sv.Block is null || sv.Test is null || sv.Stat is null)
                {
                    throw new KeyNotFoundException("values[].block, test or stat");
                }

                values.Add(sv);
                if (blockSeen.Add(sv.Block))
                {
                    blocks.Add((sv.Block, string.Empty));
                }
            }

            var study = root.GetProperty("study");
            return new BuildSnapshot
            {
                Label = label,
                Source = source,
                StudyPath = study.GetProperty("path").GetString() ?? string.Empty,
                StudySha256 = study.GetProperty("sha256").GetString() ?? string.Empty,
                ToolVersion = root.TryGetProperty("tool", out var tool) && tool.TryGetProperty("version", out var tv) ? tv.GetString() ?? string.Empty : string.Empty,
                Alpha = null,
                AlphaSource = "not found",
                Inputs = [.. root.GetProperty("inputs").EnumerateArray().Select(i => new SnapshotInput(
                    Str(i, "name") ?? string.Empty,
                    Str(i, "path") ?? string.Empty,
                    Str(i, "sha256") ?? string.Empty,
                    i.TryGetProperty("rows", out var r) && r.ValueKind == JsonValueKind.Number ? r.GetInt64() : null,
                    i.TryGetProperty("rowsUsed", out var u) && u.ValueKind == JsonValueKind.Number ? u.GetInt64() : null))],
                Values = values,
                Blocks = blocks,
                MethodsSentences = isReport ? Methods(body) : null,
            };
        }
        catch (Exception e) when (e is JsonException or KeyNotFoundException or InvalidOperationException or FormatException)
        {
            diagnostics.DiffUnreadable(at, path, "the results manifest is malformed (" + e.Message.Split('\n')[0].TrimEnd('.') + ")");
            return null;
        }
    }

    private static string? Str(JsonElement e, string name) =>
        e.TryGetProperty(name, out var p) && p.ValueKind == JsonValueKind.String ? p.GetString() : null;

    /// <summary>Every traced number of the page: value id → (style → text as shown).</summary>
    private static Dictionary<string, Dictionary<string, string>> Displays(string body)
    {
        var map = new Dictionary<string, Dictionary<string, string>>(StringComparer.Ordinal);
        foreach (Match m in TracedSpan().Matches(body))
        {
            var id = m.Groups[2].Value;
            var style = m.Groups[3].Success ? m.Groups[3].Value : string.Empty;
            if (!map.TryGetValue(id, out var styles))
            {
                map[id] = styles = new Dictionary<string, string>(StringComparer.Ordinal);
            }

            styles.TryAdd(style, WebUtility.HtmlDecode(m.Groups[4].Value));
        }

        return map;
    }

    /// <summary>The sentences each methods block wrote (its <c>methods-*</c> paragraphs, tags removed).</summary>
    private static Dictionary<string, IReadOnlyList<string>> Methods(string body)
    {
        var result = new Dictionary<string, IReadOnlyList<string>>(StringComparer.Ordinal);
        var sections = SectionStart().Matches(body);
        for (var i = 0; i < sections.Count; i++)
        {
            if (sections[i].Groups[1].Value != "methods")
            {
                continue;
            }

            var from = sections[i].Index;
            var to = body.IndexOf("</section>", from, StringComparison.Ordinal);
            var part = body[from..(to < 0 ? body.Length : to)];
            var sentences = new List<string>();
            foreach (Match p in MethodsParagraph().Matches(part))
            {
                var text = WebUtility.HtmlDecode(Tag().Replace(p.Groups[1].Value, string.Empty));
                sentences.AddRange(SplitSentences(text));
            }

            result[WebUtility.HtmlDecode(sections[i].Groups[2].Value)] = sentences;
        }

        return result;
    }

    /// <summary>Splits prose into sentences at '.', '!' or '?' followed by space and a capital letter or opening bracket.</summary>
    public static IEnumerable<string> SplitSentences(string text)
    {
        var clean = Space().Replace(text, " ").Trim();
        foreach (var s in SentenceEnd().Split(clean))
        {
            if (s.Trim() is { Length: > 0 } t)
            {
                yield return t;
            }
        }
    }

    [GeneratedRegex("<span class=\"(v|nd)\" data-v=\"(v[0-9]+)\"(?: data-style=\"([^\"]*)\")? tabindex=\"0\"(?: title=\"[^\"]*\")?>([^<]*)</span>")]
    private static partial Regex TracedSpan();

    [GeneratedRegex("<section class=\"block block-([a-z0-9-]+)\" id=\"block-([^\"]+)\">")]
    private static partial Regex SectionStart();

    [GeneratedRegex("<p class=\"methods-[a-z-]+\">(.*?)</p>", RegexOptions.Singleline)]
    private static partial Regex MethodsParagraph();

    [GeneratedRegex("<[^>]*>")]
    private static partial Regex Tag();

    [GeneratedRegex("\\s+")]
    private static partial Regex Space();

    [GeneratedRegex("(?<=[.!?])\\s+(?=[A-Z(\\[\"“ΑΒΓΔΕΖΗΘΙΚΛΜΝΞΟΠΡΣΤΥΦΧΨΩ])")]
    private static partial Regex SentenceEnd();

    /// <summary>Phrases that print the study's alpha (not a power block's own alpha).</summary>
    [GeneratedRegex("(?:F threshold \\(α = |F crit \\(α = |significance level α = |family-wise error rate at α = |family-wise level α = |p-values at α = |at α = (?=[0-9.]+ the test))(0?\\.[0-9]+)")]
    private static partial Regex AlphaInText();
}
