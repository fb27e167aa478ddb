using PathBench.Sampling.Generators;

namespace PathBench.PluginExample;

/// <summary>The plug-in: one generator, <c>kronecker</c>.</summary>
public sealed class KroneckerPlugin : IGeneratorPlugin
{
    /// <inheritdoc/>
    public IEnumerable<GeneratorInfo> Generators =>
    [
        new GeneratorInfo(
            Name: "kronecker",
            Source: "2-D Kronecker sequence ({i*sqrt 2}, {i*sqrt 3}), equidistributed by Weyl 1916, Math. Ann. 77; " +
                "constants as in FIPS 180-4 (5.3.5): the first 64 bits of the fractional parts of sqrt 2 and sqrt 3",
            NeedsCount: false,
            MaxDimensions: KroneckerSampler.Dimensions,
            Randomizations: [Randomization.None, Randomization.CranleyPatterson],
            DefaultRandomization: Randomization.CranleyPatterson,
            WhyOthersRefused: "a Kronecker sequence is a rotation of the torus, not a digital net: only a toroidal shift maps it onto a copy of itself",
            Create: spec => new KroneckerSampler(spec)),
    ];
}

/// <summary>
/// Point i is ({i·α₁}, {i·α₂}) with α = (√2 − 1, √3 − 1): the additive recurrence x_{i+1} = {x_i + α}
/// started at the origin. Weyl (1916) showed the sequence is uniformly distributed mod 1 because 1, √2
/// and √3 are linearly independent over the rationals. Randomization: the Cranley–Patterson rotation,
/// drawn exactly as the built-in generators draw it (<see cref="PointRandomizations"/>).
/// </summary>
public sealed class KroneckerSampler(SamplerSpec spec) : PointSampler(spec)
{
    /// <summary>Dimensions defined; the renderer pads the rest of a path with independent values.</summary>
    public const int Dimensions = 2;

    // α in 64-bit fixed point: i·α mod 1 is then one wrapping integer multiply, exact and the same on
    // every machine (no floating-point rounding grows with i). FIPS 180-4, section 5.3.5, lists these
    // words as SHA-512's H0 and H1.
    private static readonly ulong[] Alpha = [0x6a09e667f3bcc908UL, 0xbb67ae8584caa73bUL];

    /// <inheritdoc/>
    public override int MaxDimensions => Dimensions;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        // The top 53 bits of the fraction: a double in [0, 1), never 1.
        double x = (index * Alpha[dimension] >> 11) * (1.0 / 9007199254740992.0);
        return Spec.Randomize == Randomization.CranleyPatterson ? PointRandomizations.CranleyPatterson(x, pixel, dimension) : x;
    }
}
