using System.Reflection;

namespace StudyPress.BrowserTests;

/// <summary>
/// The suite must pass on a machine without Chromium (browser tests skipped, with the reason
/// shown) and run them in CI: every test in this project that drives the browser carries
/// <see cref="BrowserFactAttribute"/> or <see cref="BrowserTheoryAttribute"/>, never a plain
/// Fact or Theory, which would fail where Chromium is missing.
/// </summary>
public sealed class SkipWithoutBrowserTests
{
    [Fact]
    public void EveryBrowserTest_IsSkippedWithAReasonWhereChromiumIsMissing()
    {
        var plain = typeof(BrowserFixture).Assembly.GetTypes()
            .Where(t => t != typeof(SkipWithoutBrowserTests))
            .SelectMany(t => t.GetMethods(BindingFlags.Public | BindingFlags.Instance | BindingFlags.DeclaredOnly))
            .Where(m => m.GetCustomAttributes<FactAttribute>().Any(a => a is not (BrowserFactAttribute or BrowserTheoryAttribute)))
            .Select(m => m.DeclaringType!.Name + "." + m.Name)
            .ToList();
        Assert.Empty(plain);
        Assert.True(typeof(BrowserFixture).Assembly.GetTypes().SelectMany(t => t.GetMethods()).Count(m => m.GetCustomAttributes<FactAttribute>().Any()) > 3);
    }
}
