using System.Text.RegularExpressions;

namespace StudyPress.Tests;

/// <summary>
/// Rules of the compiler's shape beside the stage graph (<see cref="ArchitectureTests"/>): kinds read
/// their options typed, and so on. Each rule reads the sources or the compiled assembly and names
/// every offender. See DEVELOPERS.md, "Layout" and "Adding an analysis kind".
/// </summary>
public sealed partial class ArchitectureRulesTests
{
    [Fact]
    public void NoKindOptionsAreReadThroughACast()
    {
        // A kind's options are read with BoundBlock.OptionsOf<TKind.Options>(), never by casting the
        // untyped BoundBlock.Options (which hid a wrong kind until run time, at each of 28 places).
        var offenders = new List<string>();
        foreach (var (relative, text) in Sources())
        {
            foreach (Match m in OptionsCast().Matches(text))
            {
                offenders.Add($"{relative}:{LineOf(text, m.Index)}: {m.Value}");
            }
        }

        Assert.True(offenders.Count == 0, "options read through a cast (use block.OptionsOf<TKind.Options>()):\n" + string.Join("\n", offenders));
    }

    [Fact]
    public void TheCastRuleSeesACast()
    {
        // Guards the rule itself: the forms it must catch are caught.
        Assert.Matches(OptionsCast(), "var o = (AnovaKind.Options)block.Options!;");
        Assert.Matches(OptionsCast(), "((PowerKind.Options) w.Block.Options!).Of");
        Assert.Matches(OptionsCast(), "var o = block.Options as RanksKind.Options;");
        Assert.Matches(OptionsCast(), "var o = (Options)block.Options!;");
        Assert.DoesNotMatch(OptionsCast(), "var o = block.OptionsOf<AnovaKind.Options>();");
        Assert.DoesNotMatch(OptionsCast(), "if (options is Options o)");
    }

    /// <summary>Every C# file of src/StudyPress (path relative to it, text).</summary>
    internal static IEnumerable<(string Relative, string Text)> Sources(string folder = "")
    {
        var src = Path.Combine(RepoRoot(), "src", "StudyPress");
        foreach (var file in Directory.EnumerateFiles(Path.Combine(src, folder), "*.cs", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            var relative = Path.GetRelativePath(src, file).Replace('\\', '/');
            if (!relative.StartsWith("obj/", StringComparison.Ordinal) && !relative.StartsWith("bin/", StringComparison.Ordinal))
            {
                yield return (relative, File.ReadAllText(file));
            }
        }
    }

    internal static int LineOf(string text, int index) => 1 + text.AsSpan(0, index).Count('\n');

    internal static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StudyPress.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StudyPress.sln not found above " + AppContext.BaseDirectory);
    }

    /// <summary>A cast of bound options: <c>(XKind.Options)…Options!</c>, <c>(Options)…</c> or <c>… as XKind.Options</c>.</summary>
    [GeneratedRegex(@"\(\s*(\w+Kind\.)?Options\s*\)\s*[\w.]+|\bas\s+(\w+Kind\.)?Options\b", RegexOptions.CultureInvariant)]
    private static partial Regex OptionsCast();
}
