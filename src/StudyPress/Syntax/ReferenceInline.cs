using Markdig.Helpers;
using Markdig.Parsers;
using Markdig.Syntax.Inlines;
using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>A <c>[=path]</c> or <c>[=path, words]</c> reference in prose.</summary>
public sealed class ReferenceInline : LeafInline
{
    /// <summary>What is written between <c>[=</c> and <c>]</c>, trimmed, line breaks read as spaces.</summary>
    public required string Text { get; init; }

    public required SourceLocation Location { get; init; }

    /// <summary>False when the closing bracket was missing.</summary>
    public bool Closed { get; init; } = true;

    private readonly Lazy<(ReferenceExpression? Expression, string? Error)> parsed;

    public ReferenceInline() => parsed = new(() => (ReferenceGrammar.Parse(Text!, out var error), error));

    /// <summary>The reference read once by <see cref="ReferenceGrammar"/>, or null when it cannot be read (see <see cref="SyntaxError"/>).</summary>
    public ReferenceExpression? Expression => parsed.Value.Expression;

    /// <summary>Why the reference cannot be read, or null.</summary>
    public string? SyntaxError => parsed.Value.Error;
}

/// <summary>
/// A <c>{{ … }}</c> in prose: the brace form is not a reference (it is reported, once, with the
/// form to write instead); it is kept in the tree only to be reported.
/// </summary>
public sealed class OldReferenceInline : LeafInline
{
    /// <summary>The text as written, braces included.</summary>
    public required string Written { get; init; }

    public required SourceLocation Location { get; init; }
}

/// <summary>
/// Recognises <c>[=</c> … <c>]</c> in paragraph text, and the brace form <c>{{ … }}</c> so that it can
/// be reported. Code spans are parsed first and keep theirs; <c>\[=</c> is a literal "[=" (the
/// backslash escapes the bracket). A ']' inside a quoted part does not close the reference.
/// </summary>
internal sealed class ReferenceInlineParser : InlineParser
{
    /// <summary>
    /// How far past its opening a reference's closing is looked for: twice the longest reference,
    /// so that every opening costs a bounded scan and a paragraph of openings stays linear.
    /// </summary>
    private const int Window = 2 * ReferenceGrammar.MaxLength;

    private readonly string path;

    public ReferenceInlineParser(string path)
    {
        this.path = path;
        OpeningCharacters = ['[', '{', '!'];
    }

    public override bool Match(InlineProcessor processor, ref StringSlice slice)
    {
        var c = slice.CurrentChar;
        var next = slice.PeekCharExtra(1);
        var start = slice.Start;
        var text = slice.Text;
        if (c == '!')
        {
            // "![=a.b]": the '!' is text, so that the image syntax does not take the bracket.
            if (next != '[' || slice.PeekCharExtra(2) != '=')
            {
                return false;
            }

            var at = processor.GetSourcePosition(start, out _, out _);
            processor.Inline = new LiteralInline("!") { Span = new Markdig.Syntax.SourceSpan(at, at) };
            slice.Start = start + 1;
            return true;
        }

        if (c == '{')
        {
            return next == '{' && MatchOldForm(processor, ref slice);
        }

        if (next != '=')
        {
            return false;
        }

        var position = processor.GetSourcePosition(start, out var line, out var column);
        var location = new SourceLocation(path, line, column);
        var last = Math.Min(slice.End, start + 1 + Window);
        var close = Closing(text, start + 2, last, quoted: true, out var reopened);
        if (close < 0 && reopened < 0)
        {
            // A quote left open: take the first ']' so that the grammar says what is wrong.
            close = Closing(text, start + 2, last, quoted: false, out reopened);
        }

        if (close < 0)
        {
            // '[=a.b.c ([=d.e, result])': the first reference is the one left open; the one after
            // it is read as usual. What follows an opening never closed is text.
            var end = reopened >= 0 ? reopened : last + 1;
            processor.Inline = new ReferenceInline
            {
                Text = text[start..end],
                Location = location,
                Closed = false,
                Span = new Markdig.Syntax.SourceSpan(position, position + 1),
            };
            slice.Start = end;
            return true;
        }

        processor.Inline = new ReferenceInline
        {
            Text = text[(start + 2)..close].Replace('\n', ' ').Trim(),
            Location = location,
            Span = new Markdig.Syntax.SourceSpan(position, position + (close - start)),
        };
        slice.Start = close + 1;
        return true;
    }

    /// <summary>
    /// The index of the ']' that closes a reference whose text starts at <paramref name="from"/>
    /// (outside quotes when <paramref name="quoted"/>), or -1; <paramref name="reopened"/> is where
    /// another "[=" starts before it (-1 when none).
    /// </summary>
    private static int Closing(string text, int from, int end, bool quoted, out int reopened)
    {
        reopened = -1;
        char? quote = null;
        for (var i = from; i <= end; i++)
        {
            var ch = text[i];
            if (quote is { } q)
            {
                if (ch == '\\')
                {
                    i++;
                }
                else if (ch == q)
                {
                    quote = null;
                }
            }
            else if (quoted && ch is '"' or '\'')
            {
                quote = ch;
            }
            else if (ch == ']')
            {
                return i;
            }
            else if (ch == '[' && i < end && text[i + 1] == '=')
            {
                reopened = i;
                return -1;
            }
        }

        return -1;
    }

    /// <summary>"{{ … }}" with its closing braces: an old-form node to report; anything else is text.</summary>
    private bool MatchOldForm(InlineProcessor processor, ref StringSlice slice)
    {
        var start = slice.Start;
        var text = slice.Text;
        // Looked for within a bounded window, as for '[=': a longer brace text is left as text.
        var length = Math.Min(slice.End - start - 1, Window);
        var close = length <= 0 ? -1 : text.IndexOf("}}", start + 2, length, StringComparison.Ordinal);
        var reopened = length <= 0 ? -1 : text.IndexOf("{{", start + 2, length, StringComparison.Ordinal);
        if (close < 0 || (reopened >= 0 && reopened < close))
        {
            return false;
        }

        var position = processor.GetSourcePosition(start, out var line, out var column);
        processor.Inline = new OldReferenceInline
        {
            Written = text[start..(close + 2)].Replace('\n', ' '),
            Location = new SourceLocation(path, line, column),
            Span = new Markdig.Syntax.SourceSpan(position, position + (close + 1 - start)),
        };
        slice.Start = close + 2;
        return true;
    }
}
