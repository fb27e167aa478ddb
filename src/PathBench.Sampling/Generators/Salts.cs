namespace PathBench.Sampling.Generators;

/// <summary>
/// Distinct words mixed into the pixel key for each use of randomness, so that (say) the
/// jitter of a point and the shuffle of its stratum never draw from the same hash value.
/// The values are arbitrary; changing one changes every image made with it.
/// </summary>
/// <remarks>
/// Public so that a plug-in generator (<see cref="IGeneratorPlugin"/>) can draw exactly what a
/// built-in draws, e.g. <c>JitterHash.Uniform(JitterHash.PixelStream(pixel, dimension), index)</c>
/// (the jitter of the jittered, Latin hypercube and multi-jittered sets); a plug-in that needs
/// randomness of its own picks a new word, different from these.
/// </remarks>
public static class Salts
{
    /// <summary>The jitter of a point inside its stratum.</summary>
    public const ulong Jitter = 0x4A49545445520001UL;

    /// <summary>The shuffle that pairs strata across dimensions.</summary>
    public const ulong StratumShuffle = 0x5348554646450002UL;

    /// <summary>The Cranley–Patterson rotation (<see cref="PointRandomizations.CranleyPatterson"/>).</summary>
    public const ulong Rotation = 0x524F544154450003UL;

    /// <summary>The random digital shift (<see cref="PointRandomizations.DigitalShift"/>).</summary>
    public const ulong DigitalShift = 0x5348494654000004UL;

    /// <summary>The per-dimension seeds of Owen scrambling.</summary>
    public const ulong OwenDimension = 0x4F57454E44000005UL;

    /// <summary>The digit permutations of Halton.</summary>
    public const ulong DigitPermutation = 0x5045524D55000007UL;

    /// <summary>Independent uniform samples.</summary>
    public const ulong Independent = 0x52414E444F000008UL;

    /// <summary>The pmj family's pair selection.</summary>
    public const ulong PmjPair = 0x504D4A5041000009UL;

    /// <summary>The blue-noise sampler's Owen scramble shared by the whole image (set by the seed).</summary>
    public const ulong BlueNoiseCommon = 0x424E434F4D00000AUL;

    /// <summary>The blue-noise sampler's per-pixel seeds for the dimensions its tile does not cover.</summary>
    public const ulong BlueNoisePadding = 0x424E50414400000BUL;
}
