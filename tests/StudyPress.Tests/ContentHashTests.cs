using System.Security.Cryptography;
using System.Text;
using StudyPress.Syntax;

namespace StudyPress.Tests;

/// <summary>
/// The managed SHA-256 that small inputs are hashed with (<see cref="ContentHash"/>): every recorded
/// hash of a report, manifest and build cache depends on it being SHA-256 exactly.
/// </summary>
public class ContentHashTests
{
    [Theory]
    // FIPS 180-4's examples (NIST, "SHA-256" example computations: one block, two blocks) and the empty message.
    [InlineData("abc", "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad")]
    [InlineData("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq", "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1")]
    [InlineData("", "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855")]
    public void PublishedExamples(string message, string digest)
    {
        Assert.Equal(digest, ContentHash.Hex(Encoding.ASCII.GetBytes(message)));
        var managed = new byte[32];
        ContentHash.Managed(Encoding.ASCII.GetBytes(message), managed);
        Assert.Equal(digest, Convert.ToHexStringLower(managed));
    }

    [Fact]
    public void EveryLengthAroundTheBlockSizes_SameAsTheSystemHash()
    {
        // Source: System.Security.Cryptography.SHA256 (OpenSSL on Linux), the hash used before.
        var rng = new Random(18);
        var data = new byte[70_000];
        rng.NextBytes(data);
        var lengths = Enumerable.Range(0, 400).Concat([1000, 4095, 4096, 4097, 65_535, 65_536, 69_999]);
        var managed = new byte[32];
        foreach (var n in lengths)
        {
            var slice = data.AsSpan(0, n);
            ContentHash.Managed(slice, managed);
            Assert.Equal(SHA256.HashData(slice), managed);
            Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(slice)), ContentHash.Hex(slice));
        }
    }

    [Fact]
    public void AtTheLimit_BothSidesSameAsTheSystemHash()
    {
        var data = new byte[ContentHash.ManagedLimit + 1];
        new Random(19).NextBytes(data);
        foreach (var n in new[] { ContentHash.ManagedLimit - 1, ContentHash.ManagedLimit, ContentHash.ManagedLimit + 1 })
        {
            var slice = data.AsSpan(0, n);
            var expected = Convert.ToHexStringLower(SHA256.HashData(slice));
            Assert.Equal(expected, ContentHash.Hex(slice));
            Assert.Equal(expected, ContentHash.Hex(new MemoryStream(slice.ToArray())));
            var managed = new byte[32];
            ContentHash.Managed(slice, managed);
            Assert.Equal(expected, Convert.ToHexStringLower(managed));
        }
    }
}
