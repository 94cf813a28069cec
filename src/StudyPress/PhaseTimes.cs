using System.Diagnostics;
using System.Globalization;

namespace StudyPress;

/// <summary>
/// A developer's profile of one compilation: when the environment variable
/// <c>STUDYPRESS_TIMINGS</c> is set (to anything but empty or 0), every stage of
/// <see cref="Compilation"/> (parse and bind, load, model, each block's evaluation, render) writes
/// one line to standard error when it ends: its wall time, the process's CPU time in it, and the
/// managed memory allocated in it, and the GC heap size and the process's resident memory after it (docs/performance.md, "Where the time
/// goes"). Off (and free: no clock is read) when the variable is unset, so reports never depend on it.
/// </summary>
internal sealed class PhaseTimes
{
    public const string Variable = "STUDYPRESS_TIMINGS";

    private readonly Stopwatch clock = Stopwatch.StartNew();
    private TimeSpan cpu = Process.GetCurrentProcess().TotalProcessorTime;
    private long allocated = GC.GetTotalAllocatedBytes();
    private TimeSpan lastWall;

    private PhaseTimes()
    {
    }

    /// <summary>A timer when the variable is set, otherwise null (every call through <c>?.</c> is then free).</summary>
    public static PhaseTimes? Start()
    {
        var value = Environment.GetEnvironmentVariable(Variable);
        return string.IsNullOrEmpty(value) || value == "0" ? null : new PhaseTimes();
    }

    /// <summary>Writes the line of the stage that ends now and starts the next one.</summary>
    public void End(string stage)
    {
        var wall = clock.Elapsed;
        var nowCpu = Process.GetCurrentProcess().TotalProcessorTime;
        var nowAllocated = GC.GetTotalAllocatedBytes();
        Console.Error.WriteLine(string.Format(
            CultureInfo.InvariantCulture,
            "timing: {0,-28} {1,8:F1} ms wall {2,8:F1} ms cpu {3,8:F1} MB allocated {4,8:F1} MB heap {5,8:F1} MB resident",
            stage,
            (wall - lastWall).TotalMilliseconds,
            (nowCpu - cpu).TotalMilliseconds,
            (nowAllocated - allocated) / 1048576.0,
            GC.GetTotalMemory(false) / 1048576.0,
            Environment.WorkingSet / 1048576.0));
        lastWall = wall;
        cpu = nowCpu;
        allocated = nowAllocated;
    }
}
