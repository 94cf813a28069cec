using StudyPress.Charts.Axes;

namespace StudyPress.Charts.Tests;

// Heckbert, P. S. (1990). Nice numbers for graph labels. Graphics Gems, 61–63.
public class NiceNumbersTests
{
    [Theory]
    // nicenum(x, round): 1, 2, 5, 10 times a power of ten (Heckbert 1990, the rounding thresholds 1.5, 3, 7).
    [InlineData(1.4, true, 1)]
    [InlineData(1.5, true, 2)]
    [InlineData(2.9, true, 2)]
    [InlineData(3.0, true, 5)]
    [InlineData(6.9, true, 5)]
    [InlineData(7.0, true, 10)]
    [InlineData(0.25, true, 0.2)]
    [InlineData(438, false, 500)]
    [InlineData(1.0, false, 1)]
    [InlineData(1.01, false, 2)]
    [InlineData(5.01, false, 10)]
    public void Nice_Heckbert_RoundsToOneTwoFive(double x, bool round, double expected) =>
        Assert.Equal(expected, NiceNumbers.Nice(x, round), 12);

    [Fact]
    public void Loose_ZeroToOne_TicksByPointTwo()
    {
        // Common practice example from the brief: 0..1 with 5 ticks gives 0, 0.2, ..., 1.
        var r = NiceNumbers.Loose(0, 1, 5);
        Assert.Equal([0, 0.2, 0.4, 0.6, 0.8, 1.0], r.Ticks());
        Assert.Equal(1, r.FractionDigits);
    }

    [Fact]
    public void Loose_Heckbert105To543_HundredsFrom100To600()
    {
        // Heckbert's (1990) loose-labelling procedure worked by hand for data 105..543, 5 ticks:
        // range = nicenum(438, false) = 500, d = nicenum(125, true) = 100, 100..600 (from memory of the Gem's example).
        var r = NiceNumbers.Loose(105, 543, 5);
        Assert.Equal([100, 200, 300, 400, 500, 600], r.Ticks());
        Assert.Equal(0, r.FractionDigits);
    }

    [Fact]
    public void Loose_NegativeRange_ContainsBothEnds()
    {
        var r = NiceNumbers.Loose(-3.7, 12.2, 5);
        // nicenum(15.9, false) = 20, d = nicenum(5, true) = 5: -5, 0, 5, 10, 15.
        Assert.Equal([-5, 0, 5, 10, 15], r.Ticks());
    }

    [Fact]
    public void Loose_SmallStep_FractionDigitsFromStep()
    {
        var r = NiceNumbers.Loose(0.0012, 0.0047, 5);
        Assert.Equal(0.001, r.Step, 15);
        Assert.Equal(3, r.FractionDigits);
    }
}

public class LinearScaleTests
{
    [Fact]
    public void Scale_TinyRangeAtHugeMagnitude_LabelsRelativeToOffset()
    {
        var s = LinearScale.Containing([1000000000000.1, 1000000000000.3, 1000000000000.5]);
        Assert.Equal(1e12, s.Offset);
        Assert.Equal("+1000000000000", s.OffsetNote);
        var labels = s.RelativeTicks.Select(s.Label).ToList();
        Assert.Equal(labels.Count, labels.Distinct().Count());
        Assert.Contains("0.5", labels);
        Assert.True(s.Min <= 1000000000000.1 && s.Max >= 1000000000000.5);
    }

    [Fact]
    public void Scale_ConstantData_PadsAroundValue()
    {
        var s = LinearScale.Containing([7, 7, 7]);
        Assert.True(s.Min < 7 && s.Max > 7);
        var z = LinearScale.Containing([0, 0]);
        Assert.True(z.Min < 0 && z.Max > 0);
    }

    [Fact]
    public void Scale_NegativeValues_UsesTypographicMinus()
    {
        var s = LinearScale.Containing([-2.5, 1]);
        var labels = s.RelativeTicks.Select(s.Label).ToList();
        Assert.Contains("\u22123", labels);
        Assert.DoesNotContain(labels, l => l.Contains('-', StringComparison.Ordinal));
    }

    [Fact]
    public void Scale_HugeOutlier_RangeIncludesEveryValue()
    {
        var s = LinearScale.Containing([1, 2, 3, 2, 1, 5000]);
        Assert.True(s.Min <= 1 && s.Max >= 5000);
    }

    [Fact]
    public void Scale_LargeMagnitude_ENotationLabels()
    {
        var s = LinearScale.Containing([0, 3.2e7]);
        Assert.Contains("3e7", s.RelativeTicks.Select(s.Label));
    }

    [Fact]
    public void Map_AxisEnds_MapToPixelEnds()
    {
        var s = LinearScale.Containing([0, 10]);
        s.SetPixels(300, 20);
        Assert.Equal(300, s.Map(s.Min), 9);
        Assert.Equal(20, s.Map(s.Max), 9);
        Assert.Equal(160, s.Map((s.Min + s.Max) / 2), 9);
    }
}
