using System.Net;
using System.Security.Cryptography;
using System.Text;
using System.Text.RegularExpressions;
using StudyPress.Diagnostics;
using StudyPress.Rendering;

namespace StudyPress.Reproducibility;

public enum Freshness
{
    /// <summary>Every recorded file still has its recorded hash (and, when recomputed, the report matches a rebuild).</summary>
    Fresh,

    /// <summary>A file the report was built from changed or is missing.</summary>
    Stale,

    /// <summary>Recomputing gives other values, or the report's visible numbers or bytes differ.</summary>
    Altered,

    /// <summary>The report cannot be read or carries no manifest.</summary>
    Unreadable,
}

/// <summary>The verdict on one report and the reason, in the wording <c>studypress verify</c> prints.</summary>
public sealed record Verdict(Freshness State, string? Detail)
{
    public string Word => State switch
    {
        Freshness.Fresh => "fresh",
        Freshness.Stale => "stale",
        Freshness.Altered => "altered",
        _ => "unreadable",
    };

    /// <summary>The line printed for a report: <c>REPORT: fresh</c>, <c>REPORT: stale (changed: study.md)</c>.</summary>
    public string Line(string report) => Detail is null ? $"{report}: {Word}" : $"{report}: {Word} ({Detail})";
}

/// <summary>
/// Checks a report against the files it was built from and against what the writer emits.
/// Stale: the study file, an input (regular files only; paths relative to the study file), the
/// template or the tool version differ from what the manifest records. Altered: the page is not
/// StudyPress's (structure, policy, scripts, one manifest in its place), the manifest's inputs
/// are not the study's datasets, or a visible number (<c>data-v</c>) or input row count is not
/// its manifest value as the report's number format rounds it. With recomputation it also
/// rebuilds the report in memory: the values must be the same and the bytes identical.
/// </summary>
public static partial class ReportVerifier
{
    /// <param name="allowOutside">For the rebuild: let data paths leave the study's folder tree, as <c>--allow-outside-data</c>.</param>
    public static Verdict Verify(string reportPath, bool recompute, bool allowOutside = false)
    {
        string html;
        try
        {
            html = Encoding.UTF8.GetString(File.ReadAllBytes(reportPath));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return new Verdict(Freshness.Unreadable, e is FileNotFoundException or DirectoryNotFoundException ? "no such file" : "cannot read it: " + e.Message);
        }

        var manifest = ReportManifest.FromHtml(html, out var problem);
        if (manifest is null)
        {
            return new Verdict(Freshness.Unreadable, problem);
        }

        var reportDir = Path.GetDirectoryName(Path.GetFullPath(reportPath))!;
        var studyFull = Path.GetFullPath(Path.Combine(reportDir, manifest.StudyPath));
        var studyDir = Path.GetDirectoryName(studyFull)!;
        var changed = new List<string>();
        var missing = new List<string>();

        // Only regular files are hashed: a FIFO would block verify and a device never ends.
        // A server input has no file to hash: only --recompute (which re-runs the query) can check it.
        var servers = manifest.Inputs.Where(i => i.Path.StartsWith(Binding.PostgresDataset.Scheme, StringComparison.Ordinal)).Select(i => i.Name).ToList();
        var files = manifest.Inputs.Where(i => !i.Path.StartsWith(Binding.PostgresDataset.Scheme, StringComparison.Ordinal)).ToList();
        foreach (var (full, shown) in new[] { (studyFull, manifest.StudyPath) }.Concat(files.Select(i => (Path.GetFullPath(Path.Combine(studyDir, i.Path)), i.Path))))
        {
            if (RegularFiles.NotRegular(full) is { } kind)
            {
                return new Verdict(Freshness.Unreadable, $"the recorded file '{shown}' is {kind}, not a regular file; verify hashes regular files only");
            }
        }

        Check(studyFull, manifest.StudyPath, manifest.StudySha256, changed, missing);
        foreach (var input in files)
        {
            Check(Path.Combine(studyDir, input.Path), input.Path, input.Sha256, changed, missing);
        }

        if (manifest.TemplateSha256 != ReportTemplate.Sha256)
        {
            changed.Add("template");
        }

        if (manifest.ToolVersion != Rendering.Tool.Version)
        {
            changed.Add("tool version " + manifest.ToolVersion + " -> " + Rendering.Tool.Version);
        }

        if (changed.Count > 0 || missing.Count > 0)
        {
            var parts = new List<string>();
            if (changed.Count > 0)
            {
                parts.Add("changed: " + string.Join(", ", changed));
            }

            if (missing.Count > 0)
            {
                parts.Add("missing: " + string.Join(", ", missing));
            }

            return new Verdict(Freshness.Stale, string.Join("; ", parts));
        }

        // The same tool and template built it: the page must be exactly what that writer emits.
        if (Structure(html) is { } structural)
        {
            return new Verdict(Freshness.Altered, structural);
        }

        var bag = new DiagnosticBag();
        var header = StudyHeaderReader.Read(studyFull, bag);
        if (header is null)
        {
            return new Verdict(Freshness.Altered, "the study no longer compiles: " + First(bag.Sorted()));
        }

        if ((InputList(manifest, header) ?? VisibleNumbers(html, manifest, header)) is { } difference)
        {
            return new Verdict(Freshness.Altered, difference);
        }

        return recompute ? Recompute(reportPath, manifest, studyFull, reportDir, allowOutside)
            : new Verdict(Freshness.Fresh, servers.Count == 0 ? null : "the server data of " + string.Join(", ", servers.Select(n => "'" + n + "'")) + " was not read again; --recompute re-runs the queries");
    }

