using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Crash cases found by <see cref="FuzzTests"/>, checked in under Cases/regressions/NAME/
/// (study.md, data.csv when there is one, and expected.txt: the exact diagnostic lines, with
/// '{dir}' for the case's folder, or 'ok' when the study now builds).
/// </summary>
public sealed class RegressionTests
{
    private static string Root => Path.Combine(AppContext.BaseDirectory, "Cases", "regressions");

    public static TheoryData<string> Names()
    {
        var data = new TheoryData<string>();
        foreach (var dir in Directory.GetDirectories(Root).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetFileName(dir));
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Names))]
    public void Compile_FuzzRegressionCase_DoesNotThrowAndGivesTheExpectedDiagnostics(string name)
    {
        using var run = new StudyRun();
        var folder = Path.Combine(Root, name);
        foreach (var file in Directory.GetFiles(folder, "*", SearchOption.AllDirectories).Where(f => !f.EndsWith("expected.txt", StringComparison.Ordinal)).Order(StringComparer.Ordinal))
        {
            run.Bytes(Path.GetRelativePath(folder, file), File.ReadAllBytes(file));
        }

        Assert.Null(FuzzTests.Check(run.Folder));
        var result = Compilation.Compile(run.StudyPath, new CompileOptions());
        var expected = File.ReadAllText(Path.Combine(Root, name, "expected.txt")).TrimEnd('\n').Replace("{dir}", run.Folder, StringComparison.Ordinal);
        var actual = result.Succeeded ? "ok" : string.Join("\n", result.Diagnostics);
        Assert.Equal(expected, actual);
    }
}
