using System.Diagnostics;
using System.Globalization;

namespace StudyPress;

/// <summary>
/// A developer's look at where a build's time goes: when the environment variable
/// <c>STUDYPRESS_TIMINGS</c> is <c>1</c>, each stage of the command line and of a compilation
/// writes one line to standard error when it ends, <c>studypress: time: STAGE +X ms (Y ms since
/// the process started; CPU +C ms, allocated +A MB, heap H MB, resident R MB, huge pages P MB)</c>:
/// its wall time, the process's CPU time in it (all threads), the managed memory allocated in it,
/// and the GC heap, the process's resident memory and (on Linux) the part of it in transparent huge
/// pages after it. Off (one environment read, then nothing: no clock
/// or counter is read) when the variable is unset; it never touches a report, a manifest or any
/// other output (docs/performance.md, "Start-up" and "Where the time goes").
/// </summary>
public static class StageTimes
{
    public const string Variable = "STUDYPRESS_TIMINGS";

    private static readonly bool On = Environment.GetEnvironmentVariable(Variable) == "1";

    private static readonly Lock Gate = new();

    private static long last = Stopwatch.GetTimestamp();

    private static TimeSpan lastCpu = On ? Process.GetCurrentProcess().TotalProcessorTime : TimeSpan.Zero;

    private static long lastAllocated = On ? GC.GetTotalAllocatedBytes() : 0;

    /// <summary>True when the variable asks for the lines.</summary>
    public static bool Enabled => On;

    /// <summary>Ends a stage: writes its time and memory since the previous mark (nothing when off).</summary>
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
            using var process = Process.GetCurrentProcess();
            var sinceStart = (DateTime.Now - process.StartTime).TotalMilliseconds;
            var cpu = process.TotalProcessorTime;
            var allocated = GC.GetTotalAllocatedBytes();
            const double MiB = 1048576.0;
            Console.Error.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"studypress: time: {stage} +{step:F1} ms ({sinceStart:F0} ms since the process started; CPU +{(cpu - lastCpu).TotalMilliseconds:F1} ms, allocated +{(allocated - lastAllocated) / MiB:F1} MB, heap {GC.GetTotalMemory(false) / MiB:F1} MB, resident {Environment.WorkingSet / MiB:F1} MB{HugePages()})"));
            lastCpu = cpu;
            lastAllocated = allocated;
        }
    }

    /// <summary>", huge pages P MB" from /proc/self/smaps_rollup on Linux; empty elsewhere.</summary>
    private static string HugePages()
    {
        const string Key = "AnonHugePages:";
        try
        {
            if (!OperatingSystem.IsLinux())
            {
                return string.Empty;
            }

            foreach (var line in File.ReadLines("/proc/self/smaps_rollup"))
            {
                if (line.StartsWith(Key, StringComparison.Ordinal)
                    && long.TryParse(line.AsSpan(Key.Length).Trim().TrimEnd("kB").Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out var kb))
                {
                    return string.Create(CultureInfo.InvariantCulture, $", huge pages {kb / 1024.0:F1} MB");
                }
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
        }

        return string.Empty;
    }
}
