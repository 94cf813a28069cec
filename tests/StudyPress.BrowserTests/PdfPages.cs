using System.Globalization;
using System.IO.Compression;
using System.Text;
using System.Text.RegularExpressions;

namespace StudyPress.BrowserTests;

/// <summary>
/// Reads just enough of a PDF that Chromium printed to tell how full each page is: for every page
/// (in file order, which is page order in Chromium's output), the height and the distance from the
/// page's top edge to its lowest line of text. Text positions come from the text matrices (Tm) of
/// the page's content stream under the transformation matrices in force (cm, q, Q); Flate streams
/// are inflated. Not a general PDF reader: no object streams, no incremental updates.
/// </summary>
internal static partial class PdfPages
{
    internal sealed record Page(double Height, double LowestText)
    {
        /// <summary>How far down the page its lowest text reaches (0 = top edge, 1 = bottom edge).</summary>
        public double Fill => LowestText / Height;
    }

    public static IReadOnlyList<Page> Read(byte[] pdf)
    {
        var text = Encoding.Latin1.GetString(pdf);
        var objects = new Dictionary<int, (int Start, int End)>();
        foreach (Match m in ObjectStart().Matches(text))
        {
            var end = text.IndexOf("endobj", m.Index, StringComparison.Ordinal);
            objects[int.Parse(m.Groups[1].Value, CultureInfo.InvariantCulture)] = (m.Index, end < 0 ? text.Length : end);
        }

        var pages = new List<Page>();
        foreach (Match m in PageObject().Matches(text))
        {
            var number = int.Parse(m.Groups[1].Value, CultureInfo.InvariantCulture);
            var body = text[objects[number].Start..objects[number].End];
            var box = MediaBox().Match(body).Groups[1].Value.Split(' ', StringSplitOptions.RemoveEmptyEntries)
                .Select(v => double.Parse(v, CultureInfo.InvariantCulture)).ToArray();
            var height = box[3] - box[1];
            var contents = Contents().Match(body);
            var refs = contents.Groups["one"].Success
                ? [int.Parse(contents.Groups["one"].Value, CultureInfo.InvariantCulture)]
                : Reference().Matches(contents.Groups["many"].Value).Select(r => int.Parse(r.Groups[1].Value, CultureInfo.InvariantCulture)).ToList();
            var lowest = 0.0;
            foreach (var r in refs)
            {
                var (start, end) = objects[r];
                lowest = Math.Max(lowest, LowestText(Stream(pdf, text, start, end), height));
            }

            pages.Add(new Page(height, lowest));
        }

        return pages;
    }

    private static byte[] Stream(byte[] pdf, string text, int start, int end)
    {
        var head = text.IndexOf("stream", start, StringComparison.Ordinal);
        var dataStart = head + "stream".Length;
        dataStart += text[dataStart] == '\r' ? 2 : 1;
        var dataEnd = text.LastIndexOf("endstream", end, StringComparison.Ordinal);
        var data = pdf[dataStart..dataEnd];
        if (!text[start..head].Contains("/FlateDecode", StringComparison.Ordinal))
        {
            return data;
        }

        using var z = new ZLibStream(new MemoryStream(data), CompressionMode.Decompress);
        using var o = new MemoryStream();
        z.CopyTo(o);
        return o.ToArray();
    }

    /// <summary>The largest distance from the top edge at which a text matrix places text.</summary>
    private static double LowestText(byte[] content, double height)
    {
        var ops = Encoding.Latin1.GetString(content);
        var ctm = new[] { 1.0, 0, 0, 1, 0, 0 };
        var stack = new Stack<double[]>();
        var numbers = new List<double>();
        var lowest = 0.0;
        foreach (Match t in Token().Matches(ops))
        {
            var s = t.Value;
            if (Number().IsMatch(s))
            {
                numbers.Add(double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture));
                continue;
            }

            switch (s)
            {
                case "q":
                    stack.Push(ctm);
                    break;
                case "Q":
                    ctm = stack.Pop();
                    break;
                case "cm" when numbers.Count >= 6:
                    ctm = Multiply(numbers.TakeLast(6).ToArray(), ctm);
                    break;
                case "Tm" when numbers.Count >= 6:
                    var tm = numbers.TakeLast(6).ToArray();
                    var y = (tm[4] * ctm[1]) + (tm[5] * ctm[3]) + ctm[5];
                    lowest = Math.Max(lowest, height - y);
                    break;
            }

            numbers.Clear();
        }

        return lowest;
    }

    private static double[] Multiply(double[] a, double[] b) =>
    [
        (a[0] * b[0]) + (a[1] * b[2]), (a[0] * b[1]) + (a[1] * b[3]),
        (a[2] * b[0]) + (a[3] * b[2]), (a[2] * b[1]) + (a[3] * b[3]),
        (a[4] * b[0]) + (a[5] * b[2]) + b[4], (a[4] * b[1]) + (a[5] * b[3]) + b[5],
    ];

    [GeneratedRegex(@"(\d+) 0 obj\b")]
    private static partial Regex ObjectStart();

    [GeneratedRegex(@"(\d+) 0 obj\s*<<\s*/Type\s*/Page\b")]
    private static partial Regex PageObject();

    [GeneratedRegex(@"/MediaBox\s*\[([^\]]*)\]")]
    private static partial Regex MediaBox();

    [GeneratedRegex(@"/Contents\s*(?:(?<one>\d+) 0 R|\[(?<many>[^\]]*)\])")]
    private static partial Regex Contents();

    [GeneratedRegex(@"(\d+) 0 R")]
    private static partial Regex Reference();

    [GeneratedRegex(@"\[|\]|<<|>>|<[0-9A-Fa-f\s]*>|\((?:\\.|[^\\)])*\)|/[^\s/\[\]<>()]+|[-+]?\d*\.?\d+|[A-Za-z'""*]+")]
    private static partial Regex Token();

    [GeneratedRegex(@"^[-+]?\d*\.?\d+$")]
    private static partial Regex Number();
}
