namespace PathBench.Imaging;

/// <summary>
/// The two-dimensional Haar wavelet of PIZ chunks, as the OpenEXR library defines it (ImfWav):
/// applied in place to an nx × ny array of 16-bit words, level by level on 2×2 groups of samples
/// p apart (p = 1, 2, 4, … while 2p ≤ min(nx, ny)), with a one-dimensional step for a last odd
/// column or line at each level. Each pair (a, b) becomes (l, h). When every value is below 2^14
/// the 14-bit variant is used, l = ⌊(a + b) / 2⌋ and h = a − b in signed 16-bit arithmetic; otherwise
/// the 16-bit variant, which works modulo 2^16 with an offset of 2^15. The inverse undoes the levels
/// from the coarsest down.
/// </summary>
internal static class ExrWavelet
{
    private const int Offset16 = 1 << 15;
    private const int Mask16 = (1 << 16) - 1;

    /// <summary>Transforms an nx × ny array of words in place.</summary>
    /// <param name="data">The buffer holding the array.</param>
    /// <param name="start">Index of the array's first word.</param>
    /// <param name="nx">Columns.</param>
    /// <param name="xStride">Words from one column to the next.</param>
    /// <param name="ny">Lines.</param>
    /// <param name="yStride">Words from one line to the next.</param>
    /// <param name="maxValue">The largest value present; below 2^14 selects the 14-bit variant.</param>
    public static void Encode(Span<ushort> data, int start, int nx, int xStride, int ny, int yStride, int maxValue)
    {
        CheckExtent(data, start, nx, xStride, ny, yStride);
        bool w14 = maxValue < 1 << 14;
        int n = Math.Min(nx, ny);
        for (int p = 1, p2 = 2; p2 <= n; p = p2, p2 <<= 1)
        {
            Level(data, start, nx, xStride, ny, yStride, p, p2, w14, inverse: false);
        }
    }

    /// <summary>Inverts <see cref="Encode"/> in place (same arguments).</summary>
    public static void Decode(Span<ushort> data, int start, int nx, int xStride, int ny, int yStride, int maxValue)
    {
        CheckExtent(data, start, nx, xStride, ny, yStride);
        bool w14 = maxValue < 1 << 14;
        int n = Math.Min(nx, ny);
        int top = 1;
        while (top * 2 <= n)
        {
            top *= 2;
        }

        // top is the largest power of two ≤ n, the pair distance of the coarsest level's neighbours.
        for (int p2 = top, p = top / 2; p >= 1; p2 = p, p /= 2)
        {
            Level(data, start, nx, xStride, ny, yStride, p, p2, w14, inverse: true);
        }
    }

    private static void CheckExtent(Span<ushort> data, int start, int nx, int xStride, int ny, int yStride)
    {
        long last = start + ((long)(nx - 1) * xStride) + ((long)(ny - 1) * yStride);
        if (nx <= 0 || ny <= 0 || start < 0 || last >= data.Length)
        {
            throw new ArgumentOutOfRangeException(nameof(data), "the wavelet array does not fit the buffer");
        }
    }

    /// <summary>One level: 2×2 groups at distance p in steps of p2 = 2p, then the odd last column and line.</summary>
    private static void Level(Span<ushort> d, int start, int nx, int ox, int ny, int oy, int p, int p2, bool w14, bool inverse)
    {
        int ox1 = ox * p;
        int oy1 = oy * p;
        int ox2 = ox * p2;
        int oy2 = oy * p2;
        int yEnd = start + (oy * (ny - p2));
        int py = start;
        for (; py <= yEnd; py += oy2)
        {
            int xEnd = py + (ox * (nx - p2));
            int px = py;
            for (; px <= xEnd; px += ox2)
            {
                int p01 = px + ox1;
                int p10 = px + oy1;
                int p11 = p10 + ox1;
                if (inverse)
                {
                    // Columns first, then lines: the reverse of the encoder's order.
                    Pair(d, px, p10, w14, inverse);
                    Pair(d, p01, p11, w14, inverse);
                    Pair(d, px, p01, w14, inverse);
                    Pair(d, p10, p11, w14, inverse);
                }
                else
                {
                    Pair(d, px, p01, w14, inverse);
                    Pair(d, p10, p11, w14, inverse);
                    Pair(d, px, p10, w14, inverse);
                    Pair(d, p01, p11, w14, inverse);
                }
            }

            if ((nx & p) != 0)
            {
                Pair(d, px, px + oy1, w14, inverse);
            }
        }

        if ((ny & p) != 0)
        {
            int xEnd = py + (ox * (nx - p2));
            for (int px = py; px <= xEnd; px += ox2)
            {
                Pair(d, px, px + ox1, w14, inverse);
            }
        }
    }

    private static void Pair(Span<ushort> d, int i, int j, bool w14, bool inverse)
    {
        int a = d[i];
        int b = d[j];
        if (w14)
        {
            if (inverse)
            {
                // l and h are signed 16-bit; a and b are kept to 16 bits, as OpenEXR's decoder does.
                int l = (short)a;
                int h = (short)b;
                int x = l + (h & 1) + (h >> 1);
                d[i] = (ushort)(short)x;
                d[j] = (ushort)(short)(x - h);
            }
            else
            {
                int sa = (short)a;
                int sb = (short)b;
                d[i] = (ushort)(short)((sa + sb) >> 1);
                d[j] = (ushort)(short)(sa - sb);
            }
        }
        else if (inverse)
        {
            int m = a;
            int h = b;
            int y = (m - (h >> 1)) & Mask16;
            d[j] = (ushort)y;
            d[i] = (ushort)((h + y - Offset16) & Mask16);
        }
        else
        {
            int ao = (a + Offset16) & Mask16;
            int m = (ao + b) >> 1;
            int h = ao - b;
            if (h < 0)
            {
                m = (m + Offset16) & Mask16;
            }

            d[i] = (ushort)m;
            d[j] = (ushort)(h & Mask16);
        }
    }
}
