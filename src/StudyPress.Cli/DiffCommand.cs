using System.CommandLine;
using System.Globalization;
using System.Text;
using StudyPress.Comparison;
using StudyPress.Diagnostics;
using StudyPress.Rendering;
using StudyPress.Reproducibility;

namespace StudyPress.Cli;

/// <summary>What <c>studypress diff</c> was asked to do.</summary>
public sealed record DiffRequest(IReadOnlyList<string> Paths)
{
    public string? Revision { get; init; }

    public string? Json { get; init; }

    public string? Html { get; init; }

    public FailOn FailOn { get; init; } = FailOn.Values;

    public string? TextOf { get; init; }

    public string? Alpha { get; init; }

    public bool AllowOutside { get; init; }

    /// <summary>ANSI colour on stdout (a terminal, NO_COLOR unset).</summary>
    public bool Colour { get; init; }
}

/// <summary>
/// <c>studypress diff OLD NEW</c>, <c>studypress diff --rev REV STUDY</c>, <c>studypress diff --text-of REPORT</c>:
/// what changed between two builds of a study and which conclusions flipped. Exit 0 no number changed,
/// 1 numbers changed but no decision flipped, 3 a decision flipped (see --fail-on), 2 usage or study errors.
/// </summary>
public static class DiffCommand
{
    public const int ValuesChanged = 1;
    public const int DecisionFlipped = 3;

    public static Command Create(TextWriter stdout, TextWriter stderr, bool interactive)
    {
        var paths = new Argument<string[]>("OLD NEW")
        {
            Arity = new ArgumentArity(0, 2),
            Description = "Two builds: reports (.html), results manifests (.json) or study files (.md, compiled in memory); with --rev, one study file.",
        };
        var rev = new Option<string?>("--rev") { HelpName = "REV", Description = "Compare the study as committed at this git revision with the working tree." };
        var json = new Option<string?>("--json") { HelpName = "FILE", Description = "Also write the comparison as JSON (format studypress-diff/1) to this file." };
        var html = new Option<string?>("--html") { HelpName = "FILE", Description = "Also write the comparison as a self-contained HTML page to this file." };
        var failOn = new Option<string>("--fail-on")
        {
            Description = "What makes the exit status non-zero: 'values' (default: 1 numbers changed, 3 a decision flipped), 'decisions' (3 only when a decision flipped, else 0), 'never' (0 unless an error: 2 for a study or input, 64 for the command line).",
            DefaultValueFactory = _ => "values",
        };
        failOn.AcceptOnlyFromAmong("values", "decisions", "never");
        var textOf = new Option<string?>("--text-of") { HelpName = "REPORT", Description = "Print one report, manifest or study as text (values as shown, decisions, methods sentences), e.g. for git's textconv." };
        var alpha = new Option<string?>("--alpha") { HelpName = "A", Description = "Significance level for a side whose alpha cannot be read (a report whose study is gone, a manifest)." };
        var allowOutside = new Option<bool>("--allow-outside-data") { Description = "Let data paths point outside the study's folder tree." };
        var command = new Command(
            "diff",
            "What changed between two builds of a study, and which conclusions flipped. Exit 0 no number changed; 1 numbers changed but no decision flipped; 3 a decision flipped; 2 study or input errors; 64 usage errors (see --fail-on).");
        command.Arguments.Add(paths);
        foreach (var o in new Option[] { rev, json, html, failOn, textOf, alpha, allowOutside })
        {
            command.Options.Add(o);
        }

        command.SetAction(pr => Run(
            new DiffRequest(pr.GetValue(paths) ?? [])
            {
                Revision = pr.GetValue(rev),
                Json = pr.GetValue(json),
                Html = pr.GetValue(html),
                FailOn = pr.GetValue(failOn) switch { "decisions" => FailOn.Decisions, "never" => FailOn.Never, _ => FailOn.Values },
                TextOf = pr.GetValue(textOf),
                Alpha = pr.GetValue(alpha),
                AllowOutside = pr.GetValue(allowOutside),
                Colour = interactive && string.IsNullOrEmpty(Environment.GetEnvironmentVariable("NO_COLOR")),
            },
            stdout,
            stderr));
        return command;
    }

