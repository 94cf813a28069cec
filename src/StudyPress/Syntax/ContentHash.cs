using System.Security.Cryptography;
using Org.BouncyCastle.Crypto.Digests;

namespace StudyPress.Syntax;

/// <summary>
/// SHA-256 (FIPS 180-4) of the study, its inputs, the report and the page assets. Small inputs are
/// hashed in managed code (BouncyCastle's <c>Sha256Digest</c>); inputs of <see cref="ManagedLimit"/> bytes or more go to
/// <see cref="SHA256"/> (OpenSSL on Linux), whose native code is faster on long inputs but whose
/// libraries take milliseconds to load and initialise: more than a whole small study's hashing
/// (docs/performance.md, "Start-up after Main (round 9)"). Both give the same digest;
/// ContentHashTests checks this one against the FIPS 180-4 examples and against <see cref="SHA256"/>.
/// </summary>
public static class ContentHash
{
    /// <summary>Inputs from this many bytes on are hashed by <see cref="SHA256"/>.</summary>
    public const int ManagedLimit = 1 << 20;

    /// <summary>The 32-byte digest of <paramref name="data"/>.</summary>
    public static byte[] Of(ReadOnlySpan<byte> data)
    {
        if (data.Length >= ManagedLimit)
        {
            return SHA256.HashData(data);
        }

        var digest = new byte[32];
        Managed(data, digest);
        return digest;
    }

    /// <summary>The digest as 64 lower-case hexadecimal digits.</summary>
    public static string Hex(ReadOnlySpan<byte> data) => Convert.ToHexStringLower(Of(data));

    /// <summary>The digest of the rest of <paramref name="stream"/>, as 64 lower-case hexadecimal digits.</summary>
    public static string Hex(Stream stream)
    {
        if (stream.CanSeek && stream.Length - stream.Position >= ManagedLimit)
        {
            return Convert.ToHexStringLower(SHA256.HashData(stream));
        }

        using var copy = new MemoryStream();
        stream.CopyTo(copy);
        return Hex(copy.GetBuffer().AsSpan(0, (int)copy.Length));
    }

    /// <summary>The managed computation, whatever the length (for tests; callers use <see cref="Of"/>).</summary>
    internal static void Managed(ReadOnlySpan<byte> data, Span<byte> digest)
    {
        var sha = new Sha256Digest();
        sha.BlockUpdate(data);
        sha.DoFinal(digest);
    }
}
