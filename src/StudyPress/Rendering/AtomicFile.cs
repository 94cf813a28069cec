using System.Globalization;

namespace StudyPress.Rendering;

/// <summary>
/// Writes files by writing a temporary file beside each (<c>.NAME.PID.N.tmp</c>, N counting the
/// process's writes, so no two writes share a name) and renaming it into place, so a reader sees
/// the old file or the new one, never half of one. An interrupted write (the process killed
/// between creating the temporary file and the rename) can leave the temporary file behind; the
/// next write of the same target removes such leftovers of processes that no longer run.
/// </summary>
public static class AtomicFile
{
    private static long writes;

    /// <summary>Writes one file atomically.</summary>
    public static void Write(string path, byte[] bytes) => new OutputSet().Add(path, bytes).Commit();

    /// <summary>The temporary file name stem a process uses for <paramref name="full"/> (tests create leftovers with it).</summary>
    public static string TemporaryPath(string full, int processId) =>
        Path.Combine(Path.GetDirectoryName(full)!, "." + Path.GetFileName(full) + "." + processId.ToString(CultureInfo.InvariantCulture) + ".tmp");

    /// <summary>A temporary name for one write of <paramref name="full"/>, unique within this process and across processes.</summary>
    internal static string NewTemporaryPath(string full)
    {
        var n = Interlocked.Increment(ref writes);
        return Path.Combine(
            Path.GetDirectoryName(full)!,
            "." + Path.GetFileName(full) + "." + Environment.ProcessId.ToString(CultureInfo.InvariantCulture) + "." + n.ToString(CultureInfo.InvariantCulture) + ".tmp");
    }

    /// <summary>Deletes <c>.NAME.PID[.N].tmp</c> files whose process is gone (left by a killed build).</summary>
    internal static void RemoveStaleTemporaries(string dir, string name)
    {
        var prefix = "." + name + ".";
        IEnumerable<string> candidates;
        try
        {
            candidates = Directory.EnumerateFiles(dir, prefix + "*.tmp").ToList();
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return;
        }

        foreach (var file in candidates)
        {
            var middle = Path.GetFileName(file)[prefix.Length..^".tmp".Length].Split('.');
            if (middle.Length > 2
                || middle.Skip(1).Any(p => !long.TryParse(p, NumberStyles.None, CultureInfo.InvariantCulture, out _))
                || !int.TryParse(middle[0], NumberStyles.None, CultureInfo.InvariantCulture, out var pid)
                || pid == Environment.ProcessId
                || IsRunning(pid))
            {
                continue;
            }

            try
            {
                File.Delete(file);
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                // Not ours to fight over; the next build tries again.
            }
        }
    }

    private static bool IsRunning(int pid)
    {
        try
        {
            using var p = System.Diagnostics.Process.GetProcessById(pid);
            return !p.HasExited;
        }
        catch (ArgumentException)
        {
            return false;
        }
        catch (InvalidOperationException)
        {
            return false;
        }
    }
}

/// <summary>
/// Several files committed together or not at all: every new file is first written completely to
/// its own temporary file; only when all are written are they renamed into place. If writing any
/// of them fails, the temporary files are removed and every target is left as it was. If a rename
/// fails part-way, the targets already replaced get their previous bytes back (kept in a
/// temporary copy until the commit is over) and targets that did not exist are removed again.
/// </summary>
public sealed class OutputSet
{
    private readonly List<(string Target, byte[] Bytes)> files = [];

    public int Count => files.Count;

    public OutputSet Add(string path, byte[] bytes)
    {
        var full = Path.GetFullPath(path);
        if (files.Any(f => string.Equals(f.Target, full, StringComparison.Ordinal)))
        {
            throw new InvalidOperationException("two outputs of one build would both write " + full);
        }

        files.Add((full, bytes));
        return this;
    }

    /// <summary>Writes every file, or none; an IO error is rethrown after the targets are restored.</summary>
    public void Commit()
    {
        var temps = new List<string>();
        var backups = new Dictionary<string, string>(StringComparer.Ordinal);
        var replaced = new List<string>();
        try
        {
            // 1. Every new file complete on disk beside its target.
            foreach (var (target, bytes) in files)
            {
                var dir = Path.GetDirectoryName(target)!;
                Directory.CreateDirectory(dir);
                AtomicFile.RemoveStaleTemporaries(dir, Path.GetFileName(target));
                var temp = AtomicFile.NewTemporaryPath(target);
                temps.Add(temp);
                using var fs = new FileStream(temp, FileMode.CreateNew, FileAccess.Write, FileShare.None);
                fs.Write(bytes);
                fs.Flush(flushToDisk: true);
            }

            // 2. With several files, keep the previous ones to restore after a failed rename.
            if (files.Count > 1)
            {
                foreach (var (target, _) in files.Where(f => File.Exists(f.Target)))
                {
                    var backup = AtomicFile.NewTemporaryPath(target);
                    File.Copy(target, backup);
                    backups[target] = backup;
                }
            }

            // 3. Rename them into place.
            for (var i = 0; i < files.Count; i++)
            {
                File.Move(temps[i], files[i].Target, overwrite: true);
                replaced.Add(files[i].Target);
            }
        }
        catch
        {
            Restore(replaced, backups);
            throw;
        }
        finally
        {
            foreach (var leftover in temps.Concat(backups.Values))
            {
                TryDelete(leftover);
            }
        }
    }

    private static void Restore(List<string> replaced, Dictionary<string, string> backups)
    {
        foreach (var target in replaced)
        {
            try
            {
                if (backups.TryGetValue(target, out var backup))
                {
                    File.Move(backup, target, overwrite: true);
                }
                else
                {
                    File.Delete(target);
                }
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                // Best effort: the original error is what the user sees.
            }
        }
    }

    private static void TryDelete(string path)
    {
        try
        {
            if (File.Exists(path))
            {
                File.Delete(path);
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // Left for the stale-temporary sweep of the next write.
        }
    }
}
