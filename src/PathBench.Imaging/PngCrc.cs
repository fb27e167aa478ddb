namespace PathBench.Imaging;

/// <summary>
/// The CRC-32 every PNG chunk ends with (PNG specification, 3rd edition, "CRC algorithm" and its
/// annex of sample code; the same CRC as ISO 3309 and ITU-T V.42, from memory): polynomial 0x04C11DB7 processed
/// least significant bit first (0xEDB88320 reflected), register preset to all ones, result
/// complemented, computed over the chunk type and data (not the length).
/// </summary>
internal static class PngCrc
{
    /// <summary>The register's value before any byte.</summary>
    public const uint Start = 0xFFFFFFFF;

    private static readonly uint[] Table = BuildTable();

    /// <summary>Feeds <paramref name="data"/> into a running register (start with <see cref="Start"/>).</summary>
    public static uint Update(uint register, ReadOnlySpan<byte> data)
    {
        uint c = register;
        foreach (byte b in data)
        {
            c = Table[(c ^ b) & 0xFF] ^ (c >> 8);
        }

        return c;
    }

    /// <summary>The CRC of a running register once every byte has been fed.</summary>
    public static uint Finish(uint register) => register ^ 0xFFFFFFFF;

    /// <summary>The CRC of one buffer.</summary>
    public static uint Compute(ReadOnlySpan<byte> data) => Finish(Update(Start, data));

    private static uint[] BuildTable()
    {
        var table = new uint[256];
        for (uint n = 0; n < 256; n++)
        {
            uint c = n;
            for (int k = 0; k < 8; k++)
            {
                c = (c & 1) != 0 ? 0xEDB88320 ^ (c >> 1) : c >> 1;
            }

            table[n] = c;
        }

        return table;
    }
}
