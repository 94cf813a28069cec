using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// The HTML of one analysis kind: tables, notes and figures of its outcome. Registered by name;
/// see DEVELOPERS.md, "Adding an analysis kind".
/// </summary>
public abstract class KindRenderer
{
    /// <summary>The kind's name, as in <see cref="Binding.Kinds.BlockKind.Name"/>.</summary>
    public abstract string Kind { get; }

    /// <summary>Writes the block's HTML (tables, notes) into the writer.</summary>
    public abstract void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context);

    /// <summary>
    /// Cautions shown under the block's figures, written from the outcome's typed facts
    /// (evaluation holds no report text).
    /// </summary>
    public virtual IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context) => [];

    /// <summary>
    /// The sentences this kind contributes to one part of a methods paragraph (HTML, numbers as
    /// traced spans). <paramref name="section"/> is the anova section the block belongs to, or null
    /// for blocks outside one. The methods renderer orders the contributions; see
    /// docs/methods-and-sentences.md.
    /// </summary>
    public virtual IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w) => [];

    /// <summary>Plain notes shown after the cautions (rows left out and the like); see <see cref="Warnings"/>.</summary>
    public virtual IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context) => [];

    /// <summary>
    /// The tests whose result sentence this kind writes (<see cref="ResultSentence"/>), the sentence
    /// a prose reference <c>[=block.test.term, result]</c> writes. A test is phrased by one kind
    /// only, for every block that records it (the <c>anova</c> values of a <c>repeated</c> block are
    /// phrased by the <c>anova</c> kind); <see cref="KindRenderers.Register"/> refuses a second.
    /// </summary>
    public virtual IReadOnlyList<string> PhrasedTests => [];

    /// <summary>
    /// The result sentence (HTML, numbers as traced spans through <see cref="ReportStyle.Number"/>
    /// and <see cref="ReportStyle.PPhrase"/>) of one manifest group of a test in
    /// <see cref="PhrasedTests"/>: <paramref name="group"/> holds the values sharing the member's
    /// block, test, term, level and pair, by stat. Null when the group lacks the values the sentence
    /// needs; <paramref name="why"/> may then say why (otherwise "no result sentence … without its
    /// test statistic").
    /// </summary>
    public virtual string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        return null;
    }

    /// <summary>
    /// Tests of this kind whose p (stat <c>p</c>, no level) crossing alpha <c>studypress diff</c>
    /// reports as a flipped decision on an effect, with the name its decision lines give the test
    /// ("F test"). Read by the comparison of builds (Comparison/BuildComparison.cs) for every block
    /// that records the test.
    /// </summary>
    public virtual IReadOnlyDictionary<string, string> DiffEffectTests => EmptyNames;

    /// <summary>
    /// Names of this kind's procedures (tests) in <c>studypress diff</c>'s lines ("Holm",
    /// "Welch's F"): a changed procedure choice, a separated pair and the like. A test without a
    /// name is written as its manifest name.
    /// </summary>
    public virtual IReadOnlyDictionary<string, string> ProcedureNames => EmptyNames;

    /// <summary>
    /// True when the kind's main test has a p but is deliberately not an effect test for
    /// <c>studypress diff</c> (an assumption check, or a test whose flips are not reported); a kind
    /// with a p-valued main test that declares neither fails <c>KindContractTests</c>.
    /// </summary>
    public virtual bool MainTestIsNotADiffEffect => false;

    /// <summary>
    /// Pairwise tests of this kind whose adjusted p (stat <c>p_adj</c> of a pair) crossing alpha
    /// <c>studypress diff</c> reports as a pair becoming separated or not, each with its family: a
    /// pair is followed across the tests of one family when the procedure changes ("means": Tukey →
    /// Games–Howell keeps the pair). Read for every block that records the test;
    /// <c>KindContractTests</c> fails for a golden case with an undeclared pairwise test.
    /// </summary>
    public virtual IReadOnlyDictionary<string, string> DiffPairTests => EmptyNames;

    /// <summary>
    /// Tests of this kind whose presence on a term is a procedure chosen for it (by the automatic
    /// rules or the study): <c>studypress diff</c> reports a term whose set of these changed.
    /// </summary>
    public virtual IReadOnlyList<string> DiffProcedureTests => [];

    /// <summary>
    /// Assumption checks of this kind, with the words of their verdict on each side of alpha:
    /// <c>studypress diff</c> reports a check whose p (stat <c>p</c> or <c>p_bonferroni</c>) crossed
    /// alpha. Read for every block that records the test.
    /// </summary>
    public virtual IReadOnlyDictionary<string, DiffCheck> DiffChecks => EmptyChecks;

    private static readonly IReadOnlyDictionary<string, string> EmptyNames = new Dictionary<string, string>(StringComparer.Ordinal).AsReadOnly();

    private static readonly IReadOnlyDictionary<string, DiffCheck> EmptyChecks = new Dictionary<string, DiffCheck>(StringComparer.Ordinal).AsReadOnly();
}

