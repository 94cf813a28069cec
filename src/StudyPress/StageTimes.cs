using System.Diagnostics;
using System.Globalization;

namespace StudyPress;

/// <summary>
/// A developer's look at where a build's time goes: when the environment variable
/// <c>STUDYPRESS_TIMINGS</c> is <c>1</c>, each stage of the command line and of a compilation
/// writes one line to standard error, <c>studypress: time: STAGE +X ms (Y ms since the process
/// started)</c>. Off (one environment read, then nothing) when the variable is unset; it never
/// touches a report, a manifest or any other output (docs/performance.md, "Start-up").
/// </summary>
public static class StageTimes
{
    public const string Variable = "STUDYPRESS_TIMINGS";

    private static readonly bool On = Environment.GetEnvironmentVariable(Variable) == "1";

    private static readonly Lock Gate = new();

    private static long last = Stopwatch.GetTimestamp();

    /// <summary>True when the variable asks for the lines.</summary>
    public static bool Enabled => On;

    /// <summary>Ends a stage: writes its time since the previous mark (nothing when off).</summary>
    public static void Mark(string stage)
    {
        if (!On)
        {
            return;
        }

        lock (Gate)
        {
            var now = Stopwatch.GetTimestamp();
            var step = Stopwatch.GetElapsedTime(last, now).TotalMilliseconds;
            last = now;
            var sinceStart = (DateTime.Now - Process.GetCurrentProcess().StartTime).TotalMilliseconds;
            Console.Error.WriteLine(string.Create(CultureInfo.InvariantCulture, $"studypress: time: {stage} +{step:F1} ms ({sinceStart:F0} ms since the process started)"));
        }
    }
}
