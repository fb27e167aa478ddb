namespace PathBench.Imaging.Tests;

/// <summary>Invented test images from fixed seeds: synthetic data, not measurements.</summary>
internal static class SyntheticImages
{
    /// <summary>A smooth colour gradient with a bright disc, values in [0, scale].</summary>
    public static RgbImage Gradient(int w, int h, double scale = 1.0)
    {
        var image = new RgbImage(w, h);
        for (int y = 0; y < h; y++)
        {
            for (int x = 0; x < w; x++)
            {
                double u = (x + 0.5) / w, v = (y + 0.5) / h;
                double disc = ((u - 0.6) * (u - 0.6)) + ((v - 0.4) * (v - 0.4)) < 0.04 ? 0.5 : 0.0;
                image.At(x, y, 0) = (float)(scale * ((0.8 * u) + disc) / 1.3);
                image.At(x, y, 1) = (float)(scale * ((0.5 * v) + (0.3 * u * v) + disc) / 1.3);
                image.At(x, y, 2) = (float)(scale * (0.2 + (0.6 * (1 - u) * v)) / 1.3);
            }
        }

        return image;
    }

    /// <summary><paramref name="source"/> plus Gaussian noise of standard deviation <paramref name="sigma"/>.</summary>
    public static RgbImage Noisy(RgbImage source, double sigma, int seed)
    {
        var rng = new Random(seed);
        RgbImage result = source.Clone();
        for (int i = 0; i < result.Data.Length; i++)
        {
            // Box–Muller.
            double g = Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
            result.Data[i] += (float)(sigma * g);
        }

        return result;
    }

    /// <summary>Uniform random values in [lo, hi).</summary>
    public static RgbImage Uniform(int w, int h, double lo, double hi, int seed)
    {
        var rng = new Random(seed);
        var image = new RgbImage(w, h);
        for (int i = 0; i < image.Data.Length; i++)
        {
            image.Data[i] = (float)(lo + ((hi - lo) * rng.NextDouble()));
        }

        return image;
    }

    /// <summary>Every pixel the same colour.</summary>
    public static RgbImage Flat(int w, int h, float r, float g, float b)
    {
        var image = new RgbImage(w, h);
        for (int i = 0; i < image.PixelCount; i++)
        {
            image.Data[i * 3] = r;
            image.Data[(i * 3) + 1] = g;
            image.Data[(i * 3) + 2] = b;
        }

        return image;
    }

    /// <summary>A copy with a few bright outliers (a path tracer's fireflies).</summary>
    public static RgbImage WithFireflies(RgbImage source, int count, float value, int seed)
    {
        var rng = new Random(seed);
        RgbImage result = source.Clone();
        for (int i = 0; i < count; i++)
        {
            int x = rng.Next(result.Width), y = rng.Next(result.Height);
            for (int c = 0; c < 3; c++)
            {
                result.At(x, y, c) = value;
            }
        }

        return result;
    }

    /// <summary>Raw float32 little-endian interleaved RGB, the format tools/imaging scripts read.</summary>
    public static void WriteRaw(string path, RgbImage image)
    {
        var bytes = new byte[image.Data.Length * 4];
        Buffer.BlockCopy(image.Data, 0, bytes, 0, bytes.Length);
        if (!BitConverter.IsLittleEndian)
        {
            throw new PlatformNotSupportedException("raw dumps assume a little-endian machine");
        }

        File.WriteAllBytes(path, bytes);
    }
}
