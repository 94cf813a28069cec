using StudyPress.Data;

namespace StudyPress.Reproducibility;

/// <summary>
/// What verification may hash: only regular files. Opening a named pipe blocks until a writer comes
/// and a device such as <c>/dev/zero</c> never ends, so a recorded path is examined before it is
/// opened, at its real path (links and '..' resolved as the kernel does), by the data readers' own
/// check (<see cref="FileKinds"/>: statx(2) on Linux).
/// </summary>
internal static class RegularFiles
{
    /// <summary>Null for a regular file or a missing one (the caller's open reports that); otherwise what the entry is.</summary>
    public static string? NotRegular(string path) => FileKinds.Lstat(PathGuard.RealPath(path)) switch
    {
        FileKind.Regular or FileKind.Missing or FileKind.Unknown => null,
        var kind => FileKinds.Describe(kind),
    };
}
