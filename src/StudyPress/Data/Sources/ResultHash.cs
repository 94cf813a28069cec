using System.Globalization;
using System.Numerics;
using System.Security.Cryptography;
using System.Text;
using StudyPress.Syntax;

namespace StudyPress.Data.Sources;

/// <summary>
/// SHA-256 of a query result in a canonical form (format <c>studypress-resultset/1</c>; described in
/// docs/data-sources.md). Every item is written as a tag letter, the length of its UTF-8 text in
/// decimal, ':' and the text, so no separator can be forged by a value:
/// <list type="bullet">
/// <item>the line <c>studypress-resultset/1</c> and '\n';</item>
/// <item>one line for the columns: for each, <c>c</c>+name then <c>y</c>+type name as the database reports it;</item>
/// <item>one line per row in result order, one item per cell: <c>n</c> (null, empty text), <c>i</c> integer,
/// <c>d</c> decimal (invariant text, scale kept), <c>r</c> binary double (shortest round-trip text),
/// <c>s</c> text, <c>t</c> date/time (ISO 8601), <c>b</c> boolean (true/false), <c>x</c> bytes, and text that is not valid UTF-8 (lower-case hex),
/// <c>o</c> anything else (invariant text).</item>
/// </list>
/// </summary>
public sealed class ResultHash : IDisposable
{
    public const string Format = "studypress-resultset/1";

    private readonly IncrementalHash hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);

    public ResultHash(IReadOnlyList<string> names, IReadOnlyList<string> types)
    {
        Write(Format + "\n");
        for (var i = 0; i < names.Count; i++)
        {
            Item('c', names[i]);
            Item('y', types[i]);
        }

        Write("\n");
    }

    public void Row(object?[] values)
    {
        foreach (var v in values)
        {
            var (tag, text) = Canonical(v);
            Item(tag, text);
        }

        Write("\n");
    }

    public string Finish() => Convert.ToHexStringLower(hash.GetHashAndReset());

    public void Dispose() => hash.Dispose();

    public static (char Tag, string Text) Canonical(object? v) => v switch
    {
        null or DBNull => ('n', string.Empty),
        long or int or short or sbyte or byte or ushort or uint or ulong or BigInteger => ('i', ((IFormattable)v).ToString(null, CultureInfo.InvariantCulture)),
        decimal m => ('d', m.ToString(CultureInfo.InvariantCulture)),
        double d => ('r', d.ToString("R", CultureInfo.InvariantCulture)),
        float f => ('r', f.ToString("R", CultureInfo.InvariantCulture)),
        string s => ('s', s),
        DateTime dt => ('t', dt.ToString("yyyy-MM-dd'T'HH:mm:ss.fffffff", CultureInfo.InvariantCulture)),
        DateOnly day => ('t', day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)),
        DateTimeOffset dto => ('t', dto.ToString("yyyy-MM-dd'T'HH:mm:ss.fffffffzzz", CultureInfo.InvariantCulture)),
        TimeOnly time => ('t', time.ToString("HH:mm:ss.fffffff", CultureInfo.InvariantCulture)),
        TimeSpan span => ('t', span.ToString("c", CultureInfo.InvariantCulture)),
        bool b => ('b', b ? "true" : "false"),
        byte[] bytes => ('x', Convert.ToHexStringLower(bytes)),
        InvalidText bad => ('x', Convert.ToHexStringLower(bad.Bytes)),
        IFormattable x => ('o', x.ToString(null, CultureInfo.InvariantCulture)),
        _ => ('o', v.ToString() ?? string.Empty),
    };

    private void Item(char tag, string text)
    {
        var bytes = Encoding.UTF8.GetBytes(text);
        Write(tag + bytes.Length.ToString(CultureInfo.InvariantCulture) + ":");
        hash.AppendData(bytes);
    }

    private void Write(string s) => hash.AppendData(Encoding.UTF8.GetBytes(s));
}
