using StudyPress.Data;

namespace StudyPress.Tests;

/// <summary>
/// A data file read in parts at the same time (<see cref="DatasetLoader.ReadFile"/>) gives the
/// bytes <see cref="File.ReadAllBytes"/> gives (the reference is the library's read itself).
/// </summary>
public sealed class FileReadTests
{
    [Theory]
    [InlineData(0)]
    [InlineData(1_000)]
    [InlineData((int)DatasetLoader.PartReadBytes - 1)]
    [InlineData((int)(2 * DatasetLoader.PartReadBytes) + 12_345)]
    [InlineData((int)(5 * DatasetLoader.PartReadBytes) + 7)]
    public void ReadFile_SameBytesAsReadAllBytes(int length)
    {
        var path = Path.Combine(Path.GetTempPath(), "studypress-read-" + Guid.NewGuid().ToString("N") + ".csv");
        try
        {
            var bytes = new byte[length];
            new Random(length).NextBytes(bytes);
            File.WriteAllBytes(path, bytes);
            Assert.Equal(File.ReadAllBytes(path), DatasetLoader.ReadFile(path));
        }
        finally
        {
            File.Delete(path);
        }
    }

    [Fact]
    public void ReadFile_MissingFile_SameExceptionAsReadAllBytes()
    {
        var path = Path.Combine(Path.GetTempPath(), "studypress-read-" + Guid.NewGuid().ToString("N") + ".csv");
        Assert.Equal(
            Assert.ThrowsAny<IOException>(() => File.ReadAllBytes(path)).GetType(),
            Assert.ThrowsAny<IOException>(() => DatasetLoader.ReadFile(path)).GetType());
    }
}
