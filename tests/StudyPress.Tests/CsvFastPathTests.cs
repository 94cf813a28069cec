using System.Globalization;
using System.Text;
using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Tests;

/// <summary>
/// The byte-level CSV reader against the general reader: the same columns bit for bit for plain
/// files, and for anything irregular a fall-back to the general reader with its own messages.
/// </summary>
public sealed class CsvFastPathTests
{
    private static readonly SourceLocation At = new("study.md", 0, 0);

    private static (LoadedDataset? Data, string Messages, bool Fast) Load(string csv, bool general, IReadOnlyList<string>? levels = null, char decimalMark = '.', char delimiter = ',', string? order = null)
    {
        var spec = new DatasetSpec("d", "d.csv", null, delimiter, decimalMark, ["", "NA"], At, At, null);
        var needs = new DatasetNeeds();
        needs.Numeric["y"] = At;
        needs.Numeric["run"] = At;
        needs.Order = order;
        needs.Responses.Add("y");
        needs.Factors["group"] = (new FactorSpec("group", "group", levels, levels?.Select(_ => At).ToList() ?? [], null, At), At);
        var bag = new DiagnosticBag();
        CsvLoader.ForceGeneralPath = general;
        try
        {
            var data = CsvLoader.Load(spec, Encoding.UTF8.GetBytes(csv), "d.csv", needs, bag);
            return (data, string.Join("\n", bag.Items.Select(i => i.ToString())), CsvLoader.LastLoadWasFast);
        }
        finally
        {
            CsvLoader.ForceGeneralPath = false;
        }
    }

    private static void AssertSame(LoadedDataset a, LoadedDataset b)
    {
        Assert.Equal(a.Rows, b.Rows);
        Assert.Equal(a.Lines, b.Lines);
        Assert.Equal(a.ColumnNames, b.ColumnNames);
        foreach (var (name, x) in a.Numeric)
        {
            var y = b.Numeric[name];
            Assert.Equal(BitConverter.DoubleToInt64Bits(x.Centre), BitConverter.DoubleToInt64Bits(y.Centre));
            Assert.Equal(x.Missing, y.Missing);
            Assert.Equal(x.Centred.Select(BitConverter.DoubleToInt64Bits), y.Centred.Select(BitConverter.DoubleToInt64Bits));
            Assert.Equal(x.Values.Select(BitConverter.DoubleToInt64Bits), y.Values.Select(BitConverter.DoubleToInt64Bits));
            Assert.NotNull(x.Exact);
            Assert.NotNull(y.Exact);
            for (var i = 0; i < a.Rows; i++)
            {
                if (x.IsMissing(i))
                {
                    continue; // 0 either way, never read
                }

                Assert.Equal(decimal.GetBits(x.Exact![i]), decimal.GetBits(y.Exact![i]));
            }

            var present = Enumerable.Range(0, a.Rows).Where(i => !x.IsMissing(i)).ToList();
            var odd = present.Where(i => i % 3 == 1).ToList();
            Assert.Equal(x.Exact!.Mean(present), y.Exact!.Mean(present));
            Assert.Equal(x.Exact.Mean(odd), y.Exact.Mean(odd));
        }

        foreach (var (name, f) in a.Factors)
        {
            var g = b.Factors[name];
            Assert.Equal(f.Levels, g.Levels);
            Assert.Equal(f.Codes, g.Codes);
            Assert.Equal(f.Counts, g.Counts);
        }
    }

    private static string Plain(int rows, int seed, string newline = "\n")
    {
        var rng = new Random(seed);
        var sb = new StringBuilder("run , group,y, note" + newline);
        for (var i = 0; i < rows; i++)
        {
            var y = i % 17 == 5 ? "NA" : i % 23 == 7 ? string.Empty : ((rng.Next(-2_000_000, 2_000_000) * 1000L) + rng.Next(1, 999)).ToString(CultureInfo.InvariantCulture).Insert(0, string.Empty);
            if (y.Length > 3)
            {
                y = y[..^3] + "." + y[^3..];
                y = y.StartsWith("-.", StringComparison.Ordinal) ? "-0" + y[1..] : y.StartsWith('.') ? "0" + y : y;
            }

            sb.Append(CultureInfo.InvariantCulture, $"{i + 1}, g{(i * 7) % 4} ,{y},x{i}{newline}");
            if (i == rows / 3)
            {
                sb.Append(newline); // a blank line inside chunk 1
            }
        }

        return sb.Append(newline).ToString();
    }

