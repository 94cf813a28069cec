using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>Reads a study file's bytes, with its size limit; a file that cannot be read is one message.</summary>
public static class StudyFile
{
    /// <summary>The largest study file read (16 MiB): a study is text written by a person.</summary>
    public const long MaxBytes = 16L * 1024 * 1024;

    /// <summary>The file's bytes, or null with the reason reported at <paramref name="display"/>.</summary>
    public static byte[]? Read(string path, string display, DiagnosticBag diagnostics)
    {
        try
        {
            if (new FileInfo(path) is { Exists: true, Length: > MaxBytes } big)
            {
                diagnostics.FileTooLarge(SourceLocation.None(display), "the study file", path, big.Length, MaxBytes);
                return null;
            }

            return File.ReadAllBytes(path);
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            diagnostics.FileNotFound(SourceLocation.None(display), "study file", path);
            return null;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            diagnostics.FileUnreadable(SourceLocation.None(display), path, e.Message);
            return null;
        }
    }
}
