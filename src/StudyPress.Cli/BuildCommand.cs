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
    public static StudyBuild Build(string study, CompileOptions options, bool useCache, string? jsonPath = null, string? figuresDir = null)
    {
        var outputPath = Compilation.OutputPathFor(study, options);
        if (useCache && BuildCache.IsUpToDate(study, outputPath, options))
        {
            return new StudyBuild(study, StudyOutcome.UpToDate, outputPath, []);
        }

        var result = Compilation.Compile(study, options);
        var messages = result.Diagnostics.Select(d => d.ToString()).ToList();
        if (!result.Succeeded)
        {
            return new StudyBuild(study, StudyOutcome.Failed, outputPath, messages);
        }

        var html = System.Text.Encoding.UTF8.GetBytes(result.Html!);
        try
        {
            if (jsonPath is not null)
            {
                AtomicFile.Write(jsonPath, result.ManifestJson!);
            }

            if (figuresDir is not null)
            {
                foreach (var (name, figure) in result.Figures)
                {
                    AtomicFile.Write(Path.Combine(figuresDir, name), figure.Chart.ToPng());
                }
            }

            AtomicFile.Write(result.OutputPath, html);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            messages.Add($"{study}:1:1: error: cannot write the report: {e.Message}");
            return new StudyBuild(study, StudyOutcome.Failed, outputPath, messages);
        }

        try
        {
            BuildCache.Record(study, result.OutputPath, options, result.ManifestJson!, html);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // The report is written; without a cache entry the next build simply rebuilds it.
            messages.Add($"{study}:1:1: warning: cannot write the build cache: {e.Message}");
        }

        return new StudyBuild(study, StudyOutcome.Built, outputPath, messages);
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

        // Two studies with the same name would overwrite each other's report in --out.
        foreach (var clash in studies.GroupBy(s => Compilation.OutputPathFor(s, options), StringComparer.Ordinal).Where(g => g.Count() > 1))
        {
            var list = clash.ToList();
            stderr.WriteLine($"{list[1]}:1:1: error: this study and '{list[0]}' would both write {Display(clash.Key)}; build them into different folders");
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

        // The cache is about the report only; a manifest or figures asked for are always written.
        var internalErrors = 0;
        var useCache = !request.Force && request.Json is null && request.FiguresDir is null;
        Parallel.ForEach(
            toBuild,
            new ParallelOptions { MaxDegreeOfParallelism = request.Jobs ?? Environment.ProcessorCount },
            study =>
            {
                StudyBuild outcome;
                try
                {
                    outcome = StudyBuilder.Build(study, options, useCache, request.Json, request.FiguresDir);
                }
                catch (Exception e)
                {
                    // A bug met by one study must not stop the others; the run then exits 70.
                    Interlocked.Exchange(ref internalErrors, 1);
                    outcome = new StudyBuild(study, StudyOutcome.Failed, Compilation.OutputPathFor(study, options), [$"{study}:1:1: error: internal error: {e.GetType().Name}: {e.Message.Split('\n')[0]}. This is a bug in studypress; please report it together with the study that caused it."]);
                }

                progress.Done(outcome);
            });

        progress.Finish();
        return internalErrors != 0 ? StudyPressCommand.InternalError : progress.Failed == 0 ? StudyPressCommand.Ok : StudyPressCommand.BadInput;
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
