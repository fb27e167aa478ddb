namespace PathBench.Imaging;

/// <summary>
/// The lossy part of DWAA/DWAB chunks as the OpenEXR library (3.1.5, ImfDwaCompressor) decodes it:
/// 8×8 blocks of quantized DCT coefficients stored as HALF bits, the DC coefficients of all blocks
/// in their own list and the 63 AC coefficients of each block in zig-zag order, run-length coded;
/// the inverse DCT in single precision; for an R,G,B set the inverse of the BT.709 Y'CbCr transform;
/// rounding to HALF; then the to-linear table (<see cref="ExrDwaToLinear"/>).
/// <para>
/// Floating point here follows, operation for operation, the variant the library runs on a CPU with
/// AVX and F16C (its inline-assembly inverse DCT and F16C conversions), which is what the reference
/// machines and CI have (lscpu lists avx and f16c). Its scalar fallback (no AVX) groups the sums
/// differently — a·(x0 + x4) instead of a·x0 + a·x4, and left-to-right chains of four products
/// instead of pairs — so on such a CPU the library may round some pixels differently; this decoder
/// always reproduces the AVX variant. Every product and sum is its own rounded single-precision
/// operation: C# neither contracts a*b + c into a fused multiply-add nor keeps wider intermediates.
/// </para>
/// </summary>
internal static class ExrDwaDct
{
    // The library's constants: a = cos(π/4)/2, b..g = cos(kπ/16)/2 for k = 1, 3, 5, 7 and cos(π/8)/2, cos(3π/8)/2.
    private const float A = 3.535536e-01f;
    private const float B = 4.903927e-01f;
    private const float C = 4.619398e-01f;
    private const float D = 4.157349e-01f;
    private const float E = 2.777855e-01f;
    private const float F = 1.913422e-01f;
    private const float G = 9.754573e-02f;

    /// <summary>Row-major position i of an 8×8 block holds zig-zag coefficient ZigZag[i] (JPEG's zig-zag order, ITU-T T.81; the library's table lists the same order).</summary>
    private static ReadOnlySpan<byte> ZigZag =>
    [
        0, 1, 5, 6, 14, 15, 27, 28,
        2, 4, 7, 13, 16, 26, 29, 42,
        3, 8, 12, 17, 25, 30, 41, 43,
        9, 11, 18, 24, 31, 40, 44, 53,
        10, 19, 23, 32, 39, 45, 52, 54,
        20, 22, 33, 38, 46, 51, 55, 60,
        21, 34, 37, 47, 50, 56, 59, 61,
        35, 36, 48, 49, 57, 58, 62, 63,
    ];

    /// <summary>
    /// Decodes one lossy set — a single channel, or three (R, G, B of one layer) coded together in
    /// Y'CbCr — of <paramref name="width"/>×<paramref name="height"/> samples into
    /// <paramref name="planes"/> (one per channel, line by line, HALF bits).
    /// </summary>
    /// <param name="ac">All AC values of the chunk.</param>
    /// <param name="acPosition">Where this set's AC values start; advances past them.</param>
    /// <param name="dc">This set's DC values: each channel's blocks, row by row, one channel after the other.</param>
    /// <param name="width">Samples per line.</param>
    /// <param name="height">Lines.</param>
    /// <param name="toLinear">The to-linear table, or empty to keep the nonlinear values (a single channel flagged pLinear).</param>
    /// <param name="planes">One plane of <paramref name="width"/> × <paramref name="height"/> per channel (1 or 3).</param>
    /// <exception cref="ExrCodecException">The AC values end before the set's last block.</exception>
    public static void DecodeSet(
        ReadOnlySpan<ushort> ac, ref int acPosition, ReadOnlySpan<ushort> dc, int width, int height, ReadOnlySpan<ushort> toLinear, ushort[][] planes)
    {
        int components = planes.Length;
        int blocksX = (width + 7) / 8;
        int blocksY = (height + 7) / 8;
        int blocks = blocksX * blocksY;
        Span<ushort> zig = stackalloc ushort[64];
        Span<float> data = stackalloc float[3 * 64];
        for (int by = 0; by < blocksY; by++)
        {
            for (int bx = 0; bx < blocksX; bx++)
            {
                for (int comp = 0; comp < components; comp++)
                {
                    Span<float> block = data.Slice(comp * 64, 64);
                    zig.Clear();
                    zig[0] = dc[(comp * blocks) + (by * blocksX) + bx];
                    int lastNonZero = UnRunAc(ac, ref acPosition, zig);
                    if (lastNonZero == 0)
                    {
                        // DC only: the library multiplies by a twice, in this order.
                        block.Fill(HalfToFloat(zig[0]) * A * A);
                        continue;
                    }

                    for (int i = 0; i < 64; i++)
                    {
                        block[i] = HalfToFloat(zig[ZigZag[i]]);
                    }

                    InverseDct(block, ZeroedRows(lastNonZero));
                }

                if (components == 3)
                {
                    InverseCsc709(data);
                }

                int rows = Math.Min(8, height - (by * 8));
                int cols = Math.Min(8, width - (bx * 8));
                for (int comp = 0; comp < components; comp++)
                {
                    ReadOnlySpan<float> block = data.Slice(comp * 64, 64);
                    ushort[] plane = planes[comp];
                    for (int r = 0; r < rows; r++)
                    {
                        int o = ((by * 8) + r) * width + (bx * 8);
                        for (int c = 0; c < cols; c++)
                        {
                            ushort h = FloatToHalf(block[(r * 8) + c]);
                            plane[o + c] = toLinear.IsEmpty ? h : toLinear[h];
                        }
                    }
                }
            }
        }
    }