    [Theory]
    [InlineData(1, "\n")]
    [InlineData(2, "\r\n")]
    [InlineData(3, "\n")]
    public void PlainFile_SameColumnsAsGeneralReader(int seed, string newline)
    {
        var csv = Plain(5000, seed, newline);
        var (fast, m1, wasFast) = Load(csv, general: false);
        var (general, m2, _) = Load(csv, general: true);
        Assert.True(wasFast);
        Assert.Equal(string.Empty, m1);
        Assert.Equal(m2, m1);
        AssertSame(general!, fast!);
    }

    [Fact]
    public void LargeValues_KeepEveryDigit_SameAsGeneralReader()
    {
        // 13 significant digits before the mark: the centred values come from the exact difference.
        var sb = new StringBuilder("run,group,y\n");
        for (var i = 0; i < 300; i++)
        {
            sb.Append(CultureInfo.InvariantCulture, $"{i},{(i % 2 == 0 ? "a" : "b")},{1000000000000 + (i % 10)}.{(i * 3) % 10}\n");
        }

        var (fast, _, wasFast) = Load(sb.ToString(), general: false);
        var (general, _, _) = Load(sb.ToString(), general: true);
        Assert.True(wasFast);
        AssertSame(general!, fast!);
    }

    [Fact]
    public void Zeros_SameAsGeneralReader()
    {
        var csv = "run,group,y\n0,a,0.000\n1,a,-1.250\n2,b,0.000\n3,b,2.000\n4,a,0.000\n";
        var (fast, _, wasFast) = Load(csv, general: false);
        var (general, _, _) = Load(csv, general: true);
        Assert.True(wasFast);
        AssertSame(general!, fast!);
    }

    [Fact]
    public void HandComputed_CentreIsExactMean()
    {
        // y = 1.000, 2.000, 4.000: mean 7/3; centred value of 1.000 is 1 - 7/3 = -4/3 formed in decimal.
        var (data, _, wasFast) = Load("run,group,y\n1,a,1.000\n2,a,2.000\n3,b,4.000\n", general: false);
        Assert.True(wasFast);
        var y = data!.Numeric["y"];
        Assert.Equal((double)(7.000m / 3), y.Centre);
        Assert.Equal((double)(1.000m - (7.000m / 3)), y.Centred[0]);
        Assert.Equal(-4.0 / 3, y.Centred[0], 14);
        Assert.Equal(4.0, y.Values[2]);
        Assert.Equal(1.5, y.Exact!.Mean([0, 1]));
    }

    [Theory]
    [InlineData("run,group,y\n1,a,1.5\n2,\"b\",2.5\n")] // a quote
    [InlineData("run,group,y\n1,a,1.5\n2,b\n")] // ragged row
    [InlineData("run,group,y\n1,a,1.5\n2,b,2.25\n")] // mixed decimals
    [InlineData("run,group,y\n1,a,1.5\n2,b,abc\n")] // not a number
    [InlineData("run,group,y\n1,a,1.5\n2,b,1e3\n")] // exponent
    [InlineData("run,group,y\n1,a,1.5\n2,b,-0.0\n")] // negative zero
    [InlineData("run,group,y\n1,a,1.5\n2,b,1234567890123456789.0\n")] // too many digits
    [InlineData("run,group,y\n1,a,1.5\r2,b,2.5\n")] // lone CR
    [InlineData("run,group,y\n1,a,1.5\n2,c,2.5\n")] // undeclared level
    [InlineData("run,group,group\n1,a,1.5\n")] // duplicate column
    [InlineData("run,grp,y\n1,a,1.5\n")] // unknown column
    [InlineData("run,group,y\n1,a,1,5\n")] // decimal comma
    public void Irregular_FallsBackWithGeneralMessages(string csv)
    {
        string[] levels = ["a", "b"];
        var (fast, m1, wasFast) = Load(csv, general: false, levels);
        var (general, m2, _) = Load(csv, general: true, levels);
        Assert.False(wasFast);
        Assert.Equal(m2, m1);
        Assert.Equal(general is null, fast is null);
        if (general is not null)
        {
            Assert.Equal(general.Numeric["y"].Centred, fast!.Numeric["y"].Centred);
        }
    }