    /// <summary>
    /// Null when the page has StudyPress's structure: complete (<see cref="ReportIntegrity"/>), the
    /// writer's own head with its Content Security Policy, the one stylesheet and the two script
    /// elements of the shell whose contents hash to what the policy allows, and no element that could
    /// navigate, embed or load anything (meta beyond the shell's four, base, link, iframe, frame,
    /// object, embed).
    /// </summary>
    internal static string? Structure(string html)
    {
        if (ReportIntegrity.Problem(html) is { } problem)
        {
            return "the page is not a whole studypress report: " + problem;
        }

        var head = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta http-equiv=\"Content-Security-Policy\" content=\"" + ReportRenderer.ContentSecurityPolicy + "\">\n";
        if (!html.StartsWith(head, StringComparison.Ordinal))
        {
            return "the page's head or its Content Security Policy is not the one studypress writes";
        }

        foreach (var (tag, allowed) in new[] { ("script", 2), ("style", 1), ("meta", 4), ("base", 0), ("link", 0), ("iframe", 0), ("frame", 0), ("object", 0), ("embed", 0) })
        {
            var count = TagOpen().Matches(html).Count(m => string.Equals(m.Groups["name"].Value, tag, StringComparison.OrdinalIgnoreCase));
            if (count != allowed)
            {
                return $"the page has {count} <{tag}> {(count == 1 ? "element" : "elements")}; a studypress report has {allowed}";
            }
        }

        var style = Between(html, "<style>", "</style>");
        if (style is null || ReportRenderer.Hash(style) != ReportRenderer.Hash(ReportRenderer.Style))
        {
            return "the page's stylesheet is not the one its Content Security Policy allows";
        }

        var scriptStart = html.LastIndexOf("\n<script>", StringComparison.Ordinal);
        var script = scriptStart < 0 ? null : Between(html[(scriptStart + 1)..], "<script>", "</script>");
        if (script is null || ReportRenderer.Hash(script) != ReportRenderer.Hash(ReportTemplate.Script))
        {
            return "the page script is not the one its Content Security Policy allows";
        }

        return null;
    }

