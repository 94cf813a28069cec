using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Binding;

/// <summary>A row filter: keep rows whose factor has one of the levels.</summary>
public sealed record WhereFilter(FactorSpec Factor, IReadOnlyList<string> Levels, SourceLocation Location);

/// <summary>
/// An analysis block after binding: the keys every kind accepts, resolved against the header,
/// plus the kind's own options.
/// </summary>
public sealed class BoundBlock
{
    public required string Id { get; init; }

    public required Kinds.BlockKind Kind { get; init; }

    public required AnalysisBlockSyntax Syntax { get; init; }

    public SourceLocation Location => Syntax.Location;

    /// <summary>The dataset name, or null for kinds that need no data.</summary>
    public string? Data { get; init; }

    public string? Response { get; init; }

    public SourceLocation ResponseLocation { get; init; }

    public IReadOnlyList<FactorSpec> Factors { get; init; } = [];

    public SourceLocation FactorsLocation { get; init; }

    public IReadOnlyList<WhereFilter> Where { get; init; } = [];

    public string? Caption { get; init; }

    /// <summary>The anova block this block analyses (assumptions, posthoc), or null.</summary>
    public BoundBlock? Of { get; init; }

    /// <summary>The kind's own bound options (read them typed with <see cref="OptionsOf{TOptions}"/>).</summary>
    public object? Options { get; init; }

    /// <summary>
    /// The kind's own bound options as the kind's <c>Options</c> record (for example
    /// <c>block.OptionsOf&lt;AnovaKind.Options&gt;()</c>): the one typed way evaluators and renderers read
    /// them, instead of a cast at each use (ArchitectureTests keeps it so). A block of another kind,
    /// or one bound without options, is a bug and throws.
    /// </summary>
    public TOptions OptionsOf<TOptions>()
        where TOptions : class =>
        Options as TOptions ?? throw new InvalidOperationException($"block '{Id}' ({Kind.Name}) has no {typeof(TOptions).FullName} options");

    /// <summary>
    /// The header factor naming the whole plots (<c>role: whole-plot</c>), for an anova block of a
    /// split plot: read with the block's rows to check that whole-plot treatments do not vary
    /// within a whole plot. Null otherwise.
    /// </summary>
    public FactorSpec? WholePlots { get; init; }

    /// <summary>The same block over other factors (a kind that names its factors in its own keys, as ranks and friedman do).</summary>
    public BoundBlock WithFactors(IReadOnlyList<FactorSpec> factors, SourceLocation at) => new()
    {
        Id = Id,
        Kind = Kind,
        Syntax = Syntax,
        Data = Data,
        Response = Response,
        ResponseLocation = ResponseLocation,
        Factors = factors,
        FactorsLocation = at,
        Where = Where,
        Caption = Caption,
        Of = Of,
        Options = Options,
        WholePlots = WholePlots,
    };
}
