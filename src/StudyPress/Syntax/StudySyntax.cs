using Markdig;
using Markdig.Syntax;
using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>An analysis block as written: kind, optional id, YAML body and where it stands.</summary>
public sealed class AnalysisBlockSyntax : LeafBlock
{
    public AnalysisBlockSyntax(string kind, string? id, YMapping? body, SourceLocation location, SourceLocation idLocation)
        : base(null)
    {
        Kind = kind;
        Id = id;
        Body = body;
        Location = location;
        IdLocation = idLocation;
    }

    public string Kind { get; }

    /// <summary>The id written after the kind, or null when the binder assigns one.</summary>
    public string? Id { get; }

    public YMapping? Body { get; }

    public SourceLocation Location { get; }

    public SourceLocation IdLocation { get; }
}

/// <summary>The parsed study: header YAML, the Markdown document, its analysis blocks and references.</summary>
public sealed record StudySyntax(
    string Path,
    string Text,
    YMapping? Header,
    SourceLocation HeaderLocation,
    MarkdownDocument Document,
    IReadOnlyList<AnalysisBlockSyntax> Blocks,
    IReadOnlyList<ReferenceInline> References)
{
    /// <summary>The header's closing '---' line.</summary>
    public SourceLocation HeaderEnd { get; init; }

    /// <summary>
    /// Ids of blocks already reported as broken at parse time (a misspelt kind, an unclosed
    /// fence): later stages say nothing more about blocks and references that name them.
    /// </summary>
    public IReadOnlySet<string> FailedIds { get; init; } = new HashSet<string>(StringComparer.Ordinal);
}
