using System.Globalization;
using System.Text;

namespace StudyPress.Syntax;

/// <summary>
/// Unicode normalisation form C (canonical decomposition, canonical ordering, canonical
/// composition; UAX #15), implemented here because the compiler runs with invariant globalization,
/// where <see cref="string.Normalize()"/> leaves text unchanged. The data (UnicodeNfc.Data.cs) is
/// generated from the Unicode Character Database by src/StudyPress/Data/UnicodeNfc.generate.py; Hangul syllables are
/// composed and decomposed arithmetically.
/// </summary>
internal static partial class UnicodeNfc
{
    private const int SBase = 0xAC00, LBase = 0x1100, VBase = 0x1161, TBase = 0x11A7;
    private const int LCount = 19, VCount = 21, TCount = 28, NCount = VCount * TCount, SCount = LCount * NCount;

    private static readonly Lazy<Tables> Data = new(Load);

    /// <summary>The text in NFC. Text below U+0300 is returned as it is (it is already NFC).</summary>
    public static string Normalize(string text)
    {
        var simple = true;
        foreach (var ch in text)
        {
            if (ch >= '\u0300')
            {
                simple = false;
                break;
            }
        }

        if (simple)
        {
            return text;
        }

        var t = Data.Value;
        var cps = new List<int>(text.Length + 4);
        foreach (var rune in text.EnumerateRunes())
        {
            Decompose(rune.Value, t, cps);
        }

        // Canonical ordering: a stable sort of each run of non-starters by combining class.
        for (var i = 1; i < cps.Count; i++)
        {
            var c = Ccc(cps[i], t);
            if (c == 0)
            {
                continue;
            }

            var j = i;
            while (j > 0 && Ccc(cps[j - 1], t) > c)
            {
                (cps[j - 1], cps[j]) = (cps[j], cps[j - 1]);
                j--;
            }
        }

        // Canonical composition.
        var result = new List<int>(cps.Count);
        var starter = -1;
        var lastClass = 0;
        foreach (var cp in cps)
        {
            var cls = Ccc(cp, t);
            if (starter >= 0 && (lastClass < cls || lastClass == 0) && Compose(result[starter], cp, t) is { } composite)
            {
                result[starter] = composite;
                continue;
            }

            if (cls == 0)
            {
                starter = result.Count;
                lastClass = 0;
            }
            else
            {
                lastClass = cls;
            }

            if (starter < 0 && cls != 0)
            {
                lastClass = 256; // a non-starter before any starter blocks composition
            }

            result.Add(cp);
        }

        var b = new StringBuilder(result.Count + 4);
        foreach (var cp in result)
        {
            b.Append(new Rune(cp).ToString());
        }

        return b.ToString();
    }

    /// <summary>The first code point of a character's full canonical decomposition (its base letter: é → e).</summary>
    public static int BaseOf(int cp)
    {
        var into = new List<int>(4);
        Decompose(cp, Data.Value, into);
        return into.Count == 0 ? cp : into[0];
    }

    private static void Decompose(int cp, Tables t, List<int> into)
    {
        if (cp is >= SBase and < SBase + SCount)
        {
            var s = cp - SBase;
            into.Add(LBase + (s / NCount));
            into.Add(VBase + (s % NCount / TCount));
            if (s % TCount != 0)
            {
                into.Add(TBase + (s % TCount));
            }

            return;
        }

        if (t.Decompositions.TryGetValue(cp, out var parts))
        {
            foreach (var p in parts)
            {
                Decompose(p, t, into);
            }

            return;
        }

        into.Add(cp);
    }

    private static int? Compose(int first, int second, Tables t)
    {
        if (first is >= LBase and < LBase + LCount && second is >= VBase and < VBase + VCount)
        {
            return SBase + ((((first - LBase) * VCount) + (second - VBase)) * TCount);
        }

        if (first is >= SBase and < SBase + SCount && (first - SBase) % TCount == 0 && second is > TBase and < TBase + TCount)
        {
            return first + (second - TBase);
        }

        return t.Compositions.TryGetValue(((long)first << 21) | (uint)second, out var c) ? c : null;
    }

    private static int Ccc(int cp, Tables t)
    {
        if (cp < 0x300)
        {
            return 0;
        }

        // Binary search over the sorted ranges.
        int lo = 0, hi = t.ClassRanges.Length - 1;
        while (lo <= hi)
        {
            var mid = (lo + hi) / 2;
            var (first, last, cls) = t.ClassRanges[mid];
            if (cp < first)
            {
                hi = mid - 1;
            }
            else if (cp > last)
            {
                lo = mid + 1;
            }
            else
            {
                return cls;
            }
        }

        return 0;
    }

    private sealed record Tables(Dictionary<int, int[]> Decompositions, Dictionary<long, int> Compositions, (int First, int Last, int Class)[] ClassRanges);

    private static Tables Load()
    {
        var decompositions = new Dictionary<int, int[]>();
        var compositions = new Dictionary<long, int>();
        foreach (var entry in DecompositionData.Split(';', StringSplitOptions.RemoveEmptyEntries))
        {
            var eq = entry.IndexOf('=', StringComparison.Ordinal);
            var cp = int.Parse(entry.AsSpan(0, eq), NumberStyles.HexNumber, CultureInfo.InvariantCulture);
            var rest = entry[(eq + 1)..];
            var composes = !rest.EndsWith('!');
            var parts = rest.TrimEnd('!').Split(' ').Select(p => int.Parse(p, NumberStyles.HexNumber, CultureInfo.InvariantCulture)).ToArray();
            decompositions[cp] = parts;
            if (composes && parts.Length == 2)
            {
                compositions[((long)parts[0] << 21) | (uint)parts[1]] = cp;
            }
        }

        var ranges = CombiningClassData.Split(';', StringSplitOptions.RemoveEmptyEntries).Select(r =>
        {
            var dash = r.IndexOf('-', StringComparison.Ordinal);
            var eq = r.IndexOf('=', StringComparison.Ordinal);
            return (
                int.Parse(r.AsSpan(0, dash), NumberStyles.HexNumber, CultureInfo.InvariantCulture),
                int.Parse(r.AsSpan(dash + 1, eq - dash - 1), NumberStyles.HexNumber, CultureInfo.InvariantCulture),
                int.Parse(r.AsSpan(eq + 1), NumberStyles.Integer, CultureInfo.InvariantCulture));
        }).ToArray();
        return new Tables(decompositions, compositions, ranges);
    }
}
