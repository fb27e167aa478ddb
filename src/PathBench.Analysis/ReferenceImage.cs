using PathBench.Imaging;
using PathBench.Rendering;

namespace PathBench.Analysis;

/// <summary>
/// A ground truth with its own noise: per pixel and channel the reference value R and the variance
/// of that value as an estimate (the variance of the pixel's mean, Var(R) = s²/n from the film's
/// exact sums). A study subtracts Var(R) from each squared error, because for a test image X
/// independent of R, E[(X − R)²] = E[(X − μ)²] + Var(R).
/// </summary>
public sealed class ReferenceImage
{
    /// <summary>Creates a reference; <paramref name="varianceOfMean"/> all zero for an exact one.</summary>
    public ReferenceImage(int width, int height, double[] value, double[] varianceOfMean, int? spp)
    {
        ArgumentNullException.ThrowIfNull(value);
        ArgumentNullException.ThrowIfNull(varianceOfMean);
        if (width <= 0 || height <= 0 || value.Length != 3L * width * height || varianceOfMean.Length != value.Length)
        {
            throw new ArgumentException(FormattableString.Invariant($"a {width}×{height} reference needs {3L * width * height} values and as many variances"));
        }

        Width = width;
        Height = height;
        Value = value;
        VarianceOfMean = varianceOfMean;
        Spp = spp;
        double sum = 0;
        foreach (double v in varianceOfMean)
        {
            sum += v;
        }

        MeanVariance = sum / varianceOfMean.Length;
    }

    /// <summary>Bytes a reference holds per pixel: its value and variance, three doubles each.</summary>
    public const int BytesPerPixel = 2 * 3 * sizeof(double);

    /// <summary>Width in pixels.</summary>
    public int Width { get; }

    /// <summary>Height in pixels.</summary>
    public int Height { get; }

    /// <summary>Reference values, RGB interleaved, row 0 at the top.</summary>
    public double[] Value { get; }

    /// <summary>Variance of each reference value as an estimate, same layout; 0 where unknown or exact.</summary>
    public double[] VarianceOfMean { get; }

    /// <summary>Samples per pixel of the reference render, when known.</summary>
    public int? Spp { get; }

    /// <summary>Mean of <see cref="VarianceOfMean"/> over pixels and channels.</summary>
    public double MeanVariance { get; }

    /// <summary>Whether a variance is known (a rendered reference, or a file with its variance file beside it).</summary>
    public bool HasVariance => MeanVariance > 0;

    /// <summary>
    /// The reference of a finished film: its pixel means and the variance of each mean, each rounded
    /// to float as the files keep them, so a reference read back from its files is the same reference.
    /// </summary>
    public static ReferenceImage FromFilm(Film film, int spp)
    {
        ArgumentNullException.ThrowIfNull(film);
        int n = film.Width * film.Height;
        var value = new double[3 * n];
        var variance = new double[3 * n];
        for (int y = 0; y < film.Height; y++)
        {
            for (int x = 0; x < film.Width; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    int i = (3 * ((y * film.Width) + x)) + c;
                    value[i] = (float)film.Mean(x, y, c);
                    variance[i] = (float)film.VarianceOfMean(x, y, c);
                }
            }
        }

        return new ReferenceImage(film.Width, film.Height, value, variance, spp);
    }

    /// <summary>The variance file that belongs to an image file: <c>ref.exr</c> → <c>ref.variance.exr</c>.</summary>
    public static string VariancePath(string imagePath)
    {
        ArgumentNullException.ThrowIfNull(imagePath);
        return Path.ChangeExtension(imagePath, null) + ".variance.exr";
    }

    /// <summary>
    /// Writes the reference image (any format <see cref="ImageFile"/> writes; FLOAT EXR keeps every
    /// value) and its variance of the mean as a FLOAT RGB OpenEXR file at <see cref="VariancePath"/>.
    /// </summary>
    public void Write(string imagePath)
    {
        ImageFile.Write(imagePath, ToImage(Value), new ExrWriteOptions(ExrCompression.Zip, ExrPixelType.Float));
        ImageFile.Write(VariancePath(imagePath), ToImage(VarianceOfMean), new ExrWriteOptions(ExrCompression.Zip, ExrPixelType.Float));
    }

    /// <summary>
    /// Reads a reference image and, when it exists, its variance file (which must have the same
    /// size and hold no negative or non-finite value); without one, the variance is taken as 0 and
    /// the study says so.
    /// </summary>
    /// <param name="imagePath">The reference image.</param>
    /// <param name="spp">Its samples per pixel, when known.</param>
    /// <param name="extraBytesPerPixel">What the caller will spend per pixel besides the reference itself, checked against the budget with the header.</param>
    /// <param name="use">What the caller does with it, for the refusal ("and measuring case 'x'").</param>
    /// <exception cref="ImageFileException">A file cannot be read, is above the memory budget, or the variance file does not fit the image.</exception>
    public static ReferenceImage Read(string imagePath, int? spp = null, long extraBytesPerPixel = 0, string? use = null)
    {
        // The header's size is checked against the budget with what follows (the widened planes, the caller's own use) before the decode.
        var limits = new ImageLimits(After: (w, h) => (Int128)w * h * (BytesPerPixel + extraBytesPerPixel), Use: use);
        RgbImage image = ImageFile.Read(imagePath, limits).Image;
        double[] value = Widen(image.Data);
        string variancePath = VariancePath(imagePath);
        double[] variance;
        if (File.Exists(variancePath))
        {
            RgbImage v = ImageFile.Read(variancePath, limits).Image;
            if (v.Width != image.Width || v.Height != image.Height)
            {
                throw new ImageFileException(variancePath, FormattableString.Invariant($"the variance file is {v.Width}x{v.Height}, its image {imagePath} is {image.Width}x{image.Height}"));
            }

            variance = Widen(v.Data);
            for (int i = 0; i < variance.Length; i++)
            {
                if (!(variance[i] >= 0) || !double.IsFinite(variance[i]))
                {
                    throw new ImageFileException(variancePath, FormattableString.Invariant($"pixel {i / 3 % image.Width},{i / 3 / image.Width} channel {i % 3} holds {variance[i]}, not a variance (finite, >= 0)"));
                }
            }
        }
        else
        {
            variance = new double[value.Length];
        }

        return new ReferenceImage(image.Width, image.Height, value, variance, spp);
    }

    /// <summary>The reference values as a float image (the values the files hold, see <see cref="FromFilm"/>).</summary>
    public RgbImage ToValueImage() => ToImage(Value);

    private RgbImage ToImage(double[] data)
    {
        var f = new float[data.Length];
        for (int i = 0; i < f.Length; i++)
        {
            f[i] = (float)data[i];
        }

        return new RgbImage(Width, Height, f);
    }

    private static double[] Widen(float[] data)
    {
        var d = new double[data.Length];
        for (int i = 0; i < d.Length; i++)
        {
            d[i] = data[i];
        }

        return d;
    }
}
