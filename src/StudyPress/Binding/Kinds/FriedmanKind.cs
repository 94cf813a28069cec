using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>friedman</c>: Friedman's rank test of k treatments in complete blocks (one value per block
/// and treatment), with Kendall's W, the Iman–Davenport F and pairwise comparisons of mean ranks
/// (Conover's t with Holm's adjustment, or Nemenyi's studentized range). For blocked designs —
/// field plots, subjects, batches — when normality is not assumed.
/// </summary>
public sealed class FriedmanKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new FriedmanKind());

    /// <summary>The pairwise procedures after the test.</summary>
    public static readonly string[] Methods = ["conover", "nemenyi"];

    public override string Name => "friedman";

    public override string PrimaryTest => "friedman";

    public override IReadOnlyList<string> OwnKeys { get; } = ["factor", "blocks", "method"];

    /// <summary>The treatment factor (null: the block's only factor), the blocking factor, and the pairwise method.</summary>
    public sealed record Options(FactorSpec? Treatment, SourceLocation TreatmentLocation, FactorSpec Blocks, SourceLocation BlocksLocation, string Method);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var names = context.Header.Factors.Select(x => x.Name).ToList();
        var unknown = false;
        FactorSpec? Factor(string key)
        {
            if (keys.Scalar(key) is not { } v)
            {
                return null;
            }

            if (context.Header.Factor(v.Value) is { } spec)
            {
                return spec;
            }

            diagnostics.UnknownFactor(v.Location, v.Value, DiagnosticBag.Nearest(v.Value, names));
            unknown = true;
            return null;
        }

        var treatment = Factor("factor");
        var blocks = Factor("blocks");
        var method = keys.Choice("method", Methods) ?? "conover";
        if (unknown)
        {
            return null;
        }

        if (blocks is null)
        {
            diagnostics.MissingKey(context.Syntax.Location, "blocks", "a friedman block (the factor whose levels are the blocks)");
            return null;
        }

        var blocksAt = keys.Scalar("blocks")!.Location;
        if (treatment is not null && treatment.Name == blocks.Name)
        {
            diagnostics.BlocksSameAsFactor(blocksAt, blocks.Name);
            return null;
        }

        return new Options(treatment, keys.Scalar("factor")?.Location ?? context.Syntax.Location, blocks, blocksAt, method);
    }
}