    public static int Run(DiffRequest request, TextWriter stdout, TextWriter stderr)
    {
        if (StudyPressCommand.RejectOptionLike(request.Paths, "diff", stderr))
        {
            return StudyPressCommand.Usage;
        }

        var bag = new DiagnosticBag();
        var usage = new SourceLocation("studypress diff", 0, 0);
        double? alpha = null;
        if (request.Alpha is { } alphaText)
        {
            if (double.TryParse(alphaText, NumberStyles.Float, CultureInfo.InvariantCulture, out var a) && a is > 0 and < 1)
            {
                alpha = a;
            }
            else
            {
                bag.DiffBadAlpha(usage, alphaText);
                return Fail(bag, stderr);
            }
        }

        var options = new CompileOptions { AllowOutsidePaths = request.AllowOutside };
        if (request.TextOf is { } single)
        {
            if (request.Paths.Count > 0 || request.Revision is not null)
            {
                bag.DiffUsage(usage, "--text-of takes one file and no other paths or --rev");
                return Fail(bag, stderr);
            }

            var snapshot = SnapshotReader.Read(single, options, bag);
            if (snapshot is null)
            {
                return Fail(bag, stderr);
            }

            stdout.Write(ComparisonText.Of(WithAlpha(snapshot, alpha)));
            return StudyPressCommand.Ok;
        }

        RevisionCheckout? checkout = null;
        try
        {
            BuildSnapshot? old;
            BuildSnapshot? @new;
            if (request.Revision is { } revision)
            {
                if (request.Paths.Count != 1 || !request.Paths[0].EndsWith(".md", StringComparison.OrdinalIgnoreCase))
                {
                    bag.DiffUsage(usage, "--rev takes exactly one study file (.md): studypress diff --rev REV study.md");
                    return Fail(bag, stderr);
                }

                var study = request.Paths[0];
                if (!File.Exists(study))
                {
                    bag.FileNotFound(SourceLocation.None(study), "study file", study);
                    return Fail(bag, stderr);
                }

                checkout = GitRevision.Checkout(study, revision, bag);
                if (checkout is null)
                {
                    return Fail(bag, stderr);
                }

                old = SnapshotReader.FromStudy(checkout.StudyPath, checkout.Label, options, bag, checkout.Relabel);
                @new = SnapshotReader.Read(study, options, bag);
            }
            else
            {
                if (request.Paths.Count != 2)
                {
                    bag.DiffUsage(usage, "name two builds to compare (studypress diff OLD NEW), or one study with --rev REV");
                    return Fail(bag, stderr);
                }

                old = SnapshotReader.Read(request.Paths[0], options, bag);
                @new = SnapshotReader.Read(request.Paths[1], options, bag);
            }

            if (old is null || @new is null || bag.HasErrors)
            {
                return Fail(bag, stderr);
            }

            var result = BuildComparison.Compare(WithAlpha(old, alpha), WithAlpha(@new, alpha));
            try
            {
                if (request.Json is { } jsonPath)
                {
                    AtomicFile.Write(jsonPath, ComparisonJson.Write(result, request.FailOn));
                }

                if (request.Html is { } htmlPath)
                {
                    AtomicFile.Write(htmlPath, Encoding.UTF8.GetBytes(ComparisonHtml.Write(result, request.FailOn)));
                }
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                var target = request.Json ?? request.Html!;
                bag.CannotWrite(SourceLocation.None(target), target, e.Message);
                return Fail(bag, stderr);
            }

            stdout.Write(ComparisonText.Write(result, request.Colour));
            return result.ExitCode(request.FailOn);
        }
        finally
        {
            checkout?.Dispose();
        }
    }

    private static BuildSnapshot WithAlpha(BuildSnapshot s, double? alpha) =>
        s.Alpha is not null || alpha is null ? s : s with { Alpha = alpha, AlphaSource = "--alpha" };

    private static int Fail(DiagnosticBag bag, TextWriter stderr)
    {
        foreach (var d in bag.Sorted())
        {
            // Usage mistakes name no file: print them the way the other commands print usage errors.
            stderr.WriteLine(d.Location.Path == "studypress diff" ? "studypress: error: " + d.Message : d.ToString());
        }

        // A mistake on the command line itself is a usage error (64); a file or study that cannot
        // be read or built is a study error (2).
        return bag.Sorted().All(d => d.Location.Path == "studypress diff") ? StudyPressCommand.Usage : StudyPressCommand.BadInput;
    }
}
