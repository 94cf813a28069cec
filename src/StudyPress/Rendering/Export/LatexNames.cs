using System.Text;

namespace StudyPress.Rendering.Export;

/// <summary>
/// Names of the LaTeX macros a fragment defines. A TeX control word holds letters only, so a name
/// is built from words:
/// <list type="bullet">
/// <item>a value is <c>\sp</c> + block + test + term + level (or the pair's two levels joined by
/// <c>Vs</c>) + stat, each part in words with capitals (<c>\spMainAnovaNozzleF</c>,
/// <c>\spPairsTukeyHsdNozzleFlatFanVsFullConePAdj</c>); parts that are null are left out;</item>
/// <item>inside a part, every character that is not an ASCII letter or digit separates words
/// (<c>flat-fan</c> → <c>FlatFan</c>, <c>ci_low</c> → <c>CiLow</c>); accented letters lose
/// their accent (<c>é</c> → <c>e</c>); other letters are dropped; <c>:</c> (an interaction) is
/// the word <c>By</c>, a decimal point between digits is <c>Point</c>, and each digit is its English
/// name (<c>df1</c> → <c>DfOne</c>, <c>0.5</c> → <c>ZeroPointFive</c>); a part left with nothing is
/// <c>X</c>;</item>
/// <item>when two names come out the same, the first (in manifest order) keeps it and the later
/// ones get <c>B</c>, <c>C</c>, … (<c>BB</c> after <c>Z</c>) appended, each the first such name not
/// already taken.</item>
/// </list>
/// Tables, figures and methods text are named the same way: <c>\sp</c> + block + table kind +
/// <c>Table</c> (and <c>…Caption</c>), <c>\sp</c> + block + chart type + <c>Figure</c> (and
/// <c>…Caption</c>), <c>\sp</c> + block + paragraph kind + <c>Text</c>.
/// </summary>
public sealed class LatexNames
{
    private static readonly string[] DigitWords = ["Zero", "One", "Two", "Three", "Four", "Five", "Six", "Seven", "Eight", "Nine"];

    private readonly HashSet<string> taken = new(StringComparer.Ordinal);

    /// <summary>A new unique macro name (without the backslash) from its parts.</summary>
    public string Take(params string?[] parts) => Take(parts, string.Empty);

    /// <summary>A new unique name N whose companion N<c>Caption</c> is free as well (both are taken).</summary>
    public string TakeWithCaption(params string?[] parts) => Take(parts, "Caption");

    private string Take(string?[] parts, string companion)
    {
        var baseName = "sp" + string.Concat(parts.Where(p => p is not null).Select(p => Words(p!)));
        var name = baseName;
        for (var n = 1; taken.Contains(name) || (companion.Length > 0 && taken.Contains(name + companion)); n++)
        {
            name = baseName + Suffix(n);
        }

        taken.Add(name);
        if (companion.Length > 0)
        {
            taken.Add(name + companion);
        }

        return name;
    }

    /// <summary>The macro name for a manifest value.</summary>
    public string ForValue(ManifestValue v) =>
        Take(v.Block, v.Test, v.Term, v.Level, v.Pair is null ? null : Words(v.Pair[0]) + "Vs" + Words(v.Pair.Count > 1 ? v.Pair[1] : string.Empty), v.Stat);

    /// <summary>1 → B, 2 → C, … 25 → Z, 26 → BB, …: letters only, never A (a name's own form).</summary>
    private static string Suffix(int n)
    {
        var letter = (char)('B' + ((n - 1) % 25));
        return new string(letter, 1 + ((n - 1) / 25));
    }

    /// <summary>One part of a name in words with capitals (see the class summary).</summary>
    public static string Words(string text)
    {
        var sb = new StringBuilder();
        var startWord = true;
        var plain = Plain(text);
        for (var i = 0; i < plain.Length; i++)
        {
            var c = plain[i];
            if (c is >= 'a' and <= 'z' or >= 'A' and <= 'Z')
            {
                sb.Append(startWord ? char.ToUpperInvariant(c) : c);
                startWord = false;
            }
            else if (c is >= '0' and <= '9')
            {
                sb.Append(DigitWords[c - '0']);
                startWord = true;
            }
            else
            {
                if (c == ':')
                {
                    sb.Append("By");
                }
                else if (c is '.' or ',' && i > 0 && i + 1 < plain.Length && char.IsAsciiDigit(plain[i - 1]) && char.IsAsciiDigit(plain[i + 1]))
                {
                    sb.Append("Point");
                }

                startWord = true;
            }
        }

        return sb.Length == 0 ? "X" : sb.ToString();
    }

    /// <summary>The text with accents removed (é → e); letters with no ASCII base stay and are later dropped.</summary>
    private static string Plain(string text)
    {
        var sb = new StringBuilder(text.Length);
        foreach (var rune in text.EnumerateRunes())
        {
            var c = rune.Value;
            var mapped = c switch { 'ß' => "ss", 'æ' => "ae", 'Æ' => "AE", 'ø' => "o", 'Ø' => "O", 'œ' => "oe", 'Œ' => "OE", 'ł' => "l", 'Ł' => "L", _ => null };
            if (mapped is not null)
            {
                sb.Append(mapped);
            }
            else if (c < 0x80)
            {
                sb.Append((char)c);
            }
            else if (StudyPress.Syntax.UnicodeNfc.BaseOf(c) is var b and < 0x80)
            {
                sb.Append((char)b);
            }
            else
            {
                // A letter of another script: a separator here (dropped from the name).
                sb.Append(' ');
            }
        }

        return sb.ToString();
    }
}
