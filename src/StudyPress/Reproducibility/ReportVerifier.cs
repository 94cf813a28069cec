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
/// Checks a report against the files it was built from. Fresh: the study file, every input
/// (paths relative to the study file) and the template hash to what the manifest records and the
/// tool version is the same. With recomputation it also rebuilds the report in memory: the
/// values must be the same, each visible number (elements with <c>data-v</c>) must be its
/// manifest value as the report's number format rounds it, and the bytes must be identical.
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
        var servers = new List<string>();
        Check(studyFull, manifest.StudyPath, manifest.StudySha256, changed, missing);
        foreach (var input in manifest.Inputs)
        {
            // A server has no file to hash: only --recompute (which re-runs the query) can check it.
            if (input.Path.StartsWith(Binding.PostgresDataset.Scheme, StringComparison.Ordinal))
            {
                servers.Add(input.Name);
                continue;
            }

            Check(Path.GetFullPath(Path.Combine(studyDir, input.Path)), input.Path, input.Sha256, changed, missing);
        }

        if (manifest.TemplateSha256 != ReportTemplate.Sha256)
        {
            changed.Add("template");
        }

        if (manifest.ToolVersion != Compilation.ToolVersion)
        {
            changed.Add("tool version " + manifest.ToolVersion + " -> " + Compilation.ToolVersion);
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

        return recompute ? Recompute(reportPath, html, manifest, studyFull, reportDir, allowOutside)
            : new Verdict(Freshness.Fresh, servers.Count == 0 ? null : "the server data of " + string.Join(", ", servers.Select(n => "'" + n + "'")) + " was not read again; --recompute re-runs the queries");
    }

    private static void Check(string full, string shown, string recorded, List<string> changed, List<string> missing)
    {
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

    private static Verdict Recompute(string reportPath, string html, ReportManifest manifest, string studyFull, string reportDir, bool allowOutside)
    {
        // 1. The visible numbers against the report's own manifest.
        var bag = new DiagnosticBag();
        var header = StudyHeaderReader.Read(studyFull, bag);
        if (header is null)
        {
            return new Verdict(Freshness.Altered, "the study no longer compiles: " + First(bag.Sorted()));
        }

        var format = new NumberFormat(header.Header.Report.Digits, header.Header.Report.PDigits);
        var values = new Dictionary<string, RecordedValue>(StringComparer.Ordinal);
        foreach (var v in manifest.Values)
        {
            values.TryAdd(v.Id, v);
        }

        foreach (Match m in VisibleNumber().Matches(html[..manifest.ElementOffset]))
        {
            var id = m.Groups["id"].Value;
            var shown = WebUtility.HtmlDecode(m.Groups["text"].Value);
            if (!values.TryGetValue(id, out var v))
            {
                return new Verdict(Freshness.Altered, $"the report shows a number '{shown}' for {id}, which its manifest does not hold");
            }

            // Numbers in generated sentences carry their style (data-style); others use the report's digits.
            var style = m.Groups["style"].Success ? m.Groups["style"].Value : null;
            var expected = v.Value is not { } x ? "n/d" : style is null ? format.Format(v.Stat, x) : StudyPress.Evaluation.ReportStyle.Format(style, x) ?? "unknown style " + style;
            if (shown != expected)
            {
                return new Verdict(Freshness.Altered, $"{id} shows {shown}, its manifest value rounds to {expected}");
            }
        }

        // 2. Recompile in memory, as if writing into the report's folder.
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

        // 3. The whole report, byte for byte.
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

    [GeneratedRegex("<[A-Za-z][A-Za-z0-9]*\\b[^>]*\\sdata-v=\"(?<id>[^\"]*)\"(?:[^>]*\\sdata-style=\"(?<style>[^\"]*)\")?[^>]*>(?<text>[^<]*)<", RegexOptions.CultureInvariant)]
    private static partial Regex VisibleNumber();
}
