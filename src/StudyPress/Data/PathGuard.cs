using StudyPress.Binding;
using StudyPress.Diagnostics;

namespace StudyPress.Data;

/// <summary>
/// Keeps data paths inside the study's folder tree: no absolute paths, and no path whose real
/// location (every symbolic link followed, '..' applied the way the kernel applies it) lies outside,
/// unless explicitly allowed. The resolved real path is what is then read and hashed, so that the
/// file checked, the file hashed and the file read are one.
/// </summary>
public static class PathGuard
{
    /// <summary>Symbolic links followed while resolving one path before giving up (Linux's own limit).</summary>
    public const int MaxLinks = 40;

    public enum Verdict
    {
        Inside,
        Absolute,
        Escapes,

        /// <summary>More than <see cref="MaxLinks"/> symbolic links on the way (a loop).</summary>
        LinkLoop,

        /// <summary>A component on the way does not exist or is not a folder.</summary>
        Missing,

        /// <summary>A component on the way could not be examined (permissions).</summary>
        Unreadable,
    }

    /// <summary>
    /// Checks a relative data path; <paramref name="fullPath"/> is its real location (resolved like the
    /// kernel does, see <see cref="Resolve"/>), or the textual full path when it cannot be resolved.
    /// </summary>
    public static Verdict Check(string studyDirectory, string relative, out string fullPath)
    {
        var verdict = Resolve(studyDirectory, relative, out fullPath);
        if (Path.IsPathRooted(relative) || relative.StartsWith('~'))
        {
            return Verdict.Absolute;
        }

        // Leaving the tree is reported first, also for a path that goes on to a missing file or a loop.
        if (!IsUnder(RealPath(Path.GetFullPath(studyDirectory)), Path.GetFullPath(fullPath)))
        {
            return Verdict.Escapes;
        }

        return verdict;
    }

    /// <summary>
    /// Resolves <paramref name="path"/> (relative to <paramref name="baseDirectory"/>) component by
    /// component as the kernel does: each symbolic link is replaced by its target when it is met (an
    /// absolute target restarts at the root, a relative one continues from the link's folder), and
    /// '..' goes up from the prefix resolved so far, not from the text written. Returns
    /// <see cref="Verdict.Inside"/> with the real path, or why it cannot be resolved.
    /// </summary>
    public static Verdict Resolve(string baseDirectory, string path, out string realPath)
    {
        var start = Path.IsPathRooted(path) ? Path.GetPathRoot(path)! : RealPath(Path.GetFullPath(baseDirectory));
        return Walk(start, Split(Path.IsPathRooted(path) ? path[Path.GetPathRoot(path)!.Length..] : path), out realPath);
    }

    /// <summary>
    /// The path with every symbolic link resolved and '..' applied as the kernel applies it (like
    /// realpath(3)); the textual full path when it cannot be resolved (missing, loop).
    /// </summary>
    public static string RealPath(string path)
    {
        var full = Path.IsPathRooted(path) ? path : Path.Join(Directory.GetCurrentDirectory(), path);
        var root = Path.GetPathRoot(full) ?? "/";
        return Walk(root, Split(full[root.Length..]), out var real) == Verdict.Inside ? real : Path.GetFullPath(full);
    }

    /// <summary>
    /// Finds the data file of a dataset: confined to the study's folder tree unless
    /// <paramref name="allowOutside"/>, resolved to its real path, and a regular file (never a folder,
    /// named pipe, device or socket, which are reported before anything is opened). Null after reporting.
    /// </summary>
    public static string? Locate(string studyDirectory, DatasetSpec spec, bool allowOutside, DiagnosticBag diagnostics)
    {
        var verdict = allowOutside ? Resolve(studyDirectory, spec.Path, out var real) : Check(studyDirectory, spec.Path, out real);
        switch (verdict)
        {
            case Verdict.Absolute:
                diagnostics.PathAbsolute(spec.PathLocation, spec.Path);
                return null;
            case Verdict.Escapes:
                diagnostics.PathEscapes(spec.PathLocation, spec.Path);
                return null;
            case Verdict.LinkLoop:
                diagnostics.DataPathLinkLoop(spec.PathLocation, spec.Path, MaxLinks);
                return null;
            case Verdict.Missing:
                diagnostics.FileNotFound(spec.PathLocation, "data file", spec.Path);
                return null;
            case Verdict.Unreadable:
                diagnostics.FileUnreadable(spec.PathLocation, spec.Path, "permission denied on a folder on the way");
                return null;
        }

        switch (FileKinds.Lstat(real))
        {
            case FileKind.Regular:
                return real;
            case FileKind.Missing:
                diagnostics.FileNotFound(spec.PathLocation, "data file", spec.Path);
                return null;
            case FileKind.Directory:
                diagnostics.PathIsFolder(spec.PathLocation, spec.Path);
                return null;
            case FileKind.Unknown:
                diagnostics.FileUnreadable(spec.PathLocation, spec.Path, "its type cannot be examined");
                return null;
            case var kind:
                diagnostics.DataPathNotRegular(spec.PathLocation, spec.Path, FileKinds.Describe(kind));
                return null;
        }
    }

    private static Verdict Walk(string root, IEnumerable<string> components, out string realPath)
    {
        var pending = new LinkedList<string>(components);
        var current = root;
        var links = 0;
        while (pending.First is { } first)
        {
            var part = first.Value;
            pending.RemoveFirst();
            if (part is "" or ".")
            {
                continue;
            }

            if (part == "..")
            {
                current = Path.GetDirectoryName(current) ?? current;
                continue;
            }

            var next = Path.Join(current, part);
            var kind = FileKinds.Lstat(next);
            switch (kind)
            {
                case FileKind.Missing:
                    realPath = Path.Join([next, .. pending]);
                    return Verdict.Missing;
                case FileKind.Unknown:
                    realPath = Path.Join([next, .. pending]);
                    return Verdict.Unreadable;
                case FileKind.SymbolicLink:
                    {
                        var target = new FileInfo(next).LinkTarget;
                        if (++links > MaxLinks || target is null)
                        {
                            realPath = Path.Join([next, .. pending]);
                            return target is null ? Verdict.Missing : Verdict.LinkLoop;
                        }

                        if (Path.IsPathRooted(target))
                        {
                            current = Path.GetPathRoot(target)!;
                            target = target[current.Length..];
                        }

                        foreach (var t in Split(target).Reverse())
                        {
                            pending.AddFirst(t);
                        }

                        continue;
                    }

                case FileKind.Directory:
                    current = next;
                    continue;
                default:
                    // A file: it must be the last component ("file/..", "file/x" do not exist).
                    if (pending.Any(p => p is not ("" or ".")))
                    {
                        realPath = Path.Join([next, .. pending]);
                        return Verdict.Missing;
                    }

                    current = next;
                    continue;
            }
        }

        realPath = current;
        return Verdict.Inside;
    }

    private static string[] Split(string path) =>
        path.Split([Path.DirectorySeparatorChar, Path.AltDirectorySeparatorChar], StringSplitOptions.RemoveEmptyEntries);

    private static bool IsUnder(string root, string path)
    {
        var rel = Path.GetRelativePath(root, path);
        return rel != ".." && !rel.StartsWith(".." + Path.DirectorySeparatorChar, StringComparison.Ordinal) && !Path.IsPathRooted(rel);
    }
}
