using System.Reflection;
using System.Security.Cryptography;
using System.Text;
using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Syntax;
using StudyPress.Reproducibility;
using StudyPress.Evaluation.Kinds;
using StudyPress.Binding.Kinds;

namespace StudyPress;

/// <summary>How to compile: where the report goes, what the build may read.</summary>
public sealed record CompileOptions
{
    /// <summary>Folder for the report; null means beside the study file.</summary>
    public string? OutputDirectory { get; init; }

    /// <summary>Lets data paths leave the study's folder tree (off by default).</summary>
    public bool AllowOutsidePaths { get; init; }

    /// <summary>Seconds since the epoch (SOURCE_DATE_EPOCH) to show as the build time; null shows none.</summary>
    public long? SourceDateEpoch { get; init; }
}

/// <summary>The products of a compilation; <see cref="Html"/> is null when there were errors.</summary>
public sealed class CompilationResult
{
    public required string StudyPath { get; init; }

    public required string OutputPath { get; init; }

    public required IReadOnlyList<Diagnostic> Diagnostics { get; init; }

    public string? Html { get; init; }

    public byte[]? ManifestJson { get; init; }

    /// <summary>The report's figures in order, each with its file name for PNG and LaTeX export (study, block and chart; see FigureFileName).</summary>
    public IReadOnlyList<(string FileName, Figure Figure)> Figures { get; init; } = [];

    /// <summary>How the report shows numbers (the study's <c>report:</c> settings); the exports show values the same way.</summary>
    public NumberFormat? NumberFormat { get; init; }

    public bool Succeeded => Html is not null;
}

/// <summary>
/// The compiler facade: parse → bind → evaluate → render. Each stage reports into one diagnostic
/// bag and the chain stops after a stage with errors. Nothing is written here; see
/// <see cref="AtomicFile"/> for writing the products.
/// </summary>
public static class Compilation
{
    public static string ToolVersion => Tool.Version;

    public static string OutputPathFor(string studyPath, CompileOptions options)
    {
        var name = Path.GetFileNameWithoutExtension(studyPath) + ".html";
        return Path.GetFullPath(Path.Combine(options.OutputDirectory ?? Path.GetDirectoryName(Path.GetFullPath(studyPath))!, name));
    }

    public static CompilationResult Compile(string studyPath, CompileOptions options)
    {
        var diagnostics = new DiagnosticBag();
        var outputPath = OutputPathFor(studyPath, options);
        var html = Run(studyPath, outputPath, options, diagnostics, out var manifest, out var figures, out var format);
        if (!diagnostics.HasErrors && html is not null && manifest is not null)
        {
            BuildCapture.Keep(studyPath, outputPath, options, manifest, html);
        }

        return new CompilationResult
        {
            StudyPath = studyPath,
            OutputPath = outputPath,
            Diagnostics = diagnostics.Sorted(),
            Html = diagnostics.HasErrors ? null : html,
            ManifestJson = diagnostics.HasErrors ? null : manifest,
            Figures = diagnostics.HasErrors ? [] : figures,
            NumberFormat = diagnostics.HasErrors ? null : format,
        };
    }

