using PathBench.Sampling;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.BlueNoise;

/// <summary>
/// The share of an error image's energy at low frequencies, for the tool's own report: per-pixel
/// estimates of fresh random Heaviside steps (new seeds, not the optimised ones), seen through a
/// random common Owen scramble as the sampler's <c>owen</c> randomization shows them.
/// </summary>
public static class SpectrumCheck
{
    /// <summary>Mean over <paramref name="integrands"/> steps (pixel p's sample i is sequence point i XOR keys[p], or i when <paramref name="keys"/> is empty) of the periodogram energy with radial frequency below 1/8 cycle per pixel, as a share of all but the mean's.</summary>
    public static double LowBandShare(ReadOnlySpan<uint> words, ReadOnlySpan<uint> keys, int tile, int pair, int spp, int integrands, ulong seed)
    {
        SobolMatrices matrices = SobolMatrices.Default;
        int n = tile * tile;
        var error = new double[n];
        double low = 0, total = 0;
        for (int k = 0; k < integrands; k++)
        {
            ulong key = SampleHash.Combine(SampleHash.Mix64(seed), (ulong)k);
            (double sin, double cos) = PortableMath.SinCos(2 * Math.PI * SampleHash.ToUnit(SampleHash.Combine(key, 0)));
            double cx = SampleHash.ToUnit(SampleHash.Combine(key, 1)), cy = SampleHash.ToUnit(SampleHash.Combine(key, 2));
            uint scrambleX = SampleHash.Combine32(key, 3), scrambleY = SampleHash.Combine32(key, 4);
            double mean = 0;
            for (int p = 0; p < n; p++)
            {
                (uint sx, uint sy) = BlueNoiseSeedTable.ScrambleSeeds(words[p]);
                int count = 0;
                for (int i = 0; i < spp; i++)
                {
                    uint r = BitReversal.Reverse((uint)i ^ (keys.IsEmpty ? 0 : keys[p]));
                    double x = (BitReversal.Reverse(BlueNoiseSobolSampler.ScrambledReversed(matrices, r, 2 * pair, sx, scrambleX)) + 0.5) / 4294967296.0;
                    double y = (BitReversal.Reverse(BlueNoiseSobolSampler.ScrambledReversed(matrices, r, (2 * pair) + 1, sy, scrambleY)) + 0.5) / 4294967296.0;
                    count += ((x - cx) * cos) + ((y - cy) * sin) >= 0 ? 1 : 0;
                }

                error[p] = (double)count / spp;
                mean += error[p];
            }

            mean /= n;
            for (int p = 0; p < n; p++)
            {
                error[p] -= mean;
            }

            (double l, double t) = Bands(error, tile);
            low += l;
            total += t;
        }

        return low / total;
    }

    /// <summary>
    /// The words and index keys (block · 2^level) pixel by pixel that a ranking level gives one pair:
    /// <paramref name="key"/>(q) is the seed-tile position the pixel at q takes.
    /// </summary>
    public static (uint[] Words, uint[] Keys) Ranked(ReadOnlySpan<uint> pairWords, Func<int, int> key, int level)
    {
        ArgumentNullException.ThrowIfNull(key);
        var words = new uint[pairWords.Length];
        var keys = new uint[pairWords.Length];
        for (int q = 0; q < words.Length; q++)
        {
            words[q] = pairWords[key(q)];
            keys[q] = BlueNoiseRankingTable.Block(words[q]) << level;
        }

        return (words, keys);
    }

    /// <summary>Energy below 1/8 cycle per pixel and in all, of the image's DFT (a plain separable DFT).</summary>
    public static (double Low, double Total) Bands(ReadOnlySpan<double> image, int tile)
    {
        var re = new double[tile * tile];
        var im = new double[tile * tile];
        var cos = new double[tile];
        var sin = new double[tile];
        for (int i = 0; i < tile; i++)
        {
            cos[i] = Math.Cos(2 * Math.PI * i / tile);
            sin[i] = Math.Sin(2 * Math.PI * i / tile);
        }

        // Rows, then columns.
        var rowRe = new double[tile * tile];
        var rowIm = new double[tile * tile];
        for (int y = 0; y < tile; y++)
        {
            for (int u = 0; u < tile; u++)
            {
                double a = 0, b = 0;
                for (int x = 0; x < tile; x++)
                {
                    int w = (u * x) % tile;
                    a += image[(y * tile) + x] * cos[w];
                    b -= image[(y * tile) + x] * sin[w];
                }

                rowRe[(y * tile) + u] = a;
                rowIm[(y * tile) + u] = b;
            }
        }

        double low = 0, total = 0;
        for (int u = 0; u < tile; u++)
        {
            for (int v = 0; v < tile; v++)
            {
                double a = 0, b = 0;
                for (int y = 0; y < tile; y++)
                {
                    int w = (v * y) % tile;
                    double r = rowRe[(y * tile) + u], i = rowIm[(y * tile) + u];
                    a += (r * cos[w]) + (i * sin[w]);
                    b += (i * cos[w]) - (r * sin[w]);
                }

                double power = (a * a) + (b * b);
                double fx = (u <= tile / 2 ? u : u - tile) / (double)tile, fy = (v <= tile / 2 ? v : v - tile) / (double)tile;
                total += power;
                if ((fx * fx) + (fy * fy) < 1.0 / 64)
                {
                    low += power;
                }
            }
        }

        return (low, total);
    }
}
