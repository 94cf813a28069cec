using System.Globalization;

namespace StudyPress.Rendering;

/// <summary>
/// Writes a file by writing a temporary file beside it (<c>.NAME.PID.tmp</c>) and renaming it into
/// place, so a reader sees the old file or the new one, never half of one. An interrupted write
/// (the process killed between creating the temporary file and the rename) can leave the temporary
/// file behind; the next write of the same target removes such leftovers of processes that no
/// longer run.
/// </summary>
public static class AtomicFile
{
    public static void Write(string path, byte[] bytes)
    {
        var full = Path.GetFullPath(path);
        var dir = Path.GetDirectoryName(full)!;
        Directory.CreateDirectory(dir);
        RemoveStaleTemporaries(dir, Path.GetFileName(full));
        var temp = TemporaryPath(full, Environment.ProcessId);
        try
        {
            using (var fs = new FileStream(temp, FileMode.Create, FileAccess.Write, FileShare.None))
            {
                fs.Write(bytes);
                fs.Flush(flushToDisk: true);
            }

            File.Move(temp, full, overwrite: true);
        }
        finally
        {
            if (File.Exists(temp))
            {
                File.Delete(temp);
            }
        }
    }

    /// <summary>The temporary file a process writes before renaming it to <paramref name="full"/>.</summary>
    public static string TemporaryPath(string full, int processId) =>
        Path.Combine(Path.GetDirectoryName(full)!, "." + Path.GetFileName(full) + "." + processId.ToString(CultureInfo.InvariantCulture) + ".tmp");

    /// <summary>Deletes <c>.NAME.PID.tmp</c> files whose process is gone (left by a killed build).</summary>
    private static void RemoveStaleTemporaries(string dir, string name)
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
            var middle = Path.GetFileName(file)[prefix.Length..^".tmp".Length];
            if (!int.TryParse(middle, NumberStyles.None, CultureInfo.InvariantCulture, out var pid) || pid == Environment.ProcessId || IsRunning(pid))
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