    /// <summary>
    /// Expands one block's run-length-coded AC values into <paramref name="zig"/> (zeroed, DC at 0):
    /// 0xff00 ends the block, 0xffnn skips nn zeros, any other value is the next coefficient.
    /// Returns the zig-zag index of the last coefficient written (0: the block has only its DC).
    /// </summary>
    private static int UnRunAc(ReadOnlySpan<ushort> ac, ref int position, Span<ushort> zig)
    {
        int lastNonZero = 0;
        int k = 1;
        while (k < 64)
        {
            if (position >= ac.Length)
            {
                throw new ExrCodecException(FormattableString.Invariant($"DWA AC data end after {ac.Length} values, inside a block"));
            }

            ushort v = ac[position++];
            if (v == 0xff00)
            {
                k = 64;
            }
            else if (v >> 8 == 0xff)
            {
                k += v & 0xff;
            }
            else
            {
                lastNonZero = k;
                zig[k++] = v;
            }
        }

        return lastNonZero;
    }

    /// <summary>
    /// How many trailing rows of the (row-major) coefficient block are certainly zero, judged as the
    /// library judges it from the last zig-zag index written: the first zig-zag index of rows 1..7 is
    /// 2, 3, 9, 10, 20, 21, 35.
    /// </summary>
    private static int ZeroedRows(int lastNonZero) => lastNonZero switch
    {
        < 2 => 7,
        < 3 => 6,
        < 9 => 5,
        < 10 => 4,
        < 20 => 3,
        < 21 => 2,
        < 35 => 1,
        _ => 0,
    };

    /// <summary>
    /// The 8×8 inverse DCT in place, rows then columns, in the operation order of the library's AVX
    /// code. With <paramref name="zeroedRows"/> trailing rows known to be zero the library leaves out
    /// every column-pass term of those rows (not merely adding zeros, which can turn −0 into +0), so
    /// each count is its own variant; with 7 the column pass is a plain multiplication by a.
    /// </summary>
    private static void InverseDct(Span<float> block, int zeroedRows)
    {
        if (zeroedRows == 7)
        {
            Span<float> row = block[..8];
            InverseDctRow(row);
            for (int c = 0; c < 8; c++)
            {
                row[c] *= A;
            }

            for (int r = 1; r < 8; r++)
            {
                row.CopyTo(block.Slice(r * 8, 8));
            }

            return;
        }

        // The row pass of a zero row is never read below, so every row can go through it.
        for (int r = 0; r < 8 - zeroedRows; r++)
        {
            InverseDctRow(block.Slice(r * 8, 8));
        }

        bool has2 = zeroedRows <= 5, has3 = zeroedRows <= 4, has4 = zeroedRows <= 3;
        bool has5 = zeroedRows <= 2, has6 = zeroedRows <= 1, has7 = zeroedRows == 0;
        for (int c = 0; c < 8; c++)
        {
            float r0 = block[c], r1 = block[8 + c];
            float r2 = has2 ? block[16 + c] : 0f, r3 = has3 ? block[24 + c] : 0f;
            float r4 = has4 ? block[32 + c] : 0f, r5 = has5 ? block[40 + c] : 0f;
            float r6 = has6 ? block[48 + c] : 0f, r7 = has7 ? block[56 + c] : 0f;

            // Odd outputs: b r1 + d r3 + e r5 + g r7 and its three companions, grouped as the AVX code groups them.
            float o0 = r1 * B;
            if (has3)
            {
                o0 += r3 * D;
            }

            if (has5)
            {
                float t = r5 * E;
                if (has7)
                {
                    t += r7 * G;
                }

                o0 += t;
            }

            float o1 = r1 * D;
            if (has3)
            {
                float t = r3 * G;
                if (has5)
                {
                    t = (r5 * B) + t;
                }

                o1 -= t;
            }

            if (has7)
            {
                o1 -= r7 * E;
            }

            float o2 = r1 * E;
            if (has3)
            {
                o2 -= r3 * B;
            }

            if (has5)
            {
                o2 += r5 * G;
            }

            if (has7)
            {
                o2 += r7 * D;
            }

            float o3 = r1 * G;
            if (has5)
            {
                o3 = (r5 * D) + o3;
            }

            if (has3)
            {
                float t = r3 * E;
                if (has7)
                {
                    t = (r7 * B) + t;
                }

                o3 -= t;
            }

            // Even outputs: a r0 ± a r4, then ± (c r2 + f r6) and ± (f r2 − c r6).
            float sum = r0 * A;
            float difference = sum;
            if (has4)
            {
                float t = r4 * A;
                sum += t;
                difference -= t;
            }

            float e0 = sum, e3 = sum, e1 = difference, e2 = difference;
            if (has2)
            {
                float p = r2 * C;
                if (has6)
                {
                    p += r6 * F;
                }

                e0 = sum + p;
                e3 = sum - p;
                float q = r2 * F;
                if (has6)
                {
                    q -= r6 * C;
                }

                e1 = difference + q;
                e2 = difference - q;
            }

            block[c] = e0 + o0;
            block[8 + c] = e1 + o1;
            block[16 + c] = e2 + o2;
            block[24 + c] = e3 + o3;
            block[32 + c] = e3 - o3;
            block[40 + c] = e2 - o2;
            block[48 + c] = e1 - o1;
            block[56 + c] = e0 - o0;
        }
    }

