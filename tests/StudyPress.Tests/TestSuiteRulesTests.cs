namespace StudyPress.Tests;

/// <summary>Rules the test suite itself keeps, checked on its source.</summary>
public sealed class TestSuiteRulesTests
{
    /// <summary>
    /// Running the command line in-process changes the process's working directory, so two such
    /// tests running in parallel see each other's folder (a report written into the wrong study's
    /// folder, a folder deleted under the other test). Every test file that does it belongs to the
    /// "cli" collection, whose tests run one at a time.
    /// </summary>
    [Fact]
    public void EveryTestFileThatChangesTheWorkingDirectory_IsInTheCliCollection()
    {
        var folder = Path.Combine(ErrorCodeDocsTests.RepositoryRoot(), "tests", "StudyPress.Tests");
        var sep = Path.DirectorySeparatorChar;
        var offenders = Directory.EnumerateFiles(folder, "*.cs", SearchOption.AllDirectories)
            .Where(f => !f.Contains($"{sep}bin{sep}", StringComparison.Ordinal) && !f.Contains($"{sep}obj{sep}", StringComparison.Ordinal)
                && !f.Contains($"{sep}Support{sep}", StringComparison.Ordinal) && !f.EndsWith(nameof(TestSuiteRulesTests) + ".cs", StringComparison.Ordinal))
            .Where(f =>
            {
                var text = File.ReadAllText(f);
                var changesDirectory = text.Contains(".Cli(", StringComparison.Ordinal) || text.Contains("Directory.SetCurrentDirectory", StringComparison.Ordinal);
                return changesDirectory && !text.Contains("[Collection(\"cli\")]", StringComparison.Ordinal);
            })
            .Select(f => Path.GetRelativePath(folder, f))
            .Order(StringComparer.Ordinal)
            .ToList();
        Assert.True(offenders.Count == 0, "run the command line in-process but are not in [Collection(\"cli\")]: " + string.Join(", ", offenders));
    }
}