    /// <summary>The manifest's inputs are the study's datasets, and the data table shows their row counts.</summary>
    private static string? InputList(ReportManifest manifest, StudyHeaderFile header)
    {
        var declared = header.Header.Datasets.Select(d => d.Name).ToList();
        var recorded = manifest.Inputs.Select(i => i.Name).ToList();
        if (!declared.SequenceEqual(recorded, StringComparer.Ordinal))
        {
            return recorded.Count == 0
                ? $"the report's manifest lists no input files, but its study reads {declared.Count}"
                : "the report's manifest lists the inputs " + Names(recorded) + ", but its study reads " + Names(declared);
        }

        return null;
    }

    private static string Names(List<string> names) => names.Count == 0 ? "none" : string.Join(", ", names.Select(n => "'" + n + "'"));

    /// <summary>Every visible number (data-v) is its manifest value as the report's format rounds it; every input row count is the manifest's.</summary>
    private static string? VisibleNumbers(string html, ReportManifest manifest, StudyHeaderFile header)
    {
        var format = new NumberFormat(header.Header.Report.Numbers);
        var values = new Dictionary<string, RecordedValue>(StringComparer.Ordinal);
        foreach (var v in manifest.Values)
        {
            values.TryAdd(v.Id, v);
        }

        var page = html[..manifest.ElementOffset];
        foreach (Match m in VisibleNumber().Matches(page))
        {
            var id = m.Groups["id"].Value;
            var shown = WebUtility.HtmlDecode(m.Groups["text"].Value);
            if (!values.TryGetValue(id, out var v))
            {
                return $"the report shows a number '{shown}' for {id}, which its manifest does not hold";
            }

            // Numbers in generated sentences carry their style (data-style); others use the report's digits.
            var style = m.Groups["style"].Success ? m.Groups["style"].Value : null;
            var expected = v.Value is not { } x ? "n/d" : style is null ? format.Format(v.Stat, x) : StudyPress.Rendering.ReportStyle.Format(style, x) ?? "unknown style " + style;
            if (shown != expected)
            {
                return $"{id} shows {shown}, its manifest value rounds to {expected}";
            }
        }

        var inputs = manifest.Inputs.ToDictionary(i => i.Name, StringComparer.Ordinal);
        foreach (Match m in VisibleInputNumber().Matches(page))
        {
            var name = WebUtility.HtmlDecode(m.Groups["name"].Value);
            var field = m.Groups["field"].Value;
            var shown = m.Groups["text"].Value;
            var expected = !inputs.TryGetValue(name, out var input) ? null : field == "rows" ? input.Rows : field == "rowsUsed" ? input.RowsUsed : null;
            if (expected?.ToString(System.Globalization.CultureInfo.InvariantCulture) != shown)
            {
                return $"the data table shows {shown} for {field} of '{name}', its manifest records {(expected is null ? "none" : expected.Value.ToString(System.Globalization.CultureInfo.InvariantCulture))}";
            }
        }

        return null;
    }

    private static string? Between(string text, string open, string close)
    {
        var a = text.IndexOf(open, StringComparison.Ordinal);
        if (a < 0)
        {
            return null;
        }

        var b = text.IndexOf(close, a + open.Length, StringComparison.Ordinal);
        return b < 0 ? null : text[(a + open.Length)..b];
    }

    private static void Check(string full, string shown, string recorded, List<string> changed, List<string> missing)
    {
        // The file a build would read (links and '..' resolved as the kernel does); its type was checked above.
        full = Data.PathGuard.RealPath(full);
        try
        {
            using var stream = File.OpenRead(full);
            if (!string.Equals(Convert.ToHexStringLower(SHA256.HashData(stream)), recorded, StringComparison.OrdinalIgnoreCase))
            {
                changed.Add(shown);
            }
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            missing.Add(shown);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            missing.Add(shown + " (unreadable)");
        }
    }

