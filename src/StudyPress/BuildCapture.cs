using System.Security.Cryptography;
using System.Text;
using System.Text.Json;

namespace StudyPress;

/// <summary>
/// A developer's check for changes of structure: when the environment variable
/// <c>STUDYPRESS_CAPTURE_DIR</c> names a folder, every successful compilation (examples, test
/// studies, CLI runs) keeps its manifest and report there, under a name derived from its inputs
/// (study bytes, input hashes, output name, build time). Two captures of one tree are compared by
/// <c>tests/tools/compare-captures.py</c>; see DEVELOPERS.md. Off (and free) when the variable is unset.
/// </summary>
internal static class BuildCapture
{
    public const string Variable = "STUDYPRESS_CAPTURE_DIR";

    public static void Keep(string studyPath, string outputPath, CompileOptions options, byte[] manifest, string html)
    {
        var dir = Environment.GetEnvironmentVariable(Variable);
        if (string.IsNullOrEmpty(dir))
        {
            return;
        }

        try
        {
            var key = new StringBuilder();
            key.Append(Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(studyPath)))).Append('\n');
            using (var doc = JsonDocument.Parse(manifest))
            {
                foreach (var input in doc.RootElement.GetProperty("inputs").EnumerateArray())
                {
                    key.Append(input.GetProperty("name").GetString()).Append('=').Append(input.GetProperty("sha256").GetString());
                    if (input.TryGetProperty("resultSha256", out var r))
                    {
                        key.Append('/').Append(r.GetString());
                    }

                    key.Append('\n');
                }
            }

            key.Append(Path.GetFileName(outputPath)).Append('\n').Append(options.SourceDateEpoch).Append('\n');
            var name = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key.ToString())))[..24];
            Directory.CreateDirectory(dir);
            Write(Path.Combine(dir, name + ".json"), manifest);
            Write(Path.Combine(dir, name + ".html"), Encoding.UTF8.GetBytes(html));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // A developer's aid: a capture that cannot be written never fails a build.
        }
    }

    private static void Write(string path, byte[] bytes)
    {
        // Parallel tests may compile the same inputs at once: write whole files by rename.
        var temp = path + "." + Environment.ProcessId.ToString(System.Globalization.CultureInfo.InvariantCulture) + "." + Guid.NewGuid().ToString("N") + ".tmp";
        File.WriteAllBytes(temp, bytes);
        if (File.Exists(path) && !File.ReadAllBytes(path).AsSpan().SequenceEqual(bytes))
        {
            // The same inputs gave two different outputs within one capture: keep both for review.
            File.Move(temp, path + ".differs-" + Guid.NewGuid().ToString("N")[..8], overwrite: false);
            return;
        }

        File.Move(temp, path, overwrite: true);
    }
}
