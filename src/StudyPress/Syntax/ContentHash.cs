using System.Buffers.Binary;
using System.Numerics;
using System.Security.Cryptography;

namespace StudyPress.Syntax;

/// <summary>
/// SHA-256 (FIPS 180-4) of the study, its inputs, the report and the page assets. Small inputs are
/// hashed here, in managed code; inputs of <see cref="ManagedLimit"/> bytes or more go to
/// <see cref="SHA256"/> (OpenSSL on Linux), whose native code is faster on long inputs but whose
/// libraries take milliseconds to load and initialise: more than a whole small study's hashing
/// (docs/performance.md, "Start-up after Main (round 9)"). Both give the same digest;
/// ContentHashTests checks this one against the FIPS 180-4 examples and against <see cref="SHA256"/>.
/// </summary>
public static class ContentHash
{
    /// <summary>Inputs from this many bytes on are hashed by <see cref="SHA256"/>.</summary>
    public const int ManagedLimit = 1 << 20;

    private static readonly uint[] K =
    [
        0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1, 0x923f82a4, 0xab1c5ed5,
        0xd807aa98, 0x12835b01, 0x243185be, 0x550c7dc3, 0x72be5d74, 0x80deb1fe, 0x9bdc06a7, 0xc19bf174,
        0xe49b69c1, 0xefbe4786, 0x0fc19dc6, 0x240ca1cc, 0x2de92c6f, 0x4a7484aa, 0x5cb0a9dc, 0x76f988da,
        0x983e5152, 0xa831c66d, 0xb00327c8, 0xbf597fc7, 0xc6e00bf3, 0xd5a79147, 0x06ca6351, 0x14292967,
        0x27b70a85, 0x2e1b2138, 0x4d2c6dfc, 0x53380d13, 0x650a7354, 0x766a0abb, 0x81c2c92e, 0x92722c85,
        0xa2bfe8a1, 0xa81a664b, 0xc24b8b70, 0xc76c51a3, 0xd192e819, 0xd6990624, 0xf40e3585, 0x106aa070,
        0x19a4c116, 0x1e376c08, 0x2748774c, 0x34b0bcb5, 0x391c0cb3, 0x4ed8aa4a, 0x5b9cca4f, 0x682e6ff3,
        0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208, 0x90befffa, 0xa4506ceb, 0xbef9a3f7, 0xc67178f2,
    ];

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
        Span<uint> h = stackalloc uint[8];
        h[0] = 0x6a09e667;
        h[1] = 0xbb67ae85;
        h[2] = 0x3c6ef372;
        h[3] = 0xa54ff53a;
        h[4] = 0x510e527f;
        h[5] = 0x9b05688c;
        h[6] = 0x1f83d9ab;
        h[7] = 0x5be0cd19;
        Span<uint> w = stackalloc uint[64];

        var whole = data.Length - (data.Length % 64);
        for (var at = 0; at < whole; at += 64)
        {
            Block(data.Slice(at, 64), h, w);
        }

        // The padding: a 1 bit, zeros, then the length in bits as a 64-bit big-endian number.
        Span<byte> tail = stackalloc byte[128];
        tail.Clear();
        var rest = data[whole..];
        rest.CopyTo(tail);
        tail[rest.Length] = 0x80;
        var tailLength = rest.Length + 9 <= 64 ? 64 : 128;
        BinaryPrimitives.WriteUInt64BigEndian(tail.Slice(tailLength - 8, 8), (ulong)data.Length * 8);
        for (var at = 0; at < tailLength; at += 64)
        {
            Block(tail.Slice(at, 64), h, w);
        }

        for (var i = 0; i < 8; i++)
        {
            BinaryPrimitives.WriteUInt32BigEndian(digest.Slice(4 * i, 4), h[i]);
        }
    }

    private static void Block(ReadOnlySpan<byte> block, Span<uint> h, Span<uint> w)
    {
        for (var i = 0; i < 16; i++)
        {
            w[i] = BinaryPrimitives.ReadUInt32BigEndian(block.Slice(4 * i, 4));
        }

        for (var i = 16; i < 64; i++)
        {
            uint w15 = w[i - 15], w2 = w[i - 2];
            var s0 = BitOperations.RotateRight(w15, 7) ^ BitOperations.RotateRight(w15, 18) ^ (w15 >> 3);
            var s1 = BitOperations.RotateRight(w2, 17) ^ BitOperations.RotateRight(w2, 19) ^ (w2 >> 10);
            w[i] = w[i - 16] + s0 + w[i - 7] + s1;
        }

        uint a = h[0], b = h[1], c = h[2], d = h[3], e = h[4], f = h[5], g = h[6], hh = h[7];
        var k = K;
        for (var i = 0; i < 64; i++)
        {
            var s1 = BitOperations.RotateRight(e, 6) ^ BitOperations.RotateRight(e, 11) ^ BitOperations.RotateRight(e, 25);
            var ch = (e & f) ^ (~e & g);
            var t1 = hh + s1 + ch + k[i] + w[i];
            var s0 = BitOperations.RotateRight(a, 2) ^ BitOperations.RotateRight(a, 13) ^ BitOperations.RotateRight(a, 22);
            var maj = (a & b) ^ (a & c) ^ (b & c);
            var t2 = s0 + maj;
            hh = g;
            g = f;
            f = e;
            e = d + t1;
            d = c;
            c = b;
            b = a;
            a = t1 + t2;
        }

        h[0] += a;
        h[1] += b;
        h[2] += c;
        h[3] += d;
        h[4] += e;
        h[5] += f;
        h[6] += g;
        h[7] += hh;
    }
}
