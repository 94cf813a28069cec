using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// One analysis kind as the study file declares it: its name, its keys and their binding, and
/// what it reads. Its evaluation (<c>Evaluation/Kinds</c>, a <c>KindEvaluator</c>) and its HTML
/// (<c>Rendering/Kinds</c>, a <c>KindRenderer</c>) are registered the same way, by name; see
/// DEVELOPERS.md, "Adding an analysis kind".
/// </summary>
public abstract class BlockKind
{
    /// <summary>The word in the fenced block's info string.</summary>
    public abstract string Name { get; }

    /// <summary>The manifest <c>test</c> a prose reference means when it names none.</summary>
    public abstract string PrimaryTest { get; }

    /// <summary>Keys of this kind beyond the ones every kind accepts.</summary>
    public abstract IReadOnlyList<string> OwnKeys { get; }

    /// <summary>Whether the block reads a dataset (and so a response column).</summary>
    public virtual bool UsesData => true;

    /// <summary>Whether the block needs factors (it compares groups).</summary>
    public virtual bool NeedsFactors => true;

    /// <summary>
    /// Whether the block analyses another block's model (named by <c>of</c>) instead of reading
    /// data itself; such blocks take data, response, factors and filter from that block.
    /// </summary>
    public virtual bool AnalysesAnovaBlock => false;

    /// <summary>With <see cref="AnalysesAnovaBlock"/>: 'of' may also name a repeated block (the default is then the nearest anova or repeated block above).</summary>
    public virtual bool AnalysesRepeatedBlock => false;

    /// <summary>
    /// Whether the block needs the data's rows (residual checks, ranks, figures of points), as
    /// opposed to per-cell statistics that a database can compute (<c>aggregate: true</c>).
    /// </summary>
    public virtual bool NeedsRows => true;

    /// <summary>
    /// Factors the kind names in its own keys (not in <c>factors</c>), which the data stage must
    /// load besides the block's factors.
    /// </summary>
    public virtual IEnumerable<FactorSpec> FactorsRead(object? options) => [];

    /// <summary>Whether the kind names its factors in its own keys, so that a block without <c>factors</c> takes no default ones.</summary>
    public virtual bool NamesOwnFactors => false;

    /// <summary>
    /// Numeric columns the kind reads besides the response (with where each is named), and whether
    /// the block's response is a column to load (false when it only names the quantity measured,
    /// as for wide repeated-measures data whose measurements are in several columns).
    /// </summary>
    public virtual IEnumerable<(string Column, SourceLocation At)> NumericRead(object? options) => [];

    /// <summary>Whether the block's <c>response</c> names a column to load.</summary>
    public virtual bool LoadsResponse(object? options) => true;

    /// <summary>Binds the kind's own keys; report mistakes to the bag.</summary>
    public abstract object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics);

    /// <summary>Checks of the kind's options that need the bound block (response, factors, dataset); report mistakes to the bag.</summary>
    public virtual void CheckBound(BoundBlock block, StudyHeader header, DiagnosticBag diagnostics)
    {
    }

}

/// <summary>What binding a block can see: the header, the blocks above it, and the block itself.</summary>
public sealed record BindContext(StudyHeader Header, IReadOnlyList<BoundBlock> Earlier, AnalysisBlockSyntax Syntax, IReadOnlyDictionary<string, AnalysisBlockSyntax> AllIds)
{
    /// <summary>
    /// Ids of blocks that failed to parse or bind (their mistake is already reported): a block
    /// that names one fails quietly, so one mistake gives one message.
    /// </summary>
    public IReadOnlySet<string> Failed { get; init; } = new HashSet<string>(StringComparer.Ordinal);

    /// <summary>Names already reported as unknown in an earlier block ("factor:NAME"): one message per mistake.</summary>
    public HashSet<string> ReportedNames { get; init; } = new(StringComparer.Ordinal);

    /// <summary>True once the block failed because of a mistake reported elsewhere.</summary>
    public bool FailedQuietly => failedQuietly.Value;

    private readonly StrongBox<bool> failedQuietly = new(false);

    /// <summary>Marks the block as failed without a message of its own (its cause is reported elsewhere).</summary>
    public void FailQuietly() => failedQuietly.Value = true;

    /// <summary>Whether a failed anova block (a failed repeated block too, with <paramref name="repeatedToo"/>; or a block whose kind was misspelt) stands above this one.</summary>
    private bool FailedAbove(bool repeatedToo = false) => Failed.Any(id => !AllIds.TryGetValue(id, out var b) || (b.Location.Line < Syntax.Location.Line && (b.Kind == "anova" || (repeatedToo && b.Kind == "repeated"))));

    /// <summary>
    /// Resolves an <c>of</c> key to an anova block above this one (default: the nearest above).
    /// </summary>
    public BoundBlock? AnovaOf(KeyReader keys, string kindName, DiagnosticBag diagnostics)
    {
        // A kind that also analyses repeated blocks (AnalysesRepeatedBlock) takes either kind.
        var repeatedToo = BlockKinds.All.GetValueOrDefault(kindName)?.AnalysesRepeatedBlock == true;
        bool Accepts(BoundBlock b) => b.Kind is AnovaKind || (repeatedToo && b.Kind is RepeatedKind);
        var anovas = Earlier.Where(Accepts).ToList();
        if (keys.Scalar("of") is { } of)
        {
            var target = Earlier.FirstOrDefault(b => b.Id == of.Value);
            if (target is null && Failed.Contains(of.Value))
            {
                return null;
            }

            if (target is null)
            {
                if (AllIds.TryGetValue(of.Value, out var later) && later.Location.Line > Syntax.Location.Line)
                {
                    diagnostics.OfMustComeBefore(of.Location, of.Value, kindName);
                }
                else
                {
                    diagnostics.UnknownOf(of.Location, of.Value, DiagnosticBag.Nearest(of.Value, anovas.Select(a => a.Id)));
                }

                return null;
            }

            if (!Accepts(target))
            {
                diagnostics.OfNotAnova(of.Location, of.Value, target.Kind.Name);
                return null;
            }

            return target;
        }

        if (anovas.Count == 0 && FailedAbove(repeatedToo))
        {
            return null;
        }

        if (anovas.Count == 0)
        {
            diagnostics.NoAnovaAbove(Syntax.Location, kindName);
            return null;
        }

        return anovas[^1];
    }
}

/// <summary>Every kind the compiler knows, by name.</summary>
public static class BlockKinds
{
    private static readonly Dictionary<string, BlockKind> Registered = new(StringComparer.Ordinal);

    /// <summary>Called once per kind, by the kind's own registration (a module initializer).</summary>
    public static void Register(BlockKind kind)
    {
        lock (Registered)
        {
            if (!Registered.TryAdd(kind.Name, kind))
            {
                throw new InvalidOperationException($"two kinds are named '{kind.Name}'");
            }
        }
    }

    public static IReadOnlyDictionary<string, BlockKind> All => Registered;

    /// <summary>The kinds' names; read after every module initializer has run, so built once.</summary>
    public static IReadOnlySet<string> Names => names ??= new SortedSet<string>(Registered.Keys, StringComparer.Ordinal);

    private static SortedSet<string>? names;

    /// <summary>Keys every kind accepts.</summary>
    public static readonly string[] CommonKeys = ["data", "response", "factors", "where", "caption"];
}
