using System.Runtime.InteropServices;

namespace StudyPress.Data;

/// <summary>What a directory entry is, as lstat(2) tells it (links are not followed).</summary>
public enum FileKind
{
    /// <summary>No such entry (or a component on the way is not a folder).</summary>
    Missing,
    Regular,
    Directory,
    SymbolicLink,
    Fifo,
    CharacterDevice,
    BlockDevice,
    Socket,

    /// <summary>The entry could not be examined (for example permission denied on a folder on the way).</summary>
    Unknown,
}

/// <summary>
/// The type of a directory entry without opening it: opening a named pipe for reading blocks until
/// a writer appears, and a device such as <c>/dev/zero</c> never ends, so data paths are examined
/// first. On Linux this is statx(2) (its record has the same layout on every architecture); elsewhere
/// .NET's file information, which tells links, folders and files apart but not special files.
/// </summary>
public static class FileKinds
{
    private const int AtFdCwd = -100;
    private const int AtSymlinkNoFollow = 0x100;
    private const uint StatxType = 0x1;
    private const int StatxModeOffset = 28;
    private const int StatxSize = 256;
    private const int ENOENT = 2;
    private const int ENOTDIR = 20;
    private const int ENAMETOOLONG = 36;
    private const int ENOSYS = 38;

    private static bool statxMissing;

    /// <summary>The kind of the entry at <paramref name="path"/>, not following a final symbolic link.</summary>
    public static FileKind Lstat(string path)
    {
        if (OperatingSystem.IsLinux() && !statxMissing)
        {
            var buffer = new byte[StatxSize];
            try
            {
                if (Native.statx(AtFdCwd, path, AtSymlinkNoFollow, StatxType, buffer) == 0)
                {
                    return FromMode(BitConverter.ToUInt16(buffer, StatxModeOffset));
                }

                return Marshal.GetLastPInvokeError() switch
                {
                    ENOENT or ENOTDIR or ENAMETOOLONG => FileKind.Missing,
                    ENOSYS => Managed(path),
                    _ => FileKind.Unknown,
                };
            }
            catch (Exception e) when (e is EntryPointNotFoundException or DllNotFoundException)
            {
                statxMissing = true;
            }
        }

        return Managed(path);
    }

    /// <summary>Words for a kind that is not a regular file or folder, for messages.</summary>
    public static string Describe(FileKind kind) => kind switch
    {
        FileKind.Fifo => "a named pipe (FIFO)",
        FileKind.CharacterDevice => "a character device",
        FileKind.BlockDevice => "a block device",
        FileKind.Socket => "a socket",
        FileKind.Directory => "a folder",
        FileKind.SymbolicLink => "a symbolic link",
        _ => "not a regular file",
    };

    private static FileKind FromMode(ushort mode) => (mode & 0xF000) switch
    {
        0x8000 => FileKind.Regular,
        0x4000 => FileKind.Directory,
        0xA000 => FileKind.SymbolicLink,
        0x1000 => FileKind.Fifo,
        0x2000 => FileKind.CharacterDevice,
        0x6000 => FileKind.BlockDevice,
        0xC000 => FileKind.Socket,
        _ => FileKind.Unknown,
    };

    private static FileKind Managed(string path)
    {
        try
        {
            var info = new FileInfo(path);
            if (info.LinkTarget is not null)
            {
                return FileKind.SymbolicLink;
            }

            if (Directory.Exists(path))
            {
                return FileKind.Directory;
            }

            return info.Exists ? FileKind.Regular : FileKind.Missing;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return FileKind.Unknown;
        }
    }

    private static class Native
    {
        [DllImport("libc", SetLastError = true)]
        [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
        internal static extern int statx(int dirfd, [MarshalAs(UnmanagedType.LPUTF8Str)] string path, int flags, uint mask, byte[] buffer);
    }
}
