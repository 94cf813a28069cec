using System.CommandLine;
using System.Globalization;
using StudyPress.Rendering;

namespace StudyPress.Cli;

/// <summary>
/// The command line. Exit status: 0 success; 2 bad input or usage (messages in
/// FILE:LINE:COLUMN: error: MESSAGE form); 70 an internal error (a bug; one line, no stack trace).
/// </summary>
public static class StudyPressCommand
{
    public const int Ok = 0;
    public const int BadInput = 2;
    public const int InternalError = 70;

    public static int Run(string[] args, TextWriter stdout, TextWriter stderr)
    {
        try
        {
            var root = BuildRoot(stdout, stderr);
            var parse = root.Parse(args);
            if (parse.Errors.Count > 0)
            {
                foreach (var e in parse.Errors)
                {
                    stderr.WriteLine("studypress: error: " + e.Message);
                }

                stderr.WriteLine("Try 'studypress --help'.");
                return BadInput;
            }

            return parse.Invoke(new InvocationConfiguration { Output = stdout, Error = stderr, EnableDefaultExceptionHandler = false });
        }
        catch (Exception e)
        {
            stderr.WriteLine($"studypress: internal error: {e.GetType().Name}: {e.Message.Split('\n')[0]}. This is a bug in studypress; please report it together with the study that caused it.");
            return InternalError;
        }
    }

    private static RootCommand BuildRoot(TextWriter stdout, TextWriter stderr)
    {
        var root = new RootCommand("studypress: compile Markdown study files into self-contained, traceable HTML statistics reports.");

        var paths = new Argument<string[]>("PATH")
        {
            Arity = ArgumentArity.OneOrMore,
            Description = "Study files (*.md), or folders to search for them.",
        };
        var outDir = new Option<string?>("--out") { Description = "Write reports into this folder instead of beside each study." };
        var json = new Option<string?>("--json") { Description = "Also write the results manifest (JSON) to this file; one study only." };
        var quiet = new Option<bool>("--quiet") { Description = "Print errors only." };
        var allowOutside = new Option<bool>("--allow-outside-data") { Description = "Let data paths point outside the study's folder tree." };
        var build = new Command("build", "Compile study files into HTML reports.");
        build.Arguments.Add(paths);
        build.Options.Add(outDir);
        build.Options.Add(json);
        build.Options.Add(quiet);
        build.Options.Add(allowOutside);
        build.SetAction(pr => BuildCommand.Run(
            new BuildRequest(pr.GetValue(paths) ?? [], pr.GetValue(outDir), pr.GetValue(json), pr.GetValue(quiet), pr.GetValue(allowOutside), SourceDateEpoch(stderr)),
            stdout,
            stderr));
        root.Subcommands.Add(build);
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

public sealed record BuildRequest(IReadOnlyList<string> Paths, string? OutDir, string? Json, bool Quiet, bool AllowOutside, long? SourceDateEpoch);

/// <summary><c>studypress build</c>.</summary>
public static class BuildCommand
{
    public static int Run(BuildRequest request, TextWriter stdout, TextWriter stderr)
    {
        var studies = new List<string>();
        foreach (var p in request.Paths)
        {
            if (p.StartsWith('-') && !File.Exists(p) && !Directory.Exists(p))
            {
                stderr.WriteLine($"studypress: error: unknown option '{p}'");
                stderr.WriteLine("Try 'studypress build --help'.");
                return StudyPressCommand.BadInput;
            }

            if (Directory.Exists(p))
            {
                studies.AddRange(StudyDiscovery.Find(p));
            }
            else if (File.Exists(p))
            {
                studies.Add(p);
            }
            else
            {
                stderr.WriteLine($"{p}:1:1: error: no such study file or folder");
                return StudyPressCommand.BadInput;
            }
        }

        if (studies.Count == 0)
        {
            stderr.WriteLine("studypress: error: no study files found (a study is a *.md file that starts with a '---' header)");
            return StudyPressCommand.BadInput;
        }

        if (request.Json is not null && studies.Count > 1)
        {
            stderr.WriteLine("studypress: error: --json takes one study; several were given");
            return StudyPressCommand.BadInput;
        }

        var options = new CompileOptions
        {
            OutputDirectory = request.OutDir,
            AllowOutsidePaths = request.AllowOutside,
            SourceDateEpoch = request.SourceDateEpoch,
        };
        var failed = 0;
        foreach (var study in studies)
        {
            var result = Compilation.Compile(study, options);
            foreach (var d in result.Diagnostics)
            {
                stderr.WriteLine(d.ToString());
            }

            if (!result.Succeeded)
            {
                failed++;
                continue;
            }

            try
            {
                if (request.Json is not null)
                {
                    AtomicFile.Write(request.Json, result.ManifestJson!);
                }

                AtomicFile.Write(result.OutputPath, System.Text.Encoding.UTF8.GetBytes(result.Html!));
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                stderr.WriteLine($"{study}:1:1: error: cannot write the report: {e.Message}");
                failed++;
                continue;
            }

            if (!request.Quiet)
            {
                stdout.WriteLine($"wrote {Path.GetRelativePath(Directory.GetCurrentDirectory(), result.OutputPath)}");
            }
        }

        return failed == 0 ? StudyPressCommand.Ok : StudyPressCommand.BadInput;
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

    private static bool IsStudy(string file)
    {
        try
        {
            using var reader = new StreamReader(file);
            var first = reader.ReadLine();
            return first is not null && first.TrimStart('\uFEFF').TrimEnd() == "---";
        }
        catch (IOException)
        {
            return false;
        }
    }
}
