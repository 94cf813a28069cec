using StudyPress.Diagnostics;
using StudyPress.Rendering;
using StudyPress.Reproducibility;

namespace StudyPress.Cli;

public sealed record BuildRequest(IReadOnlyList<string> Paths, string? OutDir, string? Json, bool Quiet, bool AllowOutside, long? SourceDateEpoch)
{
    /// <summary>Studies built at once; null means one per processor core.</summary>
    public int? Jobs { get; init; }

    /// <summary>Rebuild even when the cache says the report is up to date.</summary>
    public bool Force { get; init; }

    /// <summary>Write each input's current hash into the header before building.</summary>
    public bool Pin { get; init; }

    /// <summary>Folder for the figures as PNG files, or null.</summary>
    public string? FiguresDir { get; init; }

    /// <summary>The Word document (one study) or the folder of Word documents (several), or null; see <see cref="ExportTargets"/>.</summary>
    public string? Docx { get; init; }

    /// <summary>The folder for the LaTeX fragments and their figures, or null; see <see cref="ExportTargets"/>.</summary>
    public string? Latex { get; init; }

    /// <summary>Stdout is a terminal: show one updating progress line for several studies.</summary>
    public bool Interactive { get; init; }
}

public enum StudyOutcome
{
    Built,
    UpToDate,
    Failed,
}

/// <summary>What happened to one study: its outcome, report path and every message for it.</summary>
public sealed record StudyBuild(string Study, StudyOutcome Outcome, string OutputPath, IReadOnlyList<string> Messages);

/// <summary>Builds one study: cache check, compile, write report (and manifest, figures), record in the cache.</summary>
public static class StudyBuilder
{
    public static StudyBuild Build(string study, CompileOptions options, bool useCache, string? jsonPath = null, string? figuresDir = null, string? docxPath = null, string? latexDir = null)
    {
        var outputPath = Compilation.OutputPathFor(study, options);
        if (useCache && BuildCache.IsUpToDate(study, outputPath, options))
        {
            return new StudyBuild(study, StudyOutcome.UpToDate, outputPath, []);
        }

        var result = Compilation.Compile(study, options);
        StageTimes.Mark("compiled");
        var messages = result.Diagnostics.Select(d => d.ToString()).ToList();
        if (!result.Succeeded)
        {
            return new StudyBuild(study, StudyOutcome.Failed, outputPath, messages);
        }

        byte[] html;
        try
        {
            html = Write(result, jsonPath, figuresDir, docxPath, latexDir);
            StageTimes.Mark("wrote the outputs");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            messages.Add($"{study}:1:1: error: cannot write the report: {e.Message}");
            return new StudyBuild(study, StudyOutcome.Failed, outputPath, messages);
        }

        try
        {
            BuildCache.Record(study, result.OutputPath, options, result.ManifestJson!, html);
            StageTimes.Mark("recorded in the build cache");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // The report is written; without a cache entry the next build simply rebuilds it.
            messages.Add($"{study}:1:1: warning: cannot write the build cache: {e.Message}");
        }

        return new StudyBuild(study, StudyOutcome.Built, outputPath, messages);
    }

