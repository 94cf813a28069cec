using System.Runtime.InteropServices;

namespace StudyPress.Reproducibility;

/// <summary>
/// What verification may hash: only regular files. Opening a named pipe blocks until a writer comes
/// and a device such as <c>/dev/zero</c> never ends, so a recorded path is examined before it is
/// opened: on Linux with statx(2) (links followed, as opening would), elsewhere with .NET's file
/// information (which tells folders and files apart but not special files).
/// </summary>
internal static class RegularFiles
{
    private const int AtFdCwd = -100;
    private const uint StatxType = 0x1;
    private const int StatxModeOffset = 28;
    private const int StatxSize = 256;

    private static bool statxMissing;

    /// <summary>Null for a regular file or a missing one (the caller's open reports that); otherwise what the entry is.</summary>
    public static string? NotRegular(string path)
    {
        if (Directory.Exists(path))
        {
            return "a folder";
        }

        if (OperatingSystem.IsLinux() && !statxMissing)
        {
            var buffer = new byte[StatxSize];
            try
            {
                if (Native.statx(AtFdCwd, path, 0, StatxType, buffer) != 0)
                {
                    return null;
                }

                return (BitConverter.ToUInt16(buffer, StatxModeOffset) & 0xF000) switch
                {
                    0x8000 => null,
                    0x4000 => "a folder",
                    0x1000 => "a named pipe (FIFO)",
                    0x2000 => "a character device",
                    0x6000 => "a block device",
                    0xC000 => "a socket",
                    _ => "not a regular file",
                };
            }
            catch (Exception e) when (e is EntryPointNotFoundException or DllNotFoundException)
            {
                statxMissing = true;
            }
        }

        return null;
    }

    private static class Native
    {
        [DllImport("libc", SetLastError = true)]
        [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
        internal static extern int statx(int dirfd, [MarshalAs(UnmanagedType.LPUTF8Str)] string path, int flags, uint mask, byte[] buffer);
    }
}
