using Markdig.Helpers;
using Markdig.Parsers;
using Markdig.Syntax.Inlines;
using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>A <c>{{ path }}</c> reference in prose.</summary>
public sealed class ReferenceInline : LeafInline
{
    public required string Text { get; init; }

    public required SourceLocation Location { get; init; }

    /// <summary>False when the closing braces were missing.</summary>
    public bool Closed { get; init; } = true;

    private readonly Lazy<(ReferenceExpression? Expression, string? Error)> parsed;

    public ReferenceInline() => parsed = new(() => (ReferenceGrammar.Parse(Text!, out var error), error));

    /// <summary>The reference read once by <see cref="ReferenceGrammar"/>, or null when it cannot be read (see <see cref="SyntaxError"/>).</summary>
    public ReferenceExpression? Expression => parsed.Value.Expression;

    /// <summary>Why the reference cannot be read, or null.</summary>
    public string? SyntaxError => parsed.Value.Error;
}

/// <summary>Recognises <c>{{ ... }}</c> in paragraph text (code spans are parsed first and keep theirs).</summary>
internal sealed class ReferenceInlineParser : InlineParser
{
    private readonly string path;

    public ReferenceInlineParser(string path)
    {
        this.path = path;
        OpeningCharacters = ['{'];
    }

    public override bool Match(InlineProcessor processor, ref StringSlice slice)
    {
        if (slice.PeekChar() != '{')
        {
            return false;
        }

        var start = slice.Start;
        var text = slice.Text;
        var close = text.IndexOf("}}", start + 2, slice.End - start - 1, StringComparison.Ordinal);
        var position = processor.GetSourcePosition(start, out var line, out var column);
        var location = new SourceLocation(path, line, column);
        var reopened = text.IndexOf("{{", start + 2, slice.End - start - 1, StringComparison.Ordinal);
        if (reopened >= 0 && (close < 0 || reopened < close))
        {
            // '{{ a.b.c ({{ d.e | result }})': the first reference is the one left open; the one
            // after it is read as usual.
            processor.Inline = new ReferenceInline
            {
                Text = text.Substring(start, reopened - start),
                Location = location,
                Closed = false,
                Span = new Markdig.Syntax.SourceSpan(position, position + 1),
            };
            slice.Start = reopened;
            return true;
        }

        if (close < 0)
        {
            processor.Inline = new ReferenceInline
            {
                Text = text.Substring(start, slice.End - start + 1),
                Location = location,
                Closed = false,
                Span = new Markdig.Syntax.SourceSpan(position, position + 1),
            };
            slice.Start = slice.End + 1;
            return true;
        }

        processor.Inline = new ReferenceInline
        {
            Text = text.Substring(start + 2, close - start - 2).Trim(),
            Location = location,
            Span = new Markdig.Syntax.SourceSpan(position, position + (close + 1 - start)),
        };
        slice.Start = close + 2;
        return true;
    }
}
