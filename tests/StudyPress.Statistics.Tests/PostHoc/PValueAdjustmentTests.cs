using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.PostHoc;

public class PValueAdjustmentTests
{
    // Hand computation from the definitions (Holm 1979): p = (0.01, 0.04, 0.03, 0.005), m = 4.
    // Sorted: 0.005 x 4 = 0.02; 0.01 x 3 = 0.03; 0.03 x 2 = 0.06; 0.04 x 1 = 0.04 -> running max 0.06.
    [Fact]
    public void Holm_HandExample_StepDownWithRunningMaximum()
    {
        var adj = PValueAdjustment.Holm([0.01, 0.04, 0.03, 0.005]);
        double[] expected = [0.03, 0.06, 0.06, 0.02];
        for (var i = 0; i < 4; i++)
        {
            Accuracy.AssertLre(adj[i], expected[i], 14, $"Holm p[{i}]");
        }
    }

    // Hand computation: Bonferroni multiplies by m = 4.
    [Fact]
    public void Bonferroni_HandExample_TimesM()
    {
        var adj = PValueAdjustment.Bonferroni([0.01, 0.04, 0.03, 0.005]);
        double[] expected = [0.04, 0.16, 0.12, 0.02];
        for (var i = 0; i < 4; i++)
        {
            Accuracy.AssertLre(adj[i], expected[i], 14, $"Bonferroni p[{i}]");
        }
    }

    // Hand computation: 0.6 x 3 and 0.5 x 2 exceed 1 and are capped; the running maximum keeps 1.
    [Fact]
    public void Holm_LargeValues_CappedAtOne()
    {
        var adj = PValueAdjustment.Holm([0.6, 0.5, 0.2]);
        Assert.Equal(1.0, adj[0]);
        Assert.Equal(1.0, adj[1]);
        Accuracy.AssertLre(adj[2], 0.6, 15, "3 x 0.2");
        var bonf = PValueAdjustment.Bonferroni([0.6, 0.5, 0.2]);
        Assert.Equal(1.0, bonf[0]);
        Assert.Equal(1.0, bonf[1]);
        Accuracy.AssertLre(bonf[2], 0.6, 15, "3 x 0.2");
    }

    // Hand computation: tied raw values get equal adjusted values (2 x 0.02 after 3 x 0.01).
    [Fact]
    public void Holm_TiedValues_EqualAdjusted()
    {
        var adj = PValueAdjustment.Holm([0.02, 0.01, 0.02]);
        Accuracy.AssertLre(adj[1], 0.03, 14, "smallest");
        Assert.Equal(adj[0], adj[2]);
        Accuracy.AssertLre(adj[0], 0.04, 14, "tied");
    }

    // Property of the definitions: Holm never exceeds Bonferroni and never falls below the raw value,
    // and the order of adjusted values follows the order of the raw ones.
    [Fact]
    public void Holm_ManyValues_BetweenRawAndBonferroniAndMonotone()
    {
        double[] p = [0.003, 0.2, 0.0001, 0.04, 0.04, 0.9, 0.011, 0.5];
        var holm = PValueAdjustment.Holm(p);
        var bonf = PValueAdjustment.Bonferroni(p);
        for (var i = 0; i < p.Length; i++)
        {
            Assert.InRange(holm[i], p[i], bonf[i]);
            for (var j = 0; j < p.Length; j++)
            {
                if (p[i] < p[j])
                {
                    Assert.True(holm[i] <= holm[j]);
                }
            }
        }
    }

    [Fact]
    public void Adjust_UndefinedEntry_AllUndefined()
    {
        var adj = PValueAdjustment.Adjust([Quantity.Of(0.01), Quantity.Undefined("no variance")], PValueAdjustmentMethod.Holm);
        Assert.All(adj, q => Assert.Equal("no variance", q.Reason));
    }

    [Fact]
    public void Adjust_ValueOutsideUnitInterval_Throws()
    {
        Assert.Throws<ArgumentException>(() => PValueAdjustment.Holm([0.2, 1.5]));
    }

    // Exact arithmetic: 1 - 0.95^3 = 0.142625.
    [Fact]
    public void FamilyWiseErrorRate_ThreeTests_Exact()
    {
        Accuracy.AssertLre(PValueAdjustment.FamilyWiseErrorRate(3, 0.05), 0.142625, 14, "1 - 0.95^3");
        Assert.Equal(0.0, PValueAdjustment.FamilyWiseErrorRate(0, 0.05));
        Accuracy.AssertLre(PValueAdjustment.FamilyWiseErrorRate(1, 0.05), 0.05, 15, "m = 1");
    }

    // Exact arithmetic: 1 - (1 - a)^2 = 2a - a² for a = 1e-10 (the direct formula loses ~6 digits here).
    [Fact]
    public void FamilyWiseErrorRate_TinyAlpha_KeepsRelativeAccuracy()
    {
        Accuracy.AssertLre(PValueAdjustment.FamilyWiseErrorRate(2, 1e-10), 2e-10 - 1e-20, 14, "2a - a^2");
    }
}
