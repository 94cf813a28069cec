using StudyPress.Diagnostics;
using StudyPress.Rendering;

namespace StudyPress.Cli;

/// <summary>
/// Where <c>--docx</c> and <c>--latex</c> write each study's outputs, checked before anything is
/// compiled. One study: <c>--docx FILE</c> is that file (it must end in <c>.docx</c>). Several
/// studies: <c>--docx DIR</c> is a folder and each study's document is
/// <c>DIR/STUDYPATH.docx</c>, STUDYPATH being the study's path relative to the current folder
/// without <c>.md</c> (the figures' rule, <see cref="FigurePaths.FolderFor"/>). <c>--latex DIR</c>
/// always gives each study the folder <c>DIR/STUDYPATH/</c> holding <c>results.tex</c> and its
/// figures' PNG files. The folder that holds the named file or folder must exist; two outputs of
/// one run that would land on the same path are refused.
/// </summary>
public static class ExportTargets
{
    /// <summary>Each study's Word file and LaTeX folder (null when not asked for); null after the mistakes are reported into <paramref name="bag"/>.</summary>
    public static Dictionary<string, (string? Docx, string? Latex)>? Resolve(
        IReadOnlyList<string> studies,
        string? docx,
        string? latex,
        CompileOptions options,
        string? json,
        DiagnosticBag bag)
    {
        var targets = studies.ToDictionary(s => s, _ => ((string?)null, (string?)null), StringComparer.Ordinal);
        if (docx is null && latex is null)
        {
            return targets;
        }

        if (docx is not null)
        {
            var at = SourceLocation.None(docx);
            var full = Path.GetFullPath(docx);
            if (studies.Count == 1)
            {
                if (Directory.Exists(full))
                {
                    bag.ExportNotAFile(at, docx);
                }
                else if (!full.EndsWith(".docx", StringComparison.OrdinalIgnoreCase))
                {
                    bag.ExportWrongExtension(at, docx);
                }
                else if (Path.GetDirectoryName(full) is { } folder && !Directory.Exists(folder))
                {
                    bag.ExportFolderMissing(at, "--docx", docx, BuildCommand.Display(folder));
                }
            }
            else if (File.Exists(full))
            {
                bag.ExportNotAFolder(at, "--docx", docx);
            }
            else if (Path.GetDirectoryName(Path.TrimEndingDirectorySeparator(full)) is { } parent && !Directory.Exists(parent))
            {
                bag.ExportFolderMissing(at, "--docx", docx, BuildCommand.Display(parent));
            }
        }

        if (latex is not null)
        {
            var at = SourceLocation.None(latex);
            var full = Path.GetFullPath(latex);
            if (File.Exists(full))
            {
                bag.ExportNotAFolder(at, "--latex", latex);
            }
            else if (Path.GetDirectoryName(Path.TrimEndingDirectorySeparator(full)) is { } parent && !Directory.Exists(parent))
            {
                bag.ExportFolderMissing(at, "--latex", latex, BuildCommand.Display(parent));
            }
        }

        if (bag.HasErrors)
        {
            return null;
        }

        foreach (var study in studies)
        {
            targets[study] = (
                docx is null ? null : studies.Count == 1 ? Path.GetFullPath(docx) : FigurePaths.FolderFor(docx, study) + ".docx",
                latex is null ? null : FigurePaths.FolderFor(latex, study));
        }

        // Every file a run writes, with what it is: two of them on one path are refused.
        var owners = new Dictionary<string, string>(StringComparer.Ordinal);
        void Claim(string path, string what)
        {
            if (owners.TryGetValue(path, out var first))
            {
                if (!bag.HasErrors)
                {
                    bag.ExportCollision(SourceLocation.None(path), BuildCommand.Display(path), first, what);
                }

                return;
            }

            owners[path] = what;
        }

        foreach (var study in studies)
        {
            var name = BuildCommand.Display(study);
            Claim(Path.GetFullPath(study), "the study " + name);
            Claim(Compilation.OutputPathFor(study, options), "the report of " + name);
        }

        if (json is not null)
        {
            Claim(Path.GetFullPath(json), "the --json manifest");
        }

        foreach (var study in studies)
        {
            var (d, l) = targets[study];
            var name = BuildCommand.Display(study);
            if (d is not null)
            {
                Claim(d, "the Word document of " + name);
            }

            if (l is not null)
            {
                // Figure files may be shared with --figures (the same bytes); the fragment may not.
                Claim(Path.Combine(l, LatexWriterName), "the LaTeX fragment of " + name);
            }
        }

        return bag.HasErrors ? null : targets;
    }

    private const string LatexWriterName = Rendering.Export.LatexWriter.FragmentName;
}
