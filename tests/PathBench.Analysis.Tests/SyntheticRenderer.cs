using PathBench.Analysis.Checks;
using PathBench.Imaging;

namespace PathBench.Analysis.Tests;

/// <summary>
/// A stand-in for an external renderer at the check's demo settings (80×60 pixels, 16 spp, as in
/// scenes/checks.md): each pixel value is the mean of 16 independent uniforms, grey, so the exact value
/// is 0.5 everywhere and one replicate's pixel has standard deviation σ = √(1/(12·16)) ≈ 0.0722 — the
/// closed form of the uniform-hemisphere plane in <see cref="StudyTheoryTests"/>.
/// </summary>
internal static class SyntheticRenderer
{
    public const int Width = 80, Height = 60, Spp = 16;

    /// <summary>One replicate image, RGB interleaved.</summary>
    public static float[] Image(Random random)
    {
        var image = new float[3 * Width * Height];
        for (int p = 0; p < Width * Height; p++)
        {
            double sum = 0;
            for (int s = 0; s < Spp; s++)
            {
                sum += random.NextDouble();
            }

            image[3 * p] = image[(3 * p) + 1] = image[(3 * p) + 2] = (float)(sum / Spp);
        }

        return image;
    }

    /// <summary>The exact image, 0.5 everywhere, with no variance.</summary>
    public static ReferenceImage Exact(int width, int height)
    {
        var value = new double[3 * width * height];
        Array.Fill(value, 0.5);
        return new ReferenceImage(width, height, value, new double[value.Length], null);
    }

    /// <summary>Writes the exact image as a file.</summary>
    public static void WriteReference(string path)
    {
        var data = new float[3 * Width * Height];
        Array.Fill(data, 0.5f);
        ImageFile.Write(path, new RgbImage(Width, Height, data));
    }

    /// <summary>A case's measurements from its replicate images per spp, as the check makes them from files.</summary>
    public static CaseMeasurements Measure(ReferenceImage reference, IReadOnlyDictionary<int, IReadOnlyList<float[]>> images)
    {
        var errors = new Dictionary<int, IReadOnlyList<ReplicateError>>();
        var moments = new Dictionary<int, PixelMoments>();
        foreach ((int spp, IReadOnlyList<float[]> list) in images)
        {
            errors[spp] = [.. list.Select(i => ReplicateError.Measure(i, reference))];
            var m = new PixelMoments(reference.Value.Length);
            foreach (float[] i in list)
            {
                m.Add(i);
            }

            moments[spp] = m;
        }

        return new CaseMeasurements(reference, errors, moments, images[images.Keys.Max()], 0);
    }
}
