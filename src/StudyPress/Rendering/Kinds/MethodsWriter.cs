using StudyPress.Binding.Kinds;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// The parts of a methods paragraph, in the order the text is composed. Each kind's renderer
/// contributes its sentences through <see cref="KindRenderer.Methods"/>; the methods renderer only
/// orders them (see <see cref="MethodsRenderer"/>).
/// </summary>
public enum MethodsPart
{
    /// <summary>Descriptive statistics (summary blocks).</summary>
    Descriptives,

    /// <summary>Observations, groups and their sizes.</summary>
    Design,

    /// <summary>The model fitted.</summary>
    Model,

    /// <summary>The checks of the model's assumptions.</summary>
    Assumptions,

    /// <summary>The decisions the automatic rules took, and why.</summary>
    Decisions,

    /// <summary>How comparisons were made.</summary>
    Comparisons,

    /// <summary>What the tests found.</summary>
    Results,

    /// <summary>What a reader should keep in mind.</summary>
    Cautions,
}

/// <summary>
/// The language of a methods paragraph, shared by every kind's contribution: tense, voice,
/// α and confidence as printed, lists, and numbers as traced spans (<see cref="ReportStyle"/>).
/// </summary>
public sealed class MethodsWriter(MethodsOutcome o, MethodsKind.Options options)
{
    /// <summary>The methods block's outcome: the sections (one per anova) and the other covered blocks.</summary>
    public MethodsOutcome Outcome { get; } = o;

    /// <summary>The methods block's options (tense, voice, parts).</summary>
    public MethodsKind.Options Options { get; } = options;

    public bool Past { get; } = options.Past;

    public bool Active { get; } = options.Active;

    /// <summary>The concise form (<c>detail: brief</c>, the default): each fact once, checks by their p-values.</summary>
    public bool Brief { get; } = !options.Full;

    private readonly HashSet<string> told = new(StringComparer.Ordinal);

    /// <summary>
    /// Records that a fact (for example the verdict on variances of one anova block) has been told,
    /// so that later parts refer to it instead of repeating it; true the first time.
    /// </summary>
    public bool Tell(string fact) => told.Add(fact);

    /// <summary>Whether a fact has been told earlier in this text (<see cref="Tell"/>).</summary>
    public bool Told(string fact) => told.Contains(fact);

    /// <summary>The fact key of the verdict on equal variances of an anova block.</summary>
    public static string VariancesFact(MethodsSection s) => "variances:" + s.Anova.Block.Id;

    /// <summary>The fact key of the verdict on normality of an anova block's residuals.</summary>
    public static string NormalityFact(MethodsSection s) => "normality:" + s.Anova.Block.Id;

    /// <summary>α as the text prints it.</summary>
    public string AlphaText { get; } = Sentences.AlphaText(o.Alpha);

    /// <summary>The confidence level (per cent) as the text prints it.</summary>
    public string Confidence { get; } = Sentences.ConfidenceText(o.Alpha);

    /// <summary>Whether the block asks for this part of the text.</summary>
    public bool Has(string part) => Options.Include.Contains(part);

    public static string E(string? s) => HtmlWriter.Escape(s);

    /// <summary>The past or present form, by the block's tense.</summary>
    public string T(string pastForm, string presentForm) => Past ? pastForm : presentForm;

    public string Be(bool plural) => Past ? (plural ? "were" : "was") : (plural ? "are" : "is");

    /// <summary>"X was fitted …" (passive) or "We fitted X …" (Active); subject and rest are HTML.</summary>
    public string Did(string subject, bool plural, string participle, string pastActive, string presentActive, string rest) =>
        Active
            ? "We " + (Past ? pastActive : presentActive) + " " + subject + rest
            : Cap(subject) + " " + Be(plural) + " " + participle + rest;

    public static string Cap(string s) => s.Length == 0 ? s : char.ToUpperInvariant(s[0]) + s[1..];

    public static string Words(int n) => n switch
    {
        1 => "one",
        2 => "two",
        3 => "three",
        4 => "four",
        5 => "five",
        6 => "six",
        7 => "seven",
        8 => "eight",
        9 => "nine",
        10 => "ten",
        11 => "eleven",
        12 => "twelve",
        _ => n.ToString(System.Globalization.CultureInfo.InvariantCulture),
    };

    public static string List(IEnumerable<string> items)
    {
        var l = items.ToList();
        return l.Count switch
        {
            0 => string.Empty,
            1 => l[0],
            2 => l[0] + " and " + l[1],
            _ => string.Join(", ", l.Take(l.Count - 1)) + " and " + l[^1],
        };
    }

    // Every number in the text is in the report's one format, the same text as in the tables
    // (docs/study-file.md, "How numbers are written"); the three names say what the value is.

    /// <summary>A count or degrees of freedom.</summary>
    public static string Df(ResultValue v) => ReportStyle.Number(v);

    /// <summary>A statistic, mean or difference.</summary>
    public static string S2(ResultValue v) => ReportStyle.Number(v);

    /// <summary>A value that cannot exceed 1 (W, η², power).</summary>
    public static string Fr(ResultValue v) => ReportStyle.Number(v);

    public static bool Is(ResultValue? v, double x) => v is { Value.IsDefined: true } && v.Value.Value == x;

    /// <summary>" in BLOCK" when the text covers several anova blocks, else nothing.</summary>
    public string Which(MethodsSection s) => Outcome.Sections.Count > 1 ? $" in {E(s.Anova.Block.Id)}" : string.Empty;

    /// <summary>What the checks found wrong, as clauses for a sentence.</summary>
    public List<string> Failed(AssumptionReview review)
    {
        var failed = new List<string>();
        if (review.NonNormal)
        {
            failed.Add($"the residuals {T("departed", "depart")} from normality");
        }

        if (review.UnequalVariances)
        {
            failed.Add($"the group variances {T("differed", "differ")}");
        }

        if (review.Dependent)
        {
            failed.Add($"the residuals {Be(true)} correlated in run order");
        }

        if (review.HasOutliers)
        {
            failed.Add($"some observations {T("stood", "stand")} out as outliers");
        }

        return failed;
    }
}
