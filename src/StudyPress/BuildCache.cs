using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using StudyPress.Rendering;
using StudyPress.Reproducibility;
using StudyPress.Syntax;

namespace StudyPress;

/// <summary>
/// Remembers, per study, what its last report was built from, so a batch build can skip studies
/// that have not changed. One small JSON file per study in <c>.studypress-cache/</c> inside the
/// report's folder, named by a hash of the study's full path.
/// <para>
/// A study is up to date only when all of these hold: the entry is for this study and this
/// report path; the tool version, template hash and build options are the same; the report
/// still exists and hashes to what was written; the study file and every input hash to what the
/// report was built from. Timestamps are never trusted: every check hashes the file contents.
/// The input list comes from the entry: it can only change when the study file changes, and then
/// the study's own hash differs first.
/// </para>
/// </summary>
public static class BuildCache
{
    public const string FolderName = ".studypress-cache";

    private const string Format = "studypress-cache/1";

    private static readonly JsonWriterOptions WriterOptions = new() { Indented = true };

    /// <summary>
    /// Identifies the exact compiler code: the module version ids of the compiler, statistics and
    /// chart assemblies (deterministic builds give a new id exactly when the code changes), so a
    /// development build invalidates the cache even when the version number stays the same.
    /// </summary>
    public static string ToolBuild { get; } = string.Join(
        "+",
        new[] { typeof(Compilation), typeof(Statistics.Anova.FactorialAnova), typeof(Charts.Chart) }
            .Select(t => t.Assembly.ManifestModule.ModuleVersionId.ToString("N")));

    /// <summary>The cache entry file for a study whose report goes to <paramref name="outputPath"/>.</summary>
    public static string EntryPath(string studyPath, string outputPath)
    {
        var full = Path.GetFullPath(studyPath);
        var key = ContentHash.Hex(Encoding.UTF8.GetBytes(full))[..16];
        return Path.Combine(Path.GetDirectoryName(Path.GetFullPath(outputPath))!, FolderName, Path.GetFileNameWithoutExtension(full) + "-" + key + ".json");
    }

    /// <summary>Options that change the report's bytes, as one string (e.g. the build time).</summary>
    public static string OptionsKey(CompileOptions options) =>
        "allow-outside=" + (options.AllowOutsidePaths ? "1" : "0") + ";epoch=" +
        (options.SourceDateEpoch?.ToString(System.Globalization.CultureInfo.InvariantCulture) ?? "none");

    public static bool IsUpToDate(string studyPath, string outputPath, CompileOptions options)
    {
        try
        {
            var entry = File.ReadAllBytes(EntryPath(studyPath, outputPath));
            using var doc = JsonDocument.Parse(entry);
            var root = doc.RootElement;
            if (root.GetProperty("format").GetString() != Format ||
                root.GetProperty("study").GetString() != Path.GetFullPath(studyPath) ||
                root.GetProperty("report").GetString() != Path.GetFullPath(outputPath) ||
                root.GetProperty("tool").GetString() != Rendering.Tool.Version ||
                root.GetProperty("toolBuild").GetString() != ToolBuild ||
                root.GetProperty("template").GetString() != ReportTemplate.Sha256 ||
                root.GetProperty("options").GetString() != OptionsKey(options))
            {
                return false;
            }

            if (!HashIs(outputPath, root.GetProperty("reportSha256").GetString()) ||
                !HashIs(studyPath, root.GetProperty("studySha256").GetString()))
            {
                return false;
            }

            foreach (var input in root.GetProperty("inputs").EnumerateArray())
            {
                if (!HashIs(input.GetProperty("path").GetString()!, input.GetProperty("sha256").GetString()))
                {
                    return false;
                }
            }

            return true;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or JsonException or KeyNotFoundException or InvalidOperationException or ArgumentException)
        {
            return false;
        }
    }

    /// <summary>
    /// Records a successful build. The hashes come from the manifest, i.e. from the bytes the
    /// compiler actually read, so a file changed during the build makes the next check fail.
    /// </summary>
    public static void Record(string studyPath, string outputPath, CompileOptions options, byte[] manifestJson, byte[] html)
    {
        using var manifest = JsonDocument.Parse(manifestJson);
        var root = manifest.RootElement;
        var studyDir = Path.GetDirectoryName(Path.GetFullPath(studyPath))!;
        using var stream = new MemoryStream();
        using (var w = new Utf8JsonWriter(stream, WriterOptions))
        {
            w.WriteStartObject();
            w.WriteString("format", Format);
            w.WriteString("study", Path.GetFullPath(studyPath));
            w.WriteString("report", Path.GetFullPath(outputPath));
            w.WriteString("tool", Rendering.Tool.Version);
            w.WriteString("toolBuild", ToolBuild);
            w.WriteString("template", ReportTemplate.Sha256);
            w.WriteString("options", OptionsKey(options));
            w.WriteString("reportSha256", ContentHash.Hex(html));
            w.WriteString("studySha256", root.GetProperty("study").GetProperty("sha256").GetString());
            w.WriteStartArray("inputs");
            foreach (var input in root.GetProperty("inputs").EnumerateArray())
            {
                w.WriteStartObject();
                // The real path (links and '..' resolved as when the build read it), so the file watched is the file read.
                w.WriteString("path", Data.PathGuard.RealPath(Path.Combine(studyDir, input.GetProperty("path").GetString()!)));
                w.WriteString("sha256", input.GetProperty("sha256").GetString());
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteEndObject();
        }

        stream.WriteByte((byte)'\n');
        AtomicFile.Write(EntryPath(studyPath, outputPath), stream.ToArray());
    }

    private static bool HashIs(string path, string? expected)
    {
        // A pipe or device is never opened here (it would block or never end): the build reports it.
        if (Data.FileKinds.Lstat(Data.PathGuard.RealPath(path)) != Data.FileKind.Regular)
        {
            return false;
        }

        using var stream = File.OpenRead(path);
        return string.Equals(ContentHash.Hex(stream), expected, StringComparison.Ordinal);
    }
}
