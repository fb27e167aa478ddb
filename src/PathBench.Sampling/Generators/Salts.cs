namespace PathBench.Sampling.Generators;

/// <summary>
/// Distinct words mixed into the pixel key for each use of randomness, so that (say) the
/// jitter of a point and the shuffle of its stratum never draw from the same hash value.
/// The values are arbitrary; changing one changes every image made with it.
/// </summary>
internal static class Salts
{
    public const ulong Jitter = 0x4A49545445520001UL;
    public const ulong StratumShuffle = 0x5348554646450002UL;
    public const ulong Rotation = 0x524F544154450003UL;
    public const ulong DigitalShift = 0x5348494654000004UL;
    public const ulong OwenDimension = 0x4F57454E44000005UL;
    public const ulong DigitPermutation = 0x5045524D55000007UL;
    public const ulong Independent = 0x52414E444F000008UL;
    public const ulong PmjPair = 0x504D4A5041000009UL;
    public const ulong BlueNoiseCommon = 0x424E434F4D00000AUL;
    public const ulong BlueNoisePadding = 0x424E50414400000BUL;
}
