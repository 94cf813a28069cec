using System.CommandLine;
using System.Globalization;

namespace StudyPress.Cli;

/// <summary>
/// The command line. Exit status: 0 success; 1 <c>verify</c> found a stale or altered report;
/// 2 a study or its inputs have mistakes (messages in FILE:LINE:COLUMN: error: MESSAGE form);
/// 64 the command line itself is wrong (unknown command or option, bad option value); 70 an
/// internal error (a bug; one line, no stack trace).
/// </summary>
public static class StudyPressCommand
{
    public const int Ok = 0;
    public const int NotFresh = 1;
    public const int BadInput = 2;
    public const int Usage = 64;
    public const int InternalError = 70;

    /// <summary>Runs the command line with plain (non-terminal) output.</summary>
    public static int Run(string[] args, TextWriter stdout, TextWriter stderr) => Run(args, stdout, stderr, interactive: false);

    /// <param name="interactive">True when stdout is a terminal: long batches show one updating progress line.</param>
    public static int Run(string[] args, TextWriter stdout, TextWriter stderr, bool interactive)
    {
        StageTimes.Mark("main");
        try
        {
            var root = BuildRoot(stdout, stderr, interactive);
            StageTimes.Mark("command tree");
            var commands = root.Subcommands.Select(c => c.Name).ToList();
            if (args.Length > 0 && !args[0].StartsWith('-') && !commands.Contains(args[0]))
            {
                // One message for a mistyped command, not one per argument after it.
                var near = Diagnostics.DiagnosticBag.Nearest(args[0], commands);
                stderr.WriteLine($"studypress: error: unknown command '{args[0]}'" + (near is null ? $"; the commands are {string.Join(", ", commands)}" : $"; did you mean '{near}'?"));
                stderr.WriteLine("Try 'studypress --help'.");
                return Usage;
            }

            var parse = root.Parse(args);
            StageTimes.Mark("command line parsed");
            if (parse.Errors.Count > 0)
            {
                foreach (var e in parse.Errors)
                {
                    stderr.WriteLine("studypress: error: " + e.Message);
                }

                stderr.WriteLine("Try 'studypress --help'.");
                return Usage;
            }

            return parse.Invoke(new InvocationConfiguration { Output = stdout, Error = stderr, EnableDefaultExceptionHandler = false });
        }
        catch (Exception caught)
        {
            // Parallel builds wrap the failure; report the exception that happened.
            var e = caught is AggregateException a ? a.Flatten().InnerExceptions[0] : caught;
            stderr.WriteLine($"studypress: internal error: {e.GetType().Name}: {e.Message.Split('\n')[0]}. This is a bug in studypress; please report it together with the study that caused it.");
            return InternalError;
        }
    }

    /// <summary>
    /// System.CommandLine hands unknown '--x' tokens to a string argument; refuse them unless a
    /// file or folder of that name exists.
    /// </summary>
    internal static bool RejectOptionLike(IEnumerable<string> values, string command, TextWriter stderr)
    {
        foreach (var p in values)
        {
            if (p.StartsWith('-') && !File.Exists(p) && !Directory.Exists(p))
            {
                var near = p.StartsWith("--", StringComparison.Ordinal) ? Diagnostics.DiagnosticBag.Nearest(p, KnownOptions) : null;
                stderr.WriteLine($"studypress: error: unknown option '{p}'" + (near is null ? string.Empty : $"; did you mean '{near}'?"));
                stderr.WriteLine($"Try 'studypress {command} --help'.");
                return true;
            }
        }

        return false;
    }

    private static readonly string[] KnownOptions = ["--out", "--json", "--jobs", "--force", "--pin", "--figures", "--docx", "--latex", "--quiet", "--allow-outside-data", "--recompute", "--help", "--version"];

