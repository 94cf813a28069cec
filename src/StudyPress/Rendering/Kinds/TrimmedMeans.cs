using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>trimmed-means</c> blocks: the levels' trimmed means, the test, its method and a reading.</summary>
public sealed class TrimmedMeansRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new TrimmedMeansRenderer());

    public override string Kind => "trimmed-means";

    /// <summary>The sentence a methods paragraph gives this test.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        if (part != MethodsPart.Results || !w.Has("effects") || outcome is not TrimmedMeansOutcome o)
        {
            yield break;
        }

        var t = o.Test;
        var subject = $"a comparison of trimmed means across the levels of {MethodsWriter.E(o.FactorLabel)} (a proportion of {MethodsWriter.Fr(o.Trim)} trimmed from each tail; Yuen's test in Welch's heteroscedastic form, which assumes neither equal variances nor normal tails)";
        var did = w.Did(subject, false, "made", "made", "make", ".");
        if (t[Stat.P].Value is not { IsDefined: true } p)
        {
            yield return did + $" Its statistic {w.T("was", "is")} not defined for these data (a level's winsorized variance is zero).";
            yield break;
        }

        var rejected = p.Value < w.Outcome.Alpha;
        yield return did
            + $" It {(rejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis that the levels' population trimmed means are equal, F({MethodsWriter.Df(t[Stat.Df1])}, {MethodsWriter.Df(t[Stat.Df2])}) = {MethodsWriter.S2(t[Stat.F])}, {ReportStyle.PPhrase(t[Stat.P])}."
            + (rejected ? string.Empty : " This is not evidence that they are equal.");
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not TrimmedMeansOutcome o)
        {
            yield break;
        }

        if (o.ZeroVarianceLevels.Count > 0)
        {
            yield return $"The winsorized variance of {string.Join(", ", o.ZeroVarianceLevels.Take(10).Select(BidiText.Isolate))}{(o.ZeroVarianceLevels.Count > 10 ? ", …" : string.Empty)} is zero (its values left after winsorizing are all equal), which gives that level an infinite weight: the test is not defined. A smaller trim keeps more of the level's spread.";
        }

        if (o.DroppedMissing > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{NumberText.Count(o.DroppedMissing, "row")} with a missing value {(o.DroppedMissing == 1 ? "was" : "were")} left out.");
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not TrimmedMeansOutcome o)
        {
            return;
        }

        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        var levels = new HtmlTable("trimmed-means", o.Block.Caption ?? $"Trimmed means of {o.FactorLabel}", [o.FactorLabel, "n", "n after trimming", "trimmed mean", "winsorized variance"]);
        foreach (var (level, v) in o.Levels)
        {
            levels.Row(level, [V(v[Stat.N]), V(v[Stat.NEffective]), V(v[Stat.TrimmedMean]), V(v[Stat.WinsorizedVariance])]);
        }

        levels.WriteTo(html);
        var t = o.Test;
        var test = new HtmlTable("trimmed-means-test", "Comparison of trimmed means (unequal variances allowed)", ["Source", "trim", "F", "df1", "df2", "p"]);
        test.Row(o.FactorLabel, [V(o.Trim), V(t[Stat.F]), V(t[Stat.Df1]), V(t[Stat.Df2]), V(t[Stat.P])]);
        test.WriteTo(html);

        html.Raw("<p class=\"method\">").Text("From each level, the lowest and the highest g = ⌊trim × n⌋ values are set aside; the trimmed mean is the mean of the h = n − 2g values left, and the winsorized variance is the variance (divisor n − 1) of the level's values with those set aside replaced by their nearest kept neighbours. Each trimmed mean is weighted by h(h − 1)/((n − 1) × winsorized variance), and Welch's heteroscedastic F of the weighted trimmed means is referred to the F distribution with fractional df2 (Yuen 1974; with two levels F is the square of Yuen's t, and with trim 0 it is Welch's F of the ordinary means). Neither equal variances nor normal tails are assumed; the trimmed means are compared, not the ordinary means.").Raw("</p>");
        var reading = t[Stat.P].Value is not { IsDefined: true } p
            ? "The test is not defined for these data, so the report draws no conclusion from it."
            : p.Value < context.Alpha
                ? "At α = " + context.AlphaText + " the test rejects the hypothesis that the population trimmed means of the levels of " + o.FactorLabel + " are all equal: at least two of them differ. It does not say which levels differ."
                : "At α = " + context.AlphaText + " the test does not reject the hypothesis that the population trimmed means of the levels of " + o.FactorLabel + " are all equal; this is not evidence that they are equal.";
        html.Raw("<div class=\"reading\"><p>").Text(reading).Raw("</p></div>");
    }

    /// <inheritdoc/>
    public override IReadOnlyList<string> PhrasedTests => ["trimmed_means"];

    /// <inheritdoc/>
    public override string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        ResultValue? Get(string stat) => group.GetValueOrDefault(stat);
        if (Get("f") is { } f && Get("df1") is { } d1 && Get("df2") is { } d2 && Get("p") is { } p)
        {
            return Sentences.FTest(d1, d2, f, p);
        }

        return Get("trimmed_mean") is { } tm && Get("n_effective") is { } th ? $"trimmed mean = {ReportStyle.Number(tm)}, {ReportStyle.Number(th)} values after trimming" : null;
    }

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> DiffEffectTests { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["trimmed_means"] = "trimmed means",
    }.AsReadOnly();

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> ProcedureNames { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["trimmed_means"] = "trimmed means",
    }.AsReadOnly();
}
