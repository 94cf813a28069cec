using System.Runtime;
using StudyPress.Cli;

namespace StudyPress.Tests;

/// <summary>
/// A single study is built without garbage collection for its first
/// <see cref="BuildCommand.NoCollectionBytes"/> of allocation (<see cref="BuildCommand.BuildAlone"/>):
/// the region must end however the build ends, and a build that allocates more must still finish.
/// In the "cli" collection: the region is the whole process's, as in-process CLI runs' are.
/// </summary>
[Collection("cli")]
public class SingleStudyBuildTests
{
    [Fact]
    public void BuildAlone_RunsTheBuildAndEndsTheRegion()
    {
        var ran = false;
        BuildCommand.BuildAlone(() => ran = GCSettings.LatencyMode == GCLatencyMode.NoGCRegion);
        Assert.True(ran); // the build ran inside the region
        Assert.NotEqual(GCLatencyMode.NoGCRegion, GCSettings.LatencyMode);
    }

    [Fact]
    public void BuildAlone_BuildThrows_RegionEndedAndTheExceptionPassedOn()
    {
        var e = Assert.Throws<InvalidOperationException>(() => BuildCommand.BuildAlone(() => throw new InvalidOperationException("from the build")));
        Assert.Equal("from the build", e.Message);
        Assert.NotEqual(GCLatencyMode.NoGCRegion, GCSettings.LatencyMode);
    }

    [Fact]
    public void BuildAlone_AllocatingPastTheLimit_Finishes()
    {
        long kept = 0;
        BuildCommand.BuildAlone(() =>
        {
            // Three times the region's size, in blocks that die young: the collector must run and the build go on.
            for (var i = 0; i < 3 * (BuildCommand.NoCollectionBytes >> 20); i++)
            {
                var block = new byte[1 << 20];
                block[^1] = 1;
                kept += block[^1];
            }
        });
        Assert.Equal(3 * (BuildCommand.NoCollectionBytes >> 20), kept);
        Assert.NotEqual(GCLatencyMode.NoGCRegion, GCSettings.LatencyMode);
    }
}