    private static RootCommand BuildRoot(TextWriter stdout, TextWriter stderr, bool interactive)
    {
        var root = new RootCommand("studypress: compile Markdown study files into self-contained, traceable HTML statistics reports. Exit status: 0 done; 1 verify found a stale or altered report; 2 a study or input has mistakes; 64 the command line is wrong; 70 internal error.");
        foreach (var v in root.Options.OfType<VersionOption>())
        {
            v.Aliases.Add("-v");
        }

        var allowOutside = new Option<bool>("--allow-outside-data") { Description = "Let data paths point outside the study's folder tree." };

        // build
        var paths = new Argument<string[]>("PATH")
        {
            Arity = ArgumentArity.OneOrMore,
            Description = "Study files (*.md), or folders to search for them.",
        };
        var outDir = new Option<string?>("--out") { HelpName = "DIR", Description = "Write reports into this folder instead of beside each study." };
        var json = new Option<string?>("--json") { HelpName = "FILE", Description = "Also write the results manifest (JSON) to this file; one study only." };
        var quiet = new Option<bool>("--quiet") { Description = "Print errors only." };
        var jobs = new Option<int?>("--jobs") { HelpName = "N", Description = "Build this many studies at once (default: the number of processor cores)." };
        var force = new Option<bool>("--force") { Description = "Rebuild every study, even those whose report is up to date." };
        var pin = new Option<bool>("--pin") { Description = "First write each input's current SHA-256 into the study header (data.NAME.sha256), then build." };
        var figures = new Option<string?>("--figures") { HelpName = "DIR", Description = "Also write each figure as a PNG file into this folder." };
        var docx = new Option<string?>("--docx") { HelpName = "FILE", Description = "Also write the report as a Word document (.docx); with several studies, FILE is a folder and each study gets STUDY.docx in it." };
        var latex = new Option<string?>("--latex") { HelpName = "DIR", Description = "Also write a LaTeX fragment to \\input (a macro per value, booktabs tables, figures as PNG) into DIR/STUDY/results.tex." };
        var build = new Command("build", "Compile study files into HTML reports; a folder builds every study under it, skipping those that are up to date.");
        build.Arguments.Add(paths);
        foreach (var o in new Option[] { outDir, json, jobs, force, pin, figures, docx, latex, quiet, allowOutside })
        {
            build.Options.Add(o);
        }

        build.SetAction(pr => BuildCommand.Run(
            new BuildRequest(pr.GetValue(paths) ?? [], pr.GetValue(outDir), pr.GetValue(json), pr.GetValue(quiet), pr.GetValue(allowOutside), SourceDateEpoch(stderr))
            {
                Jobs = pr.GetValue(jobs),
                Force = pr.GetValue(force),
                Pin = pr.GetValue(pin),
                FiguresDir = pr.GetValue(figures),
                Docx = pr.GetValue(docx),
                Latex = pr.GetValue(latex),
                Interactive = interactive,
            },
            stdout,
            stderr));
        root.Subcommands.Add(build);

        // verify
        var reports = new Argument<string[]>("REPORT")
        {
            Arity = ArgumentArity.OneOrMore,
            Description = "Report files (*.html) written by studypress build.",
        };
        var recompute = new Option<bool>("--recompute") { Description = "Also rebuild each fresh report in memory: its values and bytes must match a rebuild." };
        var verify = new Command("verify", "Say whether each report is fresh (its study and inputs unchanged, the page as written, every number its manifest value), stale (which file changed) or altered (what differs). Exit 0 all fresh, 1 any stale or altered, 2 unreadable.");
        verify.Arguments.Add(reports);
        verify.Options.Add(recompute);
        verify.Options.Add(allowOutside);
        verify.SetAction(pr => VerifyCommand.Run(pr.GetValue(reports) ?? [], pr.GetValue(recompute), pr.GetValue(allowOutside), stdout, stderr));
        root.Subcommands.Add(verify);

        // watch
        var watchPaths = new Argument<string[]>("PATH")
        {
            Arity = ArgumentArity.OneOrMore,
            Description = "Study files (*.md), or folders to search for them.",
        };
        var watchOut = new Option<string?>("--out") { HelpName = "DIR", Description = "Write reports into this folder instead of beside each study." };
        var watch = new Command("watch", "Rebuild a study whenever it or one of its inputs changes. Stop with Ctrl+C.");
        watch.Arguments.Add(watchPaths);
        watch.Options.Add(watchOut);
        watch.Options.Add(allowOutside);
        watch.SetAction(pr => WatchCommand.Run(
            new WatchRequest(pr.GetValue(watchPaths) ?? [], pr.GetValue(watchOut), pr.GetValue(allowOutside), SourceDateEpoch(stderr)),
            stdout,
            stderr));
        root.Subcommands.Add(watch);

        // new
        var dir = new Argument<string>("DIR") { Description = "Folder for the new study (created if needed; existing files are never overwritten)." };
        var create = new Command("new", "Write a small, working example study with invented data to start from.");
        create.Arguments.Add(dir);
        create.SetAction(pr => NewCommand.Run(pr.GetValue(dir)!, stdout, stderr));
        root.Subcommands.Add(create);
        root.Subcommands.Add(DiffCommand.Create(stdout, stderr, interactive));
        return root;
    }

    private static long? SourceDateEpoch(TextWriter stderr)
    {
        var text = Environment.GetEnvironmentVariable("SOURCE_DATE_EPOCH");
        if (string.IsNullOrEmpty(text))
        {
            return null;
        }

        if (long.TryParse(text, NumberStyles.None, CultureInfo.InvariantCulture, out var v) && v <= 253402300799)
        {
            return v;
        }

        stderr.WriteLine("studypress: warning: SOURCE_DATE_EPOCH is not a whole number of seconds; ignored");
        return null;
    }
}

/// <summary>Finds study files under a folder: *.md files whose first line is '---'.</summary>
public static class StudyDiscovery
{
    public static IReadOnlyList<string> Find(string folder)
    {
        var found = new List<string>();
        var options = new EnumerationOptions { RecurseSubdirectories = true, IgnoreInaccessible = true, AttributesToSkip = FileAttributes.ReparsePoint | FileAttributes.Hidden };
        foreach (var file in Directory.EnumerateFiles(folder, "*.md", options))
        {
            if (IsStudy(file))
            {
                found.Add(file);
            }
        }

        found.Sort(StringComparer.Ordinal);
        return found;
    }

    /// <summary>The studies named by files and folders; null after printing an error.</summary>
    internal static List<string>? Resolve(IEnumerable<string> paths, TextWriter stderr)
    {
        var studies = new List<string>();
        foreach (var p in paths)
        {
            if (Directory.Exists(p))
            {
                studies.AddRange(Find(p));
            }
            else if (File.Exists(p))
            {
                studies.Add(p);
            }
            else
            {
                stderr.WriteLine($"{p}:1:1: error: no such study file or folder");
                return null;
            }
        }

        var distinct = studies.DistinctBy(Path.GetFullPath, StringComparer.Ordinal).ToList();
        if (distinct.Count == 0)
        {
            stderr.WriteLine("studypress: error: no study files found (a study is a *.md file that starts with a '---' header)");
            return null;
        }

        return distinct;
    }

    private static bool IsStudy(string file)
    {
        try
        {
            using var reader = new StreamReader(file);
            var first = reader.ReadLine();
            return first is not null && first.TrimStart('\uFEFF').TrimEnd() == "---";
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return false;
        }
    }
}