    private static string? Run(string studyPath, string outputPath, CompileOptions options, DiagnosticBag diagnostics, out byte[]? manifest, out List<(string FileName, Figure Figure)> figures, out NumberFormat? format)
    {
        manifest = null;
        figures = [];
        format = null;
        var display = studyPath;
        if (StudyFile.Read(studyPath, display, diagnostics) is not { } bytes)
        {
            return null;
        }

        var text = TextDecoding.Decode(bytes, display, diagnostics);
        if (text is null)
        {
            return null;
        }

        StageTimes.Mark("read the study");

        // Parse.
        var syntax = StudyParser.Parse(display, text, BlockKinds.Names, diagnostics);
        if (syntax?.Header is null || diagnostics.HasErrors)
        {
            return null;
        }

        StageTimes.Mark("parse");

        // Bind.
        var header = HeaderBinder.Bind(syntax.Header, display, diagnostics);
        var blocks = BlockBinder.Bind(syntax, header, diagnostics);
        // Every number of this study, in chart labels made while evaluating as in the report's text, is written by the header's rules.
        using var numbers = StudyPress.Charts.NumberText.Use(header.Report.Numbers);
        var primary = blocks.ToDictionary(b => b.Id, b => b.Kind.PrimaryTest, StringComparer.Ordinal);
        if (diagnostics.HasErrors)
        {
            return null;
        }

        // References that cannot be read, or name no block, are reported now and left out later;
        // the build goes on so that the other references (even on the same line) are checked too.
        var reportedReferences = References.CheckTargets(syntax, primary, diagnostics);
        StageTimes.Mark("bind");

        var studyDir = Path.GetDirectoryName(Path.GetFullPath(studyPath))!;
        var errorsBeforeData = diagnostics.Items.Count;
        var datasets = DatasetLoader.Load(header, blocks, studyDir, display, options.AllowOutsidePaths, diagnostics);
        StageTimes.Mark("load data");
        if (diagnostics.Items.Skip(errorsBeforeData).Any(d => d.Severity == Severity.Error))
        {
            return null;
        }

        // Model: each anova block's model, and the cells and order statistics of aggregated datasets
        // (the last queries), so that evaluation does no I/O.
        var models = Model.StudyModels.Prepare(blocks, datasets, diagnostics);
        StageTimes.Mark("model");
        if (diagnostics.Items.Skip(errorsBeforeData).Any(d => d.Severity == Severity.Error))
        {
            return null;
        }

        // Evaluate.
        var studyFolder = Path.GetDirectoryName(display);
        var context = new EvaluationContext
        {
            Header = header,
            Datasets = datasets,
            Models = models,
            Blocks = blocks,
            DataDisplayPaths = header.Datasets.ToDictionary(
                d => d.Name,
                d => string.IsNullOrEmpty(studyFolder) ? d.Path : Path.Combine(studyFolder, d.Path).Replace('\\', '/'),
                StringComparer.Ordinal),
        };
        var outcomes = new Dictionary<AnalysisBlockSyntax, BlockOutcome>();
        // Methods blocks describe other blocks, wherever those are in the study: evaluate them last.
        foreach (var block in blocks.OrderBy(b => b.Kind is MethodsKind ? 1 : 0))
        {
            var outcome = KindEvaluators.For(block).Evaluate(context, block, diagnostics);
            outcomes[block.Syntax] = outcome;
            context.Record(outcome);
            StageTimes.Mark("evaluate " + block.Kind.Name + " " + block.Id);
        }

        var resolved = References.ResolveAll(syntax, reportedReferences, context.Results, primary, header.Alpha, diagnostics);
        StageTimes.Mark("resolve references");

        if (diagnostics.HasErrors)
        {
            return null;
        }

        if (syntax.Blocks.Count == 0)
        {
            // A draft: the report is built (header, prose, data section) with a warning.
            diagnostics.NoBlocks(syntax.HeaderEnd);
        }

        // Render.
        var inputs = header.Datasets.Select(d => datasets[d.Name]).ToList();
        var identity = new ManifestHeader(
            ToolVersion,
            Path.GetRelativePath(Path.GetDirectoryName(outputPath)!, Path.GetFullPath(studyPath)).Replace('\\', '/'),
            ContentHash.Hex(bytes),
            ReportTemplate.Name,
            ReportTemplate.Sha256,
            options.SourceDateEpoch is { } epoch ? DateTimeOffset.FromUnixTimeSeconds(epoch).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", System.Globalization.CultureInfo.InvariantCulture) : null);
        manifest = Manifest.Write(identity, inputs, context.Results);
        StageTimes.Mark("manifest");
        format = new NumberFormat(header.Report.Numbers);
        var taken = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        // Each block's figures drawn once (chart and caption, from the values evaluation chose),
        // for the report and for the PNG and LaTeX exports alike.
        var drawn = new Dictionary<BlockOutcome, IReadOnlyList<Figure>>();
        foreach (var block in blocks)
        {
            var outcome = outcomes[block.Syntax];
            drawn[outcome] = FigureDrawing.Of(outcome);
            foreach (var f in drawn[outcome])
            {
                figures.Add((FigureFileName(header.Id, block.Id, f, taken), f));
            }
        }

        StageTimes.Mark("figures");
        var html = ReportRenderer.Render(syntax, header, outcomes, drawn, resolved, inputs, identity, manifest);
        StageTimes.Mark("render");
        if (ReportIntegrity.Problem(html) is { } problem)
        {
            // Checked before anything can be written, and again by the writer (OutputSet).
            throw new InvalidOperationException("the rendered report is incomplete: " + problem);
        }

        return html;
    }

    /// <summary>
    /// A figure's file name: study, block and chart, joined by '_' (<c>spray-nozzles_main_means.png</c>);
    /// a figure that shares its type with another of the block adds what tells it apart (an F
    /// distribution's term: <c>…_main_f-distribution-nozzle.png</c>). Ids are names (letters,
    /// digits, '_', '-') and chart parts use no '_', so the block and chart stay readable; other
    /// characters in a part become '-', and a name that is still taken (ignoring case, for
    /// case-insensitive file systems) gets "-2", "-3", ….
    /// </summary>
    internal static string FigureFileName(string studyId, string blockId, Figure figure, ISet<string> taken)
    {
        var chart = figure.Part is null ? figure.Type : figure.Type + "-" + FileNamePart(figure.Part);
        var stem = studyId + "_" + blockId + "_" + chart;
        var name = stem + ".png";
        for (var k = 2; !taken.Add(name); k++)
        {
            name = stem + "-" + k.ToString(System.Globalization.CultureInfo.InvariantCulture) + ".png";
        }

        return name;
    }

    private static string FileNamePart(string text)
    {
        var sb = new System.Text.StringBuilder(text.Length);
        foreach (var c in text)
        {
            sb.Append(char.IsAsciiLetterOrDigit(c) ? c : '-');
        }

        return sb.ToString().Trim('-') is { Length: > 0 } s ? s : "term";
    }
}
