namespace StudyPress.Data;

/// <summary>
/// Keeps data paths inside the study's folder tree: no absolute paths, no '..' that climbs out,
/// and no symbolic link (file or folder) whose target lies outside, unless explicitly allowed.
/// </summary>
public static class PathGuard
{
    public enum Verdict
    {
        Inside,
        Absolute,
        Escapes,
    }

    public static Verdict Check(string studyDirectory, string relative, out string fullPath)
    {
        fullPath = Path.GetFullPath(Path.Combine(studyDirectory, relative));
        if (Path.IsPathRooted(relative) || relative.StartsWith('~'))
        {
            return Verdict.Absolute;
        }

        var root = Path.GetFullPath(studyDirectory);
        if (!IsUnder(root, fullPath))
        {
            return Verdict.Escapes;
        }

        // Compare real locations (every symbolic link on the way resolved).
        return IsUnder(RealPath(root), RealPath(fullPath)) ? Verdict.Inside : Verdict.Escapes;
    }

    /// <summary>The path with every symbolic-link component resolved (like realpath(3)).</summary>
    public static string RealPath(string path)
    {
        var full = Path.GetFullPath(path);
        var root = Path.GetPathRoot(full) ?? "/";
        var parts = new Queue<string>(full[root.Length..].Split(Path.DirectorySeparatorChar, StringSplitOptions.RemoveEmptyEntries));
        var current = root;
        var hops = 0;
        while (parts.Count > 0)
        {
            var next = Path.Combine(current, parts.Dequeue());
            FileSystemInfo info = new FileInfo(next);
            if (!info.Exists)
            {
                info = new DirectoryInfo(next);
            }

            if (info.Exists && info.LinkTarget is { } target && hops++ < 40)
            {
                var resolved = Path.GetFullPath(Path.Combine(current, target));
                var rest = parts.ToArray();
                var rroot = Path.GetPathRoot(resolved) ?? "/";
                parts = new Queue<string>(resolved[rroot.Length..].Split(Path.DirectorySeparatorChar, StringSplitOptions.RemoveEmptyEntries).Concat(rest));
                current = rroot;
                continue;
            }

            current = next;
        }

        return current;
    }

    private static bool IsUnder(string root, string path)
    {
        var rel = Path.GetRelativePath(root, path);
        return rel != ".." && !rel.StartsWith(".." + Path.DirectorySeparatorChar, StringComparison.Ordinal) && !Path.IsPathRooted(rel);
    }
}