    /// <summary>
    /// Commits a compiled study's report, its manifest (<paramref name="jsonPath"/>), PNG figures
    /// (<paramref name="figuresDir"/>, the study's own figure folder), Word document
    /// (<paramref name="docxPath"/>) and LaTeX fragment with its figures (<paramref name="latexDir"/>,
    /// the study's own folder) together or not at all; returns the report's bytes. An incomplete
    /// report is a bug and is refused before anything is written.
    /// </summary>
    public static byte[] Write(CompilationResult result, string? jsonPath, string? figuresDir, string? docxPath = null, string? latexDir = null)
    {
        // Refuse to commit a report that is not whole (a bug, never the user's input): nothing is written.
        if (ReportIntegrity.Problem(result.Html!) is { } incomplete)
        {
            throw new InvalidOperationException("refusing to write an incomplete report (" + incomplete + "); nothing was written");
        }

        var html = System.Text.Encoding.UTF8.GetBytes(result.Html!);
        var outputs = new OutputSet();

        // Each figure is drawn as PNG once, for whichever outputs want it.
        var pngs = new Lazy<byte[]>[result.Figures.Count];
        for (var i = 0; i < pngs.Length; i++)
        {
            var chart = result.Figures[i].Figure.Chart;
            pngs[i] = new Lazy<byte[]>(chart.ToPng);
        }

        var added = new HashSet<string>(StringComparer.Ordinal);
        if (figuresDir is not null)
        {
            for (var i = 0; i < result.Figures.Count; i++)
            {
                var path = FigurePaths.Inside(figuresDir, result.Figures[i].FileName);
                outputs.Add(path, pngs[i].Value);
                added.Add(path);
            }
        }

        if (docxPath is not null)
        {
            outputs.Add(docxPath, Rendering.Export.ReportExports.Docx(result.Html!, result.ManifestJson!, [.. result.Figures.Select((f, i) => (f.Figure.Type, pngs[i].Value))]));
        }

        if (latexDir is not null)
        {
            var files = Rendering.Export.ReportExports.Latex(
                result.Html!,
                result.ManifestJson!,
                result.NumberFormat!,
                [.. result.Figures.Select((f, i) => (f.FileName, f.Figure.Type, pngs[i].Value))]);
            foreach (var (name, bytes) in files)
            {
                // --figures and --latex may name one folder: its PNG files are then written once.
                var path = FigurePaths.Inside(latexDir, name);
                if (added.Add(path))
                {
                    outputs.Add(path, bytes);
                }
            }
        }

        if (jsonPath is not null)
        {
            outputs.Add(jsonPath, result.ManifestJson!);
        }

        outputs.Add(result.OutputPath, html);

        // All or nothing: every file is written to a temporary name first, then all are renamed.
        outputs.Commit();
        return html;
    }
}

/// <summary>
/// Where PNG figures go. Each study gets its own folder inside the figures folder: the study file's
/// path relative to the current folder, without the <c>.md</c> extension (<c>figs/a/study/</c> for
/// <c>a/study.md</c>); a <c>..</c> step of a study outside the current folder becomes <c>_parent</c>.
/// A figure's file name is <c>STUDYID_BLOCKID_CHART.png</c> (Compilation.FigureFileName); no path may leave its folder.
/// </summary>
public static class FigurePaths
{
    public static string FolderFor(string figuresDir, string study)
    {
        var full = Path.GetFullPath(study);
        var relative = Path.GetRelativePath(Directory.GetCurrentDirectory(), full);
        if (Path.IsPathRooted(relative))
        {
            relative = relative[Path.GetPathRoot(relative)!.Length..];
        }

        var stem = Path.ChangeExtension(relative, null);
        var segments = stem.Split(['/', '\\'], StringSplitOptions.RemoveEmptyEntries)
            .Where(p => p != ".")
            .Select(p => p == ".." ? "_parent" : p)
            .ToList();
        return Inside(figuresDir, Path.Combine([.. segments]));
    }

    /// <summary><paramref name="relative"/> under <paramref name="folder"/>; throws when it would lead anywhere else.</summary>
    public static string Inside(string folder, string relative)
    {
        var root = Path.GetFullPath(folder);
        var full = Path.GetFullPath(Path.Combine(root, relative));
        var prefix = Path.EndsInDirectorySeparator(root) ? root : root + Path.DirectorySeparatorChar;
        if (Path.IsPathRooted(relative) || !full.StartsWith(prefix, StringComparison.Ordinal) || relative.Split(['/', '\\']).Contains(".."))
        {
            throw new InvalidOperationException($"an output path '{relative}' would leave its folder {root}");
        }

        return full;
    }
}

