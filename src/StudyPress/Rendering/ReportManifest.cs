using System.Globalization;
using System.Text.Json;

namespace StudyPress.Rendering;

/// <summary>One input as a report records it; <see cref="Path"/> is relative to the study file.</summary>
public sealed record RecordedInput(string Name, string Path, string Sha256)
{
    public int? Rows { get; init; }

    public int? RowsUsed { get; init; }
}

/// <summary>One manifest value; <see cref="Value"/> is null when the value is not defined.</summary>
public sealed record RecordedValue(string Id, string Stat, double? Value);

/// <summary>
/// The results manifest read back from a report (the <c>study-results</c> script element), with
/// what verification needs: the files it was built from and the values it shows.
/// </summary>
public sealed class ReportManifest
{
    public const string ElementStart = "<script type=\"application/json\" id=\"study-results\">";

    public required string ToolVersion { get; init; }

    /// <summary>The study file, relative to the report's folder.</summary>
    public required string StudyPath { get; init; }

    public required string StudySha256 { get; init; }

    public required string? TemplateSha256 { get; init; }

    /// <summary>The build time recorded from SOURCE_DATE_EPOCH, as seconds; null when none.</summary>
    public required long? BuiltEpoch { get; init; }

    public required IReadOnlyList<RecordedInput> Inputs { get; init; }

    public required IReadOnlyList<RecordedValue> Values { get; init; }

    /// <summary>The manifest JSON exactly as embedded.</summary>
    public required string Json { get; init; }

    /// <summary>Where the manifest element starts in the HTML (numbers shown in the page come before it).</summary>
    public required int ElementOffset { get; init; }

    /// <summary>Reads the manifest embedded in a report; null with a reason when there is none or it is malformed.</summary>
    public static ReportManifest? FromHtml(string html, out string? problem)
    {
        problem = null;
        // The writer places the one real manifest after all user content; read the last one
        // (ReportIntegrity and the verifier refuse a report with more than one).
        var start = html.LastIndexOf(ElementStart, StringComparison.Ordinal);
        if (start < 0)
        {
            problem = "no results manifest found; is this a studypress report?";
            return null;
        }

        var from = start + ElementStart.Length;
        var end = html.IndexOf("</script>", from, StringComparison.Ordinal);
        if (end < 0)
        {
            problem = "the results manifest is not closed";
            return null;
        }

        var json = html[from..end];
        try
        {
            using var doc = JsonDocument.Parse(json);
            var root = doc.RootElement;
            if (root.TryGetProperty("format", out var format) && format.GetString() is { } f && !f.StartsWith("studypress-results/", StringComparison.Ordinal))
            {
                problem = $"unknown manifest format '{f}'";
                return null;
            }

            var study = root.GetProperty("study");
            long? built = null;
            if (root.TryGetProperty("built", out var b) && b.GetString() is { } bt)
            {
                if (!DateTimeOffset.TryParseExact(bt, "yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal, out var when))
                {
                    problem = $"the recorded build time '{bt}' cannot be read";
                    return null;
                }

                built = when.ToUnixTimeSeconds();
            }

            return new ReportManifest
            {
                ToolVersion = root.GetProperty("tool").GetProperty("version").GetString() ?? string.Empty,
                StudyPath = study.GetProperty("path").GetString() ?? throw new KeyNotFoundException("study.path"),
                StudySha256 = study.GetProperty("sha256").GetString() ?? throw new KeyNotFoundException("study.sha256"),
                TemplateSha256 = root.TryGetProperty("template", out var t) ? t.GetProperty("sha256").GetString() : null,
                BuiltEpoch = built,
                Inputs = [.. root.GetProperty("inputs").EnumerateArray().Select(i => new RecordedInput(
                    i.GetProperty("name").GetString() ?? string.Empty,
                    i.GetProperty("path").GetString() ?? throw new KeyNotFoundException("inputs[].path"),
                    i.GetProperty("sha256").GetString() ?? throw new KeyNotFoundException("inputs[].sha256"))
                {
                    Rows = i.TryGetProperty("rows", out var rows) && rows.ValueKind == JsonValueKind.Number ? rows.GetInt32() : null,
                    RowsUsed = i.TryGetProperty("rowsUsed", out var used) && used.ValueKind == JsonValueKind.Number ? used.GetInt32() : null,
                })],
                Values = [.. root.GetProperty("values").EnumerateArray().Select(v => new RecordedValue(
                    v.GetProperty("id").GetString() ?? string.Empty,
                    v.GetProperty("stat").GetString() ?? string.Empty,
                    v.GetProperty("value").ValueKind == JsonValueKind.Number ? v.GetProperty("value").GetDouble() : null))],
                Json = json,
                ElementOffset = start,
            };
        }
        catch (Exception e) when (e is JsonException or KeyNotFoundException or InvalidOperationException or FormatException)
        {
            problem = "the results manifest is malformed (" + e.Message.Split('\n')[0].TrimEnd('.') + ")";
            return null;
        }
    }
}