    private static Verdict Recompute(string reportPath, ReportManifest manifest, string studyFull, string reportDir, bool allowOutside)
    {
        // 1. Recompile in memory, as if writing into the report's folder.
        var rebuilt = Compilation.Compile(studyFull, new CompileOptions
        {
            OutputDirectory = reportDir,
            SourceDateEpoch = manifest.BuiltEpoch,
            AllowOutsidePaths = allowOutside,
        });
        if (!rebuilt.Succeeded)
        {
            return new Verdict(Freshness.Altered, "the study no longer compiles: " + First(rebuilt.Diagnostics));
        }

        var recomputed = ReportManifest.FromHtml(rebuilt.Html!, out _);
        if (recomputed is null || recomputed.Json != manifest.Json)
        {
            var first = recomputed is null ? null : FirstDifference(manifest.Values, recomputed.Values) ?? ChangedResult(manifest.Json, recomputed.Json);
            return new Verdict(Freshness.Altered, first is null ? "recompiling gives a different manifest" : "recompiling gives other values: " + first);
        }

        // 2. The whole report, byte for byte.
        var bytes = File.ReadAllBytes(reportPath);
        if (!bytes.AsSpan().SequenceEqual(Encoding.UTF8.GetBytes(rebuilt.Html!)))
        {
            return new Verdict(Freshness.Altered, "the report's bytes differ from a rebuild");
        }

        return new Verdict(Freshness.Fresh, null);
    }

    private static string First(IReadOnlyList<Diagnostic> ds) => ds.Count == 0 ? "no message" : ds[0].ToString();

    private static string? FirstDifference(IReadOnlyList<RecordedValue> recorded, IReadOnlyList<RecordedValue> now)
    {
        var byId = now.ToDictionary(v => v.Id, StringComparer.Ordinal);
        foreach (var v in recorded)
        {
            if (!byId.TryGetValue(v.Id, out var n))
            {
                return v.Id + " is no longer computed";
            }

            if (!Nullable.Equals(n.Value, v.Value) || n.Stat != v.Stat)
            {
                return $"{v.Id} ({v.Stat}) was {Show(v.Value)}, now {Show(n.Value)}";
            }
        }

        return now.Count != recorded.Count ? "the number of values changed" : null;
    }

    /// <summary>Names the first dataset whose query result hash differs between two manifests (see docs/data-sources.md).</summary>
    private static string? ChangedResult(string recorded, string now)
    {
        using var a = System.Text.Json.JsonDocument.Parse(recorded);
        using var b = System.Text.Json.JsonDocument.Parse(now);
        var before = a.RootElement.GetProperty("inputs").EnumerateArray().ToList();
        var after = b.RootElement.GetProperty("inputs").EnumerateArray().ToList();
        for (var i = 0; i < Math.Min(before.Count, after.Count); i++)
        {
            var x = before[i].TryGetProperty("resultSha256", out var rx) ? rx.GetString() : null;
            var y = after[i].TryGetProperty("resultSha256", out var ry) ? ry.GetString() : null;
            if (x != y)
            {
                return $"the result of the query of dataset '{after[i].GetProperty("name").GetString()}' changed (SHA-256 {x ?? "none"} -> {y ?? "none"})";
            }
        }

        return null;
    }

    private static string Show(double? v) => v is { } x ? x.ToString("R", System.Globalization.CultureInfo.InvariantCulture) : "undefined";

    [GeneratedRegex("<(?<name>[A-Za-z][A-Za-z0-9-]*)(?=[\\s/>])", RegexOptions.CultureInvariant)]
    private static partial Regex TagOpen();

    [GeneratedRegex("<span class=\"v\" data-input=\"(?<name>[^\"]*)\" data-field=\"(?<field>[A-Za-z]+)\" tabindex=\"0\">(?<text>[^<]*)<", RegexOptions.CultureInvariant)]
    private static partial Regex VisibleInputNumber();

    [GeneratedRegex("<[A-Za-z][A-Za-z0-9]*\\b[^>]*\\sdata-v=\"(?<id>[^\"]*)\"(?:[^>]*\\sdata-style=\"(?<style>[^\"]*)\")?[^>]*>(?<text>[^<]*)<", RegexOptions.CultureInvariant)]
    private static partial Regex VisibleNumber();
}