/// <summary><c>studypress build</c>: one study, or many in parallel with an up-to-date cache.</summary>
public static class BuildCommand
{
    public static int Run(BuildRequest request, TextWriter stdout, TextWriter stderr)
    {
        if (StudyPressCommand.RejectOptionLike(request.Paths, "build", stderr))
        {
            return StudyPressCommand.Usage;
        }

        if (request.Jobs is < 1)
        {
            stderr.WriteLine("studypress: error: --jobs must be 1 or more");
            return StudyPressCommand.Usage;
        }

        var studies = StudyDiscovery.Resolve(request.Paths, stderr);
        if (studies is null)
        {
            return StudyPressCommand.BadInput;
        }

        if (request.Json is not null && studies.Count > 1)
        {
            stderr.WriteLine("studypress: error: --json takes one study; several were given");
            return StudyPressCommand.Usage;
        }

        var options = new CompileOptions
        {
            OutputDirectory = request.OutDir,
            AllowOutsidePaths = request.AllowOutside,
            SourceDateEpoch = request.SourceDateEpoch,
        };

        // The manifest and the report are committed together; they cannot be one file.
        if (request.Json is not null && string.Equals(Path.GetFullPath(request.Json), Compilation.OutputPathFor(studies[0], options), StringComparison.Ordinal))
        {
            stderr.WriteLine($"studypress: error: --json {request.Json} names the report itself; write the manifest to another file");
            return StudyPressCommand.Usage;
        }

        // Two studies with the same name would overwrite each other's report in --out.
        foreach (var clash in studies.GroupBy(s => Compilation.OutputPathFor(s, options), StringComparer.Ordinal).Where(g => g.Count() > 1))
        {
            var list = clash.ToList();
            stderr.WriteLine($"{list[1]}:1:1: error: this study and '{list[0]}' would both write {Display(clash.Key)}; build them into different folders");
            return StudyPressCommand.BadInput;
        }

        // Each study's PNG figures go to their own folder inside --figures (FigurePaths.FolderFor).
        var figureFolders = new Dictionary<string, string>(StringComparer.Ordinal);
        if (request.FiguresDir is not null)
        {
            foreach (var study in studies)
            {
                figureFolders[study] = FigurePaths.FolderFor(request.FiguresDir, study);
            }

            foreach (var clash in studies.GroupBy(s => figureFolders[s], StringComparer.Ordinal).Where(g => g.Count() > 1))
            {
                var list = clash.ToList();
                stderr.WriteLine($"{list[1]}:1:1: error: this study and '{list[0]}' would both write their figures into {Display(clash.Key)}; build them separately");
                return StudyPressCommand.BadInput;
            }
        }

        var exportBag = new DiagnosticBag();
        var exports = ExportTargets.Resolve(studies, request.Docx, request.Latex, options, request.Json, exportBag);
        if (exports is null)
        {
            foreach (var d in exportBag.Sorted())
            {
                stderr.WriteLine(UnsafeText.Escape(d.ToString()));
            }

            return StudyPressCommand.BadInput;
        }

        var progress = new Progress(stdout, stderr, studies.Count, request.Quiet, request.Interactive && studies.Count > 1);
        var toBuild = new List<string>();
        foreach (var study in studies)
        {
            if (!request.Pin)
            {
                toBuild.Add(study);
                continue;
            }

            var bag = new DiagnosticBag();
            switch (StudyPins.PinFile(study, request.AllowOutside, bag))
            {
                case null:
                    progress.Done(new StudyBuild(study, StudyOutcome.Failed, Compilation.OutputPathFor(study, options), [.. bag.Sorted().Select(d => d.ToString())]));
                    continue;
                case true:
                    progress.Note($"pinned {Display(study)}");
                    break;
            }

            toBuild.Add(study);
        }

        // The cache is about the report only; a manifest, figures, Word or LaTeX asked for are always written.
        var internalErrors = 0;
        var useCache = !request.Force && request.Json is null && request.FiguresDir is null && request.Docx is null && request.Latex is null;
        void BuildOne(string study)
        {
            StudyBuild outcome;
            try
            {
                outcome = StudyBuilder.Build(study, options, useCache, request.Json, request.FiguresDir is null ? null : figureFolders[study], exports[study].Docx, exports[study].Latex);
            }
            catch (Exception e)
            {
                // A bug met by one study must not stop the others; the run then exits 70.
                Interlocked.Exchange(ref internalErrors, 1);
                outcome = new StudyBuild(study, StudyOutcome.Failed, Compilation.OutputPathFor(study, options), [$"{study}:1:1: error: internal error: {e.GetType().Name}: {e.Message.Split('\n')[0]}. This is a bug in studypress; please report it together with the study that caused it."]);
            }

            progress.Done(outcome);
        }

        // One study is built on this thread: starting the thread pool for it costs more than the
        // small study it builds (docs/performance.md, "Start-up after Main (round 9)").
        if (toBuild.Count == 1)
        {
            BuildAlone(() => BuildOne(toBuild[0]));
        }
        else
        {
            Parallel.ForEach(toBuild, new ParallelOptions { MaxDegreeOfParallelism = request.Jobs ?? Environment.ProcessorCount }, BuildOne);
        }

        progress.Finish();
        StageTimes.Mark("done");
        return internalErrors != 0 ? StudyPressCommand.InternalError : progress.Failed == 0 ? StudyPressCommand.Ok : StudyPressCommand.BadInput;
    }

