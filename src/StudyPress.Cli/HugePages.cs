using System.Globalization;
using System.Runtime.InteropServices;

namespace StudyPress.Cli;

/// <summary>
/// Advises Linux to back the garbage-collected heap's large allocations with transparent huge
/// pages (docs/performance.md, "Huge pages"). A study of ten million rows allocates and touches
/// about a gigabyte of arrays once; on a virtual machine each first touch of a 4 KB page is a page
/// fault costing several microseconds, which made up a third of that study's time. The heap's
/// address range is reserved at start-up; advising the whole reservation once lets the kernel
/// fault the 2 MB-aligned parts of every large array in 2 MB at a time.
/// </summary>
/// <remarks>
/// Advice only: where transparent huge pages are off (or set to <c>never</c>), on other systems,
/// or when anything here fails, nothing changes and nothing is reported. Reports do not depend on
/// it. <c>STUDYPRESS_HUGE_PAGES=0</c> in the environment turns it off (for measuring).
/// </remarks>
internal static class HugePages
{
    private const int MadviseHugePage = 14; // MADV_HUGEPAGE, linux/mman.h

    /// <summary>The heap's reservation is the only anonymous mapping this large at start-up.</summary>
    internal const long ReservationThreshold = 1L << 30;

    /// <summary>Advises the heap's reservation; returns the number of bytes advised.</summary>
    public static long AdviseHeap()
    {
        if (!OperatingSystem.IsLinux() || Environment.GetEnvironmentVariable("STUDYPRESS_HUGE_PAGES") == "0")
        {
            return 0;
        }

        try
        {
            long advised = 0;
            foreach (var (start, length) in Reservations(File.ReadLines("/proc/self/maps")))
            {
                if (Native.madvise((nint)start, (nuint)length, MadviseHugePage) == 0)
                {
                    advised += length;
                }
            }

            return advised;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or DllNotFoundException or EntryPointNotFoundException)
        {
            return 0;
        }
    }

    /// <summary>
    /// The private anonymous mappings of at least <see cref="ReservationThreshold"/> bytes among
    /// lines of <c>/proc/PID/maps</c> (<c>start-end perms offset dev inode [path]</c>); lines of
    /// another shape are skipped.
    /// </summary>
    internal static IEnumerable<(ulong Start, long Length)> Reservations(IEnumerable<string> mapsLines)
    {
        foreach (var line in mapsLines)
        {
            var fields = line.Split(' ', StringSplitOptions.RemoveEmptyEntries);
            if (fields.Length != 5 || fields[1].Length != 4 || fields[1][3] != 'p' || fields[4] != "0")
            {
                continue; // a file, a named area ([heap], [stack]) or a shared mapping
            }

            int dash = fields[0].IndexOf('-', StringComparison.Ordinal);
            if (dash <= 0
                || !ulong.TryParse(fields[0].AsSpan(0, dash), NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture, out var start)
                || !ulong.TryParse(fields[0].AsSpan(dash + 1), NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture, out var end)
                || end <= start
                || end - start < ReservationThreshold
                || end - start > long.MaxValue)
            {
                continue;
            }

            yield return (start, (long)(end - start));
        }
    }

    private static class Native
    {
        [DllImport("libc", SetLastError = false)]
        [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
        internal static extern int madvise(nint address, nuint length, int advice);
    }
}
