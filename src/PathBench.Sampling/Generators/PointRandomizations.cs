using System.Runtime.CompilerServices;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// The coordinate-wise randomizations the built-in generators apply, keyed exactly as they key them
/// (pixel key, dimension, the salt of <see cref="Salts"/>): a plug-in generator that calls these gives
/// the same offsets a built-in gives under the same seed, so its renders are randomized the same way.
/// </summary>
public static class PointRandomizations
{
    private const double Scale = 1.0 / 4294967296.0;

    /// <summary>
    /// The Cranley–Patterson (1976) rotation of <paramref name="x"/> in [0, 1): a toroidal shift by one
    /// uniform offset per pixel and dimension. Any fixed point becomes uniform on [0, 1), so an estimate
    /// with it is unbiased whatever the point set.
    /// </summary>
    public static double CranleyPatterson(double x, ulong pixel, int dimension) => Rotate(x, RotationOffset(pixel, dimension));

    /// <summary>The offset <see cref="CranleyPatterson"/> adds in dimension <paramref name="dimension"/> of the pixel with key <paramref name="pixel"/>: one per pixel and dimension, so a batch computes it once.</summary>
    public static double RotationOffset(ulong pixel, int dimension) => SampleHash.Uniform(pixel ^ Salts.Rotation, 0, dimension);

    /// <summary><paramref name="x"/> shifted by <paramref name="offset"/> (from <see cref="RotationOffset"/>) on the torus [0, 1).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static double Rotate(double x, double offset)
    {
        // s − 1 or s − 0 (exact, the same bits as s): a flag rather than a branch, which points would mispredict half the time.
        double s = x + offset;
        return s - (s >= 1.0 ? 1 : 0);
    }

    /// <summary>
    /// The random digital shift in base 2 of <paramref name="x"/> in [0, 1): its first 32 binary digits
    /// XORed with one random word per pixel and dimension, the result placed at the centre of its
    /// 2^-32 cell (as the built-in Sobol generator does), so a base-2 net stays a net.
    /// </summary>
    public static double DigitalShift(double x, ulong pixel, int dimension)
    {
        uint digits = (uint)Math.Min(Math.Floor(x * 4294967296.0), 4294967295.0);
        uint shift = SampleHash.Combine32(pixel ^ Salts.DigitalShift, (ulong)dimension);
        return ((digits ^ shift) + 0.5) * Scale;
    }

    /// <summary>
    /// <paramref name="x"/> randomized by <paramref name="randomize"/> (none, cranley-patterson or
    /// digital-shift); the nested scramblings need the generator's construction and are refused here.
    /// </summary>
    public static double Apply(Randomization randomize, double x, ulong pixel, int dimension) => randomize switch
    {
        Randomization.None => x,
        Randomization.CranleyPatterson => CranleyPatterson(x, pixel, dimension),
        Randomization.DigitalShift => DigitalShift(x, pixel, dimension),
        _ => throw new ArgumentOutOfRangeException(nameof(randomize), randomize,
            "only none, cranley-patterson and digital-shift apply to a coordinate on its own"),
    };
}
