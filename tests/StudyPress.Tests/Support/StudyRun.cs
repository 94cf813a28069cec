using System.Globalization;
using System.Text;
using System.Text.Json;

namespace StudyPress.Tests.Support;

/// <summary>A study written into a fresh temporary folder, compiled through the whole pipeline.</summary>
public sealed class StudyRun : IDisposable
{
    public StudyRun()
    {
        // "run." makes the folder name an invalid study id, so a study.md here keeps the id "study"
        // (the default id is the folder's name only when that is a valid id): reports of two runs
        // in different folders stay comparable.
        Folder = Path.Combine(Path.GetTempPath(), "studypress-tests", "run." + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Folder);
    }

    public string Folder { get; }

    public string StudyPath => Path.Combine(Folder, "study.md");

    public string ReportPath => Path.Combine(Folder, "study.html");

    public StudyRun File(string relative, string content)
    {
        var path = Path.Combine(Folder, relative);
        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        System.IO.File.WriteAllText(path, content, new UTF8Encoding(false));
        return this;
    }

    public StudyRun Bytes(string relative, byte[] content)
    {
        var path = Path.Combine(Folder, relative);
        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        System.IO.File.WriteAllBytes(path, content);
        return this;
    }

    public StudyRun Study(string content) => File("study.md", content);

    /// <summary>Compiles the study in memory (nothing written).</summary>
    public CompilationResult Compile(CompileOptions? options = null) => Compilation.Compile(StudyPath, options ?? new CompileOptions());

    /// <summary>
    /// Compiles and asserts exactly one diagnostic, with this code, on this line (0-based): one
    /// mistake, one message, at the place the user must edit. Returns it for further checks.
    /// </summary>
    public StudyPress.Diagnostics.Diagnostic SingleError(string code, int line)
    {
        var d = Assert.Single(Compile().Diagnostics);
        Assert.Equal(code, d.Code);
        Assert.Equal(line, d.Location.Line);
        return d;
    }

    /// <summary>Compiles and returns the manifest, failing the test on any error.</summary>
    public ManifestView Manifest()
    {
        var result = Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        return new ManifestView(result.ManifestJson!);
    }

    /// <summary>Runs the command line in-process; returns exit code, stdout and stderr.</summary>
    public (int Exit, string Out, string Err) Cli(params string[] args)
    {
        var o = new StringWriter(CultureInfo.InvariantCulture);
        var e = new StringWriter(CultureInfo.InvariantCulture);
        var previous = Directory.GetCurrentDirectory();
        Directory.SetCurrentDirectory(Folder);
        try
        {
            var exit = StudyPress.Cli.StudyPressCommand.Run(args, o, e);
            return (exit, o.ToString(), e.ToString());
        }
        finally
        {
            Directory.SetCurrentDirectory(previous);
        }
    }

    public void Dispose()
    {
        try
        {
            Directory.Delete(Folder, recursive: true);
        }
        catch (IOException)
        {
        }
    }
}

/// <summary>Read access to a results manifest for assertions.</summary>
public sealed class ManifestView
{
    public ManifestView(byte[] json)
    {
        Json = json;
        Document = JsonDocument.Parse(json);
    }

    public byte[] Json { get; }

    public JsonDocument Document { get; }

    public IEnumerable<JsonElement> Values => Document.RootElement.GetProperty("values").EnumerateArray();

    /// <summary>The value of (block, test, term, stat), optionally with a level; fails if absent.</summary>
    public double Get(string block, string test, string? term, string stat, string? level = null)
    {
        var matches = Find(block, test, term, stat, level).ToList();
        Assert.True(matches.Count == 1, $"expected one value {block}/{test}/{term}/{level}/{stat}, found {matches.Count}");
        return matches[0].GetProperty("value").GetDouble();
    }

    public IEnumerable<JsonElement> Find(string block, string test, string? term, string stat, string? level = null) =>
        Values.Where(v =>
            v.GetProperty("block").GetString() == block &&
            v.GetProperty("test").GetString() == test &&
            v.GetProperty("term").GetString() == term &&
            v.GetProperty("stat").GetString() == stat &&
            (level is null || v.GetProperty("level").GetString() == level));
}

/// <summary>Reference files copied next to the test assembly.</summary>
public static class ReferenceFiles
{
    public static string PathOf(params string[] parts) => Path.Combine([AppContext.BaseDirectory, "Reference", .. parts]);
}

public static class Accuracy
{
    /// <summary>Log relative error, LRE = -log10(|x - c| / |c|) (McCullough 1998); 15.9 when exact.</summary>
    public static double Lre(double x, double certified)
    {
        var err = certified == 0 ? Math.Abs(x) : Math.Abs(x - certified) / Math.Abs(certified);
        return err == 0 ? 15.9 : -Math.Log10(err);
    }

    public static void AssertRoundsTo(double x, string printed, string what)
    {
        var p = double.Parse(printed, NumberStyles.Float, CultureInfo.InvariantCulture);
        var dot = printed.IndexOf('.', StringComparison.Ordinal);
        var decimals = dot < 0 ? 0 : printed.Length - dot - 1;
        var half = 0.5 * Math.Pow(10, -decimals);
        Assert.True(Math.Abs(x - p) <= half * (1 + 1e-9), $"{what}: got {x.ToString("R", CultureInfo.InvariantCulture)}, printed {printed}");
    }
}