    /// <summary>Managed memory a single study may allocate before the garbage collector runs at all.</summary>
    public const long NoCollectionBytes = 16L << 20;

    /// <summary>
    /// Builds one study with no garbage collection for its first <see cref="NoCollectionBytes"/> of
    /// allocation. A small study allocates a few megabytes, just past the collector's first budget
    /// here, and that one collection (marking and compacting everything still in use) cost about as
    /// much as rendering the report (docs/performance.md, "Start-up after Main (round 9)"). Starting
    /// the region collects once, over the few objects alive then (under a millisecond for 16 MB; a
    /// larger region costs more). A study that allocates more ends the region at its limit and is
    /// collected as before.
    /// </summary>
    public static void BuildAlone(Action build)
    {
        bool region;
        try
        {
            region = GC.TryStartNoGCRegion(NoCollectionBytes);
        }
        catch (Exception e) when (e is ArgumentOutOfRangeException or InvalidOperationException)
        {
            region = false;
        }

        try
        {
            build();
        }
        finally
        {
            if (region && System.Runtime.GCSettings.LatencyMode == System.Runtime.GCLatencyMode.NoGCRegion)
            {
                try
                {
                    GC.EndNoGCRegion();
                }
                catch (InvalidOperationException)
                {
                    // The region already ended (a collection happened): nothing to end.
                }
            }
        }
    }

    /// <summary>A path for messages: relative to the working folder when it lies below it, else as given.</summary>
    internal static string Display(string path)
    {
        var relative = Path.GetRelativePath(Directory.GetCurrentDirectory(), path).Replace('\\', '/');
        return Path.IsPathRooted(path) && (relative == ".." || relative.StartsWith("../", StringComparison.Ordinal) || Path.IsPathRooted(relative))
            ? path
            : relative;
    }

    /// <summary>
    /// Per-study lines when the output is redirected; one updating line on a terminal. Errors go
    /// to stderr as they arrive (a study's messages together), and a summary ends the run.
    /// </summary>
    private sealed class Progress(TextWriter stdout, TextWriter stderr, int total, bool quiet, bool live)
    {
        private readonly Lock gate = new();
        private int built;
        private int upToDate;
        private int done;
        private bool lineShown;

        public int Failed { get; private set; }

        public void Note(string line)
        {
            lock (gate)
            {
                if (!quiet)
                {
                    Clear();
                    stdout.WriteLine(line);
                }
            }
        }

        public void Done(StudyBuild b)
        {
            lock (gate)
            {
                done++;
                switch (b.Outcome)
                {
                    case StudyOutcome.Built:
                        built++;
                        break;
                    case StudyOutcome.UpToDate:
                        upToDate++;
                        break;
                    default:
                        Failed++;
                        break;
                }

                var errors = b.Outcome == StudyOutcome.Failed ? b.Messages : b.Messages.Where(m => !quiet || m.Contains(": error: ", StringComparison.Ordinal)).ToList();
                if (errors.Count > 0)
                {
                    Clear();
                    stdout.Flush();
                    foreach (var m in errors)
                    {
                        // Text quoted from data or paths never reaches the terminal raw.
                        stderr.WriteLine(UnsafeText.Escape(m));
                    }

                    stderr.Flush();
                }

                if (quiet)
                {
                    return;
                }

                if (live)
                {
                    stdout.Write($"\r\u001b[K[{done}/{total}] built {built}, up to date {upToDate}, failed {Failed}  {Display(b.Study)}");
                    stdout.Flush();
                    lineShown = true;
                    return;
                }

                var line = b.Outcome switch
                {
                    StudyOutcome.Built => "wrote " + Display(b.OutputPath),
                    StudyOutcome.UpToDate => "up to date " + Display(b.OutputPath),
                    _ => "failed " + Display(b.Study),
                };
                stdout.WriteLine(line);
            }
        }

        public void Finish()
        {
            lock (gate)
            {
                if (quiet)
                {
                    return;
                }

                Clear();
                stdout.WriteLine($"built {built}, up to date {upToDate}, failed {Failed}");
            }
        }

        private void Clear()
        {
            if (lineShown)
            {
                stdout.Write("\r\u001b[K");
                lineShown = false;
            }
        }
    }
}