    [Theory]
    [InlineData("\n")]
    [InlineData("\r\n")]
    public void BlankLines_InBothChunksAndAtTheEnd_SameLinesAsGeneralReader(string newline)
    {
        // Blank lines early in chunk 1, in chunk 2 and several at the end: every row keeps its line.
        var sb = new StringBuilder("run,group,y" + newline + newline);
        for (var i = 0; i < 4000; i++)
        {
            sb.Append(CultureInfo.InvariantCulture, $"{i},{(i % 3 == 0 ? "a" : "b")},{i % 50}.{i % 7}{newline}");
            if (i is 10 or 3100 or 3101)
            {
                sb.Append("  " + newline);
            }
        }

        var csv = sb.Append(newline).Append(newline).ToString();
        var (fast, m1, wasFast) = Load(csv, general: false);
        var (general, m2, _) = Load(csv, general: true);
        Assert.True(wasFast);
        Assert.Equal(m2, m1);
        AssertSame(general!, fast!);
        Assert.Equal(3, fast!.Lines[0]);
        Assert.Equal(4000 + 3 + 2, fast.Lines[3999]); // exact hand computation: header, 3 blank lines before the last row
    }

    [Fact]
    public void TrailingBlankLines_RowsRunOnFromLineTwo()
    {
        var (fast, _, wasFast) = Load("run,group,y\n1,a,1.5\n2,b,2.5\n\n \n", general: false);
        Assert.True(wasFast);
        Assert.Equal([2, 3], fast!.Lines);
    }

    [Theory]
    [InlineData("\n")]
    [InlineData("\r\n")]
    public void RunOrderColumn_ValuesParsedStraightToDoubles_SameAsGeneralReader(string newline)
    {
        // The run column as the order of observations only (not a response): the byte-level reader
        // keeps its values, centre 0 and no exact values; the values are the general reader's bits.
        var sb = new StringBuilder("run,group,y" + newline);
        for (var i = 0; i < 5000; i++)
        {
            var run = i % 97 == 3 ? "NA" : (((i * 7919L) % 100_003) - 50_000).ToString(CultureInfo.InvariantCulture) + "." + (i % 10).ToString(CultureInfo.InvariantCulture) + "5";
            sb.Append(CultureInfo.InvariantCulture, $"{run},{(i % 2 == 0 ? "a" : "b")},{i % 13}.25{newline}");
        }

        var (fast, m1, wasFast) = Load(sb.ToString(), general: false, order: "run");
        var (general, m2, _) = Load(sb.ToString(), general: true, order: "run");
        Assert.True(wasFast);
        Assert.Equal(m2, m1);
        var f = fast!.Numeric["run"];
        var g = general!.Numeric["run"];
        Assert.Null(f.Exact);
        Assert.Equal(0, f.Centre);
        Assert.Equal(g.Missing, f.Missing);
        Assert.Equal(52, f.Missing); // exact hand computation: i % 97 == 3 for i < 5000
        Assert.Equal(g.Values.Select(BitConverter.DoubleToInt64Bits), f.Values.Select(BitConverter.DoubleToInt64Bits));
        Assert.Equal(f.Values.Select(BitConverter.DoubleToInt64Bits), f.Centred.Select(BitConverter.DoubleToInt64Bits));
        Assert.Same(fast.Order, f);
    }
}
