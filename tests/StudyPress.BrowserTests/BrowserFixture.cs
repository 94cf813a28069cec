using Microsoft.Playwright;

namespace StudyPress.BrowserTests;

/// <summary>
/// Drives Debian's Chromium (/usr/bin/chromium, installed by .ci/run) headless through Playwright,
/// with the browser's own background networking switched off, so the only requests a page makes
/// are the ones the report itself makes.
/// </summary>
public sealed class BrowserFixture : IAsyncLifetime
{
    public const string ChromiumPath = "/usr/bin/chromium";

    private static readonly string[] Flags =
    [
        "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
        "--disable-component-update", "--disable-sync", "--disable-default-apps", "--disable-extensions",
    ];

    private IPlaywright? playwright;

    public IPlaywright Playwright => playwright ?? throw new InvalidOperationException("not started");

    public async Task InitializeAsync()
    {
        if (BrowserAvailability.SkipReason is not null)
        {
            return;
        }

        Assert.True(File.Exists(ChromiumPath), $"{ChromiumPath} is missing: install Debian's chromium package (.ci/run does this)");
        playwright = await Microsoft.Playwright.Playwright.CreateAsync();
    }

    public Task DisposeAsync()
    {
        playwright?.Dispose();
        return Task.CompletedTask;
    }

    /// <summary>Starts a browser; <paramref name="environment"/> lets a test hide the host's fonts.</summary>
    public Task<IBrowser> LaunchAsync(IDictionary<string, string>? environment = null) =>
        Playwright.Chromium.LaunchAsync(new BrowserTypeLaunchOptions
        {
            ExecutablePath = ChromiumPath,
            Headless = true,
            Args = Flags,
            Env = environment is null ? null : new Dictionary<string, string>(environment),
        });
}

/// <summary>A study compiled into a temporary folder, for the browser to open.</summary>
public sealed class BuiltReport : IDisposable
{
    public BuiltReport(string studyPath)
    {
        Folder = Path.Combine(Path.GetTempPath(), "studypress-browser", Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Folder);
        Result = Compilation.Compile(studyPath, new CompileOptions { OutputDirectory = Folder });
        Assert.True(Result.Succeeded, string.Join("\n", Result.Diagnostics));
        ReportPath = Result.OutputPath;
        File.WriteAllText(ReportPath, Result.Html);
    }

    public BuiltReport(string folderWithStudy, string studyText, IReadOnlyDictionary<string, string> files)
    {
        Folder = Path.Combine(Path.GetTempPath(), "studypress-browser", Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Folder);
        foreach (var (name, content) in files)
        {
            File.WriteAllText(Path.Combine(Folder, name), content);
        }

        var study = Path.Combine(Folder, folderWithStudy);
        File.WriteAllText(study, studyText);
        Result = Compilation.Compile(study, new CompileOptions());
        Assert.True(Result.Succeeded, string.Join("\n", Result.Diagnostics));
        ReportPath = Result.OutputPath;
        File.WriteAllText(ReportPath, Result.Html);
    }

    public string Folder { get; }

    public string ReportPath { get; }

    public CompilationResult Result { get; }

    public string Url => new Uri(ReportPath).AbsoluteUri;

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

    /// <summary>The repository's examples folder, found from the test assembly's location.</summary>
    public static string Example(string name)
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StudyPress.sln")))
        {
            dir = dir.Parent;
        }

        Assert.NotNull(dir);
        return Path.Combine(dir!.FullName, "examples", name, "study.md");
    }
}

[CollectionDefinition("browser")]
public sealed class BrowserTestGroup : ICollectionFixture<BrowserFixture>
{
}

/// <summary>
/// A browser test: skipped (with the reason shown) on a developer machine without Chromium, but run
/// (and failing) in CI, where CI=true and .ci/run installs Chromium.
/// </summary>
public sealed class BrowserFactAttribute : FactAttribute
{
    public BrowserFactAttribute()
    {
        if (BrowserAvailability.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}

/// <summary>The theory form of <see cref="BrowserFactAttribute"/>.</summary>
public sealed class BrowserTheoryAttribute : TheoryAttribute
{
    public BrowserTheoryAttribute()
    {
        if (BrowserAvailability.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}

internal static class BrowserAvailability
{
    public static string? SkipReason =>
        File.Exists(BrowserFixture.ChromiumPath) || string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase)
            ? null
            : $"{BrowserFixture.ChromiumPath} not found: install Debian's chromium package to run the browser tests (CI always runs them)";
}
