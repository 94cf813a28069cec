using System.Globalization;
using System.Text.Json;

namespace StudyPress.Rendering.Export;

/// <summary>One value of the results manifest, as docs/manifest.md defines it.</summary>
public sealed record ManifestValue(string Id, string Block, string Test, string? Term, string? Level, IReadOnlyList<string>? Pair, string Stat, double? Value, string? Reason)
{
    /// <summary>The value's path in words, for comments: <c>main anova nozzle f</c>.</summary>
    public string Path => string.Join(" ", new[] { Block, Test, Term, Level, Pair is null ? null : string.Join(" vs ", Pair), Stat }.Where(s => s is not null));
}

/// <summary>The parts of a results manifest the exports need: study identity and every value.</summary>
public sealed record ManifestValues(string ToolVersion, string StudyPath, string StudySha256, IReadOnlyList<ManifestValue> Values)
{
    public static ManifestValues Read(byte[] json)
    {
        using var doc = JsonDocument.Parse(json);
        var root = doc.RootElement;
        var values = new List<ManifestValue>();
        foreach (var v in root.GetProperty("values").EnumerateArray())
        {
            values.Add(new ManifestValue(
                v.GetProperty("id").GetString()!,
                v.GetProperty("block").GetString()!,
                v.GetProperty("test").GetString()!,
                Text(v, "term"),
                Text(v, "level"),
                v.TryGetProperty("pair", out var pair) && pair.ValueKind == JsonValueKind.Array ? [.. pair.EnumerateArray().Select(p => p.GetString() ?? string.Empty)] : null,
                v.GetProperty("stat").GetString()!,
                v.TryGetProperty("value", out var value) && value.ValueKind == JsonValueKind.Number ? value.GetDouble() : null,
                Text(v, "reason")));
        }

        return new ManifestValues(
            root.GetProperty("tool").GetProperty("version").GetString()!,
            root.GetProperty("study").GetProperty("path").GetString()!,
            root.GetProperty("study").GetProperty("sha256").GetString()!,
            values);
    }

    /// <summary>The value in shortest round-trip form, as the manifest holds it.</summary>
    public static string RoundTrip(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    private static string? Text(JsonElement e, string name) =>
        e.TryGetProperty(name, out var p) && p.ValueKind == JsonValueKind.String ? p.GetString() : null;
}