/// <summary>
/// The verdict words of an assumption check in <c>studypress diff</c> (<see cref="KindRenderer.DiffChecks"/>):
/// <paramref name="Below"/> when its p is below alpha, <paramref name="Above"/> otherwise.
/// </summary>
public sealed record DiffCheck(string Below, string Above)
{
    /// <summary>Only the test's value without a level is a verdict (the levels are single observations, as for outliers).</summary>
    public bool WholeTestOnly { get; init; }
}

/// <summary>Every kind's renderer, by kind name.</summary>
public static class KindRenderers
{
    private static readonly Dictionary<string, KindRenderer> Registered = new(StringComparer.Ordinal);

    /// <summary>Called once per kind, by the renderer's own registration (a module initializer).</summary>
    public static void Register(KindRenderer renderer)
    {
        lock (Registered)
        {
            foreach (var other in Registered.Values)
            {
                if (other.PhrasedTests.FirstOrDefault(renderer.PhrasedTests.Contains) is { } test)
                {
                    throw new InvalidOperationException($"the kinds '{other.Kind}' and '{renderer.Kind}' both phrase the test '{test}'");
                }

                if (other.DiffEffectTests.Keys.FirstOrDefault(renderer.DiffEffectTests.ContainsKey) is { } effect)
                {
                    throw new InvalidOperationException($"the kinds '{other.Kind}' and '{renderer.Kind}' both name the effect test '{effect}'");
                }

                if (other.ProcedureNames.Keys.FirstOrDefault(renderer.ProcedureNames.ContainsKey) is { } procedure)
                {
                    throw new InvalidOperationException($"the kinds '{other.Kind}' and '{renderer.Kind}' both name the procedure '{procedure}'");
                }

                if (other.DiffPairTests.Keys.FirstOrDefault(renderer.DiffPairTests.ContainsKey) is { } pair)
                {
                    throw new InvalidOperationException($"the kinds '{other.Kind}' and '{renderer.Kind}' both declare the pairwise test '{pair}'");
                }

                if (other.DiffProcedureTests.FirstOrDefault(renderer.DiffProcedureTests.Contains) is { } chosen)
                {
                    throw new InvalidOperationException($"the kinds '{other.Kind}' and '{renderer.Kind}' both declare the procedure test '{chosen}'");
                }

                if (other.DiffChecks.Keys.FirstOrDefault(renderer.DiffChecks.ContainsKey) is { } check)
                {
                    throw new InvalidOperationException($"the kinds '{other.Kind}' and '{renderer.Kind}' both declare the check '{check}'");
                }
            }

            if (!Registered.TryAdd(renderer.Kind, renderer))
            {
                throw new InvalidOperationException($"two renderers for the kind '{renderer.Kind}'");
            }
        }
    }

    /// <summary>The renderer that phrases <paramref name="test"/>'s result sentence, or null.</summary>
    public static KindRenderer? Phrasing(string test) => Registered.Values.FirstOrDefault(r => r.PhrasedTests.Contains(test));

    public static IReadOnlyDictionary<string, KindRenderer> All => Registered;

    public static KindRenderer For(BlockOutcome outcome) => Registered[outcome.Block.Kind.Name];
}
