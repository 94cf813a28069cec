using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>methods</c>: a methods-and-results text generated from the blocks it covers (<c>of</c>,
/// default every analysis block of the study, above or below it): design and group sizes, model,
/// significance level, assumption checks and their outcomes, the decisions the automatic rules
/// took, multiple comparisons, test results with effect sizes and their intervals, software and
/// input hashes, and cautions. The text is rebuilt from the results on every build, so it follows
/// the data; every number in it is a traced span (see <c>Rendering.ReportStyle</c>).
/// Numbers the manifest does not hold elsewhere (cell sizes, rows read and used, and checks that
/// no assumptions block reports) are recorded under the methods block's own id.
/// </summary>
public sealed class MethodsKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new MethodsKind());

    public override string Name => "methods";

    public override string PrimaryTest => "design";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "tense", "voice", "include", "detail"];

    public override bool UsesData => false;

    public override bool NeedsFactors => false;

    /// <summary>The parts a methods block can include, in the order they are written.</summary>
    public static readonly string[] Parts = ["design", "model", "assumptions", "decisions", "comparisons", "effects", "software", "cautions"];

    /// <summary>
    /// The block's options. <paramref name="Full"/> (<c>detail: full</c>) keeps the long form: every
    /// check with its statistic, each decision with its reasons, the manifest sentence; the default
    /// (<c>detail: brief</c>) is one concise paragraph in the order a paper uses.
    /// </summary>
    public sealed record Options(IReadOnlyList<YScalar>? Of, bool Past, bool Active, IReadOnlySet<string> Include, bool Full = false);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var of = keys.ScalarList("of");
        if (of is not null)
        {
            var seen = new HashSet<string>(StringComparer.Ordinal);
            foreach (var item in of.Where(i => !seen.Add(i.Value)))
            {
                diagnostics.DuplicateInList(item.Location, "of", item.Value);
            }
        }

        var tense = keys.Choice("tense", ["past", "present"]) ?? "past";
        var voice = keys.Choice("voice", ["passive", "active"]) ?? "passive";
        var detail = keys.Choice("detail", ["brief", "full"]) ?? "brief";
        var include = new HashSet<string>(StringComparer.Ordinal);
        if (keys.ScalarList("include") is { } list)
        {
            foreach (var item in list)
            {
                if (!Parts.Contains(item.Value))
                {
                    diagnostics.BadChoice(item.Location, "include", item.Value, Parts, DiagnosticBag.Nearest(item.Value, Parts));
                }
                else if (!include.Add(item.Value))
                {
                    diagnostics.DuplicateInList(item.Location, "include", item.Value);
                }
            }
        }
        else
        {
            include.UnionWith(Parts);
        }

        return new Options(of, tense == "past", voice == "active", include, detail == "full");
    }
}
