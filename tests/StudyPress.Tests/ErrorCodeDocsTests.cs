using System.Text.RegularExpressions;

namespace StudyPress.Tests;

/// <summary>Every diagnostic code the tool can emit is listed in docs/errors.md, and the list names no code the tool lacks.</summary>
public sealed partial class ErrorCodeDocsTests
{
    [Fact]
    public void EveryCodeInTheSource_IsListedInDocsErrors_AndNoOther()
    {
        var root = RepositoryRoot();
        var emitted = Directory.EnumerateFiles(Path.Combine(root, "src"), "*.cs", SearchOption.AllDirectories)
            .Where(f => !f.Contains($"{Path.DirectorySeparatorChar}obj{Path.DirectorySeparatorChar}", StringComparison.Ordinal))
            .SelectMany(f => Code().Matches(File.ReadAllText(f)).Select(m => m.Groups[1].Value))
            .ToHashSet(StringComparer.Ordinal);
        var docs = File.ReadAllText(Path.Combine(root, "docs", "errors.md"));
        var listed = TableCode().Matches(docs).Select(m => m.Groups[1].Value).ToHashSet(StringComparer.Ordinal);

        Assert.True(emitted.Count > 100, $"found only {emitted.Count} codes; is the source scan right?");
        Assert.Empty(emitted.Except(listed).Order(StringComparer.Ordinal));
        Assert.Empty(listed.Except(emitted).Order(StringComparer.Ordinal));
    }

    internal static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StudyPress.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StudyPress.sln not found above the test folder");
    }

    [GeneratedRegex("\"(SP[0-9]{4})\"")]
    private static partial Regex Code();

    [GeneratedRegex(@"^\| (SP[0-9]{4}) \|", RegexOptions.Multiline)]
    private static partial Regex TableCode();
}
