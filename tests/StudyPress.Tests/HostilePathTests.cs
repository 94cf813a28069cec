using StudyPress.Data;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Data paths stay inside the study's folder tree: no absolute path, no '..' that climbs out, no
/// symbolic link (folder or file) that points out, unless --allow-outside-data is given.
/// </summary>
[Collection("cli")]
public sealed class HostilePathTests
{
    private const string Csv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,b,3.5\n4,b,4.0\n5,c,5.5\n6,c,6.0\n";

    private static string Study(string path) =>
        $"---\ntitle: T\ndata: {path}\nresponse: y\nfactors:\n  dose:\n---\n\n```anova main\n```\n";

    [Fact]
    public void Build_DataThroughSymlinkedFolderPointingOutside_IsRefused()
    {
        using var outside = new StudyRun().File("data.csv", Csv);
        using var run = new StudyRun().Study(Study("linked/data.csv"));
        Directory.CreateSymbolicLink(Path.Combine(run.Folder, "linked"), outside.Folder);
        DiagnosticsTests.AssertRejected(run, "symlinked folder", "study.md:3:7: error: data path 'linked/data.csv' leads outside the study's folder");
    }

    [Fact]
    public void Build_DataFileSymlinkPointingOutside_IsRefused()
    {
        using var outside = new StudyRun().File("data.csv", Csv);
        using var run = new StudyRun().Study(Study("data.csv"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "data.csv"), Path.Combine(outside.Folder, "data.csv"));
        DiagnosticsTests.AssertRejected(run, "symlinked file", "study.md:3:7: error: data path 'data.csv' leads outside the study's folder");
    }

    [Fact]
    public void Build_DataFileSymlinkWithRelativeTargetClimbingOut_IsRefused()
    {
        using var outside = new StudyRun().File("data.csv", Csv);
        using var run = new StudyRun().Study(Study("sub/data.csv"));
        Directory.CreateDirectory(Path.Combine(run.Folder, "sub"));
        File.CreateSymbolicLink(Path.Combine(run.Folder, "sub", "data.csv"), Path.Combine("..", "..", Path.GetFileName(outside.Folder), "data.csv"));
        DiagnosticsTests.AssertRejected(run, "relative symlink", "study.md:3:7: error: data path 'sub/data.csv' leads outside the study's folder");
    }

    [Fact]
    public void Build_SymlinkInsideTheTree_IsAllowed()
    {
        using var run = new StudyRun().Study(Study("alias.csv")).File("real/data.csv", Csv);
        File.CreateSymbolicLink(Path.Combine(run.Folder, "alias.csv"), Path.Combine("real", "data.csv"));
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
    }

    [Fact]
    public void Build_DotDotThatStaysInside_IsAllowed()
    {
        using var run = new StudyRun().Study(Study("sub/../data.csv")).File("data.csv", Csv);
        Directory.CreateDirectory(Path.Combine(run.Folder, "sub"));
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
    }

    [Fact]
    public void Build_DataPathIsAFolder_SaysSo()
    {
        using var run = new StudyRun().Study(Study("sub"));
        Directory.CreateDirectory(Path.Combine(run.Folder, "sub"));
        DiagnosticsTests.AssertRejected(run, "folder", "study.md:3:7: error: data path 'sub' is a folder; name a CSV or TSV file");
    }

    [Fact]
    public void Build_DataFileOverTheSizeLimit_StopsWithAClearMessage()
    {
        using var run = new StudyRun().Study(Study("big.csv"));
        // A sparse file: the size check comes before any byte is read, so nothing is allocated.
        using (var fs = new FileStream(Path.Combine(run.Folder, "big.csv"), FileMode.Create))
        {
            fs.SetLength(DataLimits.MaxDataFileBytes + 1);
        }

        DiagnosticsTests.AssertRejected(run, "big data", $"study.md:3:7: error: data file 'big.csv' is {DataLimits.MaxDataFileBytes + 1} bytes; this version reads at most {DataLimits.MaxDataFileBytes} bytes (256 MiB)");
    }

    [Fact]
    public void Build_StudyFileOverTheSizeLimit_StopsWithAClearMessage()
    {
        using var run = new StudyRun();
        using (var fs = new FileStream(run.StudyPath, FileMode.Create))
        {
            fs.SetLength(DataLimits.MaxStudyFileBytes + 1);
        }

        DiagnosticsTests.AssertRejected(run, "big study", $"study.md:1:1: error: the study file 'study.md' is {DataLimits.MaxStudyFileBytes + 1} bytes; this version reads at most {DataLimits.MaxStudyFileBytes} bytes (16 MiB)");
    }

    public static TheoryData<string> OutsideKinds() => ["dotdot", "absolute", "symlinked folder", "symlinked file"];

    [Theory]
    [MemberData(nameof(OutsideKinds))]
    public void Build_OutsidePathWithAllowOutsideData_Builds(string how)
    {
        using var outside = new StudyRun().File("data.csv", Csv);
        using var run = new StudyRun();
        var path = how switch
        {
            "dotdot" => Path.Combine("..", Path.GetFileName(outside.Folder), "data.csv"),
            "absolute" => Path.Combine(outside.Folder, "data.csv"),
            "symlinked folder" => "linked/data.csv",
            _ => "data.csv",
        };
        if (how == "symlinked folder")
        {
            Directory.CreateSymbolicLink(Path.Combine(run.Folder, "linked"), outside.Folder);
        }
        else if (how == "symlinked file")
        {
            File.CreateSymbolicLink(Path.Combine(run.Folder, "data.csv"), Path.Combine(outside.Folder, "data.csv"));
        }

        run.Study(Study(path));
        Assert.Equal(2, run.Cli("build", "study.md").Exit);
        var (exit, _, err) = run.Cli("build", "study.md", "--allow-outside-data");
        Assert.True(exit == 0, $"{how}: {err}");
        Assert.True(File.Exists(run.ReportPath));
    }
}
