using System.Globalization;
using System.Threading.Channels;
using StudyPress.Cli;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// <c>studypress watch</c> driven in-process: every wait is bounded by a cancellation token, so a
/// watcher that never notices a change fails the test instead of hanging it.
/// </summary>
[Collection("cli")]
public sealed class ReproducibilityWatchTests
{
    [Fact]
    public async Task Watch_RebuildsOnChange_KeepsGoingAfterAFailure_StopsOnCancel()
    {
        using var run = new StudyRun().File("study.md", NewCommand.Study).File("data/protein.csv", NewCommand.Data);
        using var limit = new CancellationTokenSource(TimeSpan.FromSeconds(60));
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(limit.Token);
        var events = Channel.CreateUnbounded<WatchBuildEvent>();
        var output = new StringWriter(CultureInfo.InvariantCulture);
        var errors = new StringWriter(CultureInfo.InvariantCulture);
        using var session = new WatchSession(new WatchRequest([run.StudyPath], null, false, null), TextWriter.Synchronized(output), TextWriter.Synchronized(errors))
        {
            Built = e => events.Writer.TryWrite(e),
            Debounce = TimeSpan.FromMilliseconds(300),
            PollInterval = TimeSpan.FromMilliseconds(100),
        };
        var watching = Task.Run(() => session.RunAsync(stop.Token), limit.Token);

        var first = await events.Reader.ReadAsync(limit.Token);
        Assert.Equal(StudyOutcome.Built, first.Outcome);
        var report = Path.Combine(run.Folder, "study.html");
        var before = File.ReadAllText(report);

        // A bad cell: the build fails, its error is printed, the earlier report stays.
        run.File("data/protein.csv", NewCommand.Data.Replace("13.4", "thirteen", StringComparison.Ordinal));
        var failed = await events.Reader.ReadAsync(limit.Token);
        Assert.Equal(StudyOutcome.Failed, failed.Outcome);
        Assert.Contains(failed.Messages, m => m.Contains("'thirteen' is not a number in column 'protein_pct'", StringComparison.Ordinal));
        Assert.Equal(before, File.ReadAllText(report));

        // Fixed with another value: rebuilt with the new data.
        run.File("data/protein.csv", NewCommand.Data.Replace("13.4", "13.9", StringComparison.Ordinal));
        var rebuilt = await events.Reader.ReadAsync(limit.Token);
        Assert.Equal(StudyOutcome.Built, rebuilt.Outcome);
        Assert.NotEqual(before, File.ReadAllText(report));

        stop.Cancel();
        Assert.Equal(0, await watching.WaitAsync(limit.Token));
        Assert.Contains("'thirteen' is not a number", errors.ToString(), StringComparison.Ordinal);
        Assert.EndsWith("stopped watching\n", output.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Watch_MissingPath_ExitsAtOnceWithUsageError()
    {
        using var run = new StudyRun();
        using var limit = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        var errors = new StringWriter(CultureInfo.InvariantCulture);
        using var session = new WatchSession(new WatchRequest([Path.Combine(run.Folder, "none.md")], null, false, null), TextWriter.Null, errors);
        Assert.Equal(2, await session.RunAsync(limit.Token).WaitAsync(limit.Token));
        Assert.EndsWith("none.md:1:1: error: no such study file or folder\n", errors.ToString(), StringComparison.Ordinal);
    }
}