    /// <summary>
    /// One row of the row pass: even part (x0, x2, x4, x6) times the matrix [a c a f; a f −a −c;
    /// a −f −a c; a −c a −f] and odd part (x1, x3, x5, x7) times [b d e g; d −g −b −e; e −b g d;
    /// g −e d −b], each output the sum of two pair sums, as the AVX code forms it.
    /// </summary>
    private static void InverseDctRow(Span<float> x)
    {
        float x0 = x[0], x1 = x[1], x2 = x[2], x3 = x[3], x4 = x[4], x5 = x[5], x6 = x[6], x7 = x[7];
        float e0 = ((x0 * A) + (x2 * C)) + ((x4 * A) + (x6 * F));
        float e1 = ((x0 * A) + (x2 * F)) + ((x4 * -A) + (x6 * -C));
        float e2 = ((x0 * A) + (x2 * -F)) + ((x4 * -A) + (x6 * C));
        float e3 = ((x0 * A) + (x2 * -C)) + ((x4 * A) + (x6 * -F));
        float o0 = ((x1 * B) + (x3 * D)) + ((x5 * E) + (x7 * G));
        float o1 = ((x1 * D) + (x3 * -G)) + ((x5 * -B) + (x7 * -E));
        float o2 = ((x1 * E) + (x3 * -B)) + ((x5 * G) + (x7 * D));
        float o3 = ((x1 * G) + (x3 * -E)) + ((x5 * D) + (x7 * -B));
        x[0] = e0 + o0;
        x[1] = e1 + o1;
        x[2] = e2 + o2;
        x[3] = e3 + o3;
        x[4] = e3 - o3;
        x[5] = e2 - o2;
        x[6] = e1 - o1;
        x[7] = e0 - o0;
    }

    /// <summary>
    /// Y'CbCr → R'G'B' with the library's constants (derived from the ITU-R BT.709 luma weights, Cb and
    /// Cr unscaled and centred on 0): R' = Y' + 1.5747 Cr, G' = (Y' − 0.1873 Cb) − 0.4682 Cr,
    /// B' = Y' + 1.8556 Cb, on the three 64-value blocks of <paramref name="data"/>.
    /// </summary>
    private static void InverseCsc709(Span<float> data)
    {
        for (int i = 0; i < 64; i++)
        {
            float y = data[i], cb = data[64 + i], cr = data[128 + i];
            data[i] = y + (cr * 1.5747f);
            data[64 + i] = ((cb * -0.1873f) + y) + (cr * -0.4682f);
            data[128 + i] = (cb * 1.8556f) + y;
        }
    }

    /// <summary>HALF bits → float (exact).</summary>
    internal static float HalfToFloat(ushort bits) => (float)BitConverter.UInt16BitsToHalf(bits);

    /// <summary>
    /// float → HALF bits, rounded to nearest, ties to even (IEEE 754, as F16C's vcvtps2ph with
    /// rounding control 0); a NaN keeps its sign and top ten significand bits and becomes quiet, as
    /// F16C makes it.
    /// </summary>
    private static ushort FloatToHalf(float value)
    {
        if (float.IsNaN(value))
        {
            uint bits = BitConverter.SingleToUInt32Bits(value);
            return (ushort)(((bits >> 16) & 0x8000) | 0x7e00 | ((bits >> 13) & 0x3ff));
        }

        return BitConverter.HalfToUInt16Bits((Half)value);
    }
}
