using System.ComponentModel;
using System.Diagnostics;
using StudyPress.Data;
using StudyPress.Diagnostics;
using StudyPress.Reproducibility;

namespace StudyPress.Comparison;

/// <summary>
/// A study as committed at a revision, written into a temporary folder that mirrors its layout
/// (the study and the data files its header names, read with <c>git cat-file</c>; the working
/// tree is never touched). Disposing removes the folder.
/// </summary>
public sealed class RevisionCheckout : IDisposable
{
    internal RevisionCheckout(string root, string studyPath, string label, string revision)
    {
        Root = root;
        StudyPath = studyPath;
        Label = label;
        Revision = revision;
    }

    /// <summary>The temporary folder (the repository's root as far as the study needs it).</summary>
    public string Root { get; }

    public string StudyPath { get; }

    /// <summary>REV:path/in/repository/study.md, for messages and output.</summary>
    public string Label { get; }

    public string Revision { get; }

    /// <summary>Turns a path inside the temporary folder into REV:path for messages.</summary>
    public string Relabel(string path)
    {
        var full = Path.GetFullPath(path);
        var prefix = Root.TrimEnd(Path.DirectorySeparatorChar) + Path.DirectorySeparatorChar;
        return full.StartsWith(prefix, StringComparison.Ordinal)
            ? Revision + ":" + full[prefix.Length..].Replace('\\', '/')
            : path;
    }

    public void Dispose()
    {
        try
        {
            Directory.Delete(Root, recursive: true);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // A temporary folder left behind is harmless; the next run uses a fresh name.
        }
    }
}

/// <summary>Reads a study and its inputs from a git revision (see <see cref="RevisionCheckout"/>).</summary>
public static class GitRevision
{
    public static RevisionCheckout? Checkout(string studyPath, string revision, DiagnosticBag diagnostics)
    {
        var at = SourceLocation.None(studyPath);
        var full = Path.GetFullPath(studyPath);
        var dir = Path.GetDirectoryName(full)!;
        if (!Directory.Exists(dir))
        {
            diagnostics.FileNotFound(at, "study file", studyPath);
            return null;
        }

        if (revision.StartsWith('-'))
        {
            diagnostics.GitRevisionMissing(at, revision, studyPath, "a revision cannot start with '-'");
            return null;
        }

        var top = Git(dir, diagnostics, at, "rev-parse", "--show-toplevel");
        if (top is null)
        {
            return null;
        }

        if (top.Exit != 0)
        {
            diagnostics.NotInGitRepository(at, studyPath);
            return null;
        }

        var root = top.Text.Trim();
        var relative = Path.GetRelativePath(PathGuard.RealPath(root), PathGuard.RealPath(full)).Replace('\\', '/');
        if (relative.StartsWith("../", StringComparison.Ordinal))
        {
            diagnostics.NotInGitRepository(at, studyPath);
            return null;
        }

        if (Git(root, diagnostics, at, "rev-parse", "--verify", "--quiet", revision + "^{commit}") is not { } commit)
        {
            return null;
        }

        if (commit.Exit != 0)
        {
            diagnostics.GitRevisionMissing(at, revision, relative, "no such revision in this repository");
            return null;
        }

        if (Git(root, diagnostics, at, "cat-file", "-e", revision + ":" + relative) is not { } exists)
        {
            return null;
        }

        if (exists.Exit != 0)
        {
            diagnostics.GitRevisionMissing(at, revision, relative, "the file is not in that commit");
            return null;
        }

        var temp = Path.Combine(Path.GetTempPath(), "studypress-diff-" + Guid.NewGuid().ToString("N"));
        var checkout = new RevisionCheckout(temp, Path.Combine(temp, relative), revision + ":" + relative, revision);
        var ok = false;
        try
        {
            if (!Blob(root, revision + ":" + relative, checkout.StudyPath, diagnostics, at))
            {
                return null;
            }

            // The data files the older header names, confined to the study's folder as a build is.
            var header = StudyHeaderReader.Read(checkout.StudyPath, new DiagnosticBag());
            var studyDir = Path.GetDirectoryName(checkout.StudyPath)!;
            foreach (var d in header?.Header.Datasets ?? [])
            {
                // Only the study file is extracted yet, so the data file is missing (and no link is on the way).
                if (PathGuard.Check(studyDir, d.Path, out _) is not (PathGuard.Verdict.Inside or PathGuard.Verdict.Missing))
                {
                    continue; // the build reports it at the data path
                }

                var target = Path.GetFullPath(Path.Combine(studyDir, d.Path));

                var inRepo = Path.GetRelativePath(temp, target).Replace('\\', '/');
                if (Git(root, diagnostics, at, "cat-file", "-e", revision + ":" + inRepo) is not { } present)
                {
                    return null;
                }

                if (present.Exit != 0)
                {
                    // At the older header's data path, named as REV:path.
                    var where = d.PathLocation with { Path = checkout.Relabel(d.PathLocation.Path) };
                    diagnostics.DiffDataMissingInRevision(where, revision, d.Path);
                    return null;
                }

                if (!Blob(root, revision + ":" + inRepo, target, diagnostics, at))
                {
                    return null;
                }
            }

            ok = true;
            return checkout;
        }
        finally
        {
            if (!ok)
            {
                checkout.Dispose();
            }
        }
    }

    private sealed record GitOutput(int Exit, string Text, string Error);

    private static GitOutput? Git(string workingDirectory, DiagnosticBag diagnostics, SourceLocation at, params string[] args)
    {
        try
        {
            using var process = Start(workingDirectory, args);
            var error = process.StandardError.ReadToEndAsync();
            var text = process.StandardOutput.ReadToEnd();
            process.WaitForExit();
            return new GitOutput(process.ExitCode, text, error.Result);
        }
        catch (Win32Exception e)
        {
            diagnostics.GitUnavailable(at, e.Message);
            return null;
        }
    }

    /// <summary>Streams one blob into a file (bounded memory, whatever its size).</summary>
    private static bool Blob(string root, string spec, string target, DiagnosticBag diagnostics, SourceLocation at)
    {
        Directory.CreateDirectory(Path.GetDirectoryName(target)!);
        try
        {
            using var process = Start(root, ["cat-file", "blob", spec]);
            var error = process.StandardError.ReadToEndAsync();
            using (var file = File.Create(target))
            {
                process.StandardOutput.BaseStream.CopyTo(file);
            }

            process.WaitForExit();
            if (process.ExitCode != 0)
            {
                var colon = spec.IndexOf(':', StringComparison.Ordinal);
                diagnostics.GitRevisionMissing(at, spec[..colon], spec[(colon + 1)..], error.Result.Trim());
                return false;
            }

            return true;
        }
        catch (Win32Exception e)
        {
            diagnostics.GitUnavailable(at, e.Message);
            return false;
        }
    }

    private static Process Start(string workingDirectory, IEnumerable<string> args)
    {
        var info = new ProcessStartInfo("git")
        {
            WorkingDirectory = workingDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        info.ArgumentList.Add("--no-pager");
        foreach (var a in args)
        {
            info.ArgumentList.Add(a);
        }

        info.Environment["GIT_TERMINAL_PROMPT"] = "0";
        return Process.Start(info) ?? throw new Win32Exception("git did not start");
    }
}
