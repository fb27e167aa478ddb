using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics.X86;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Progressive (multi-)jittered sequences (Christensen, Kensler &amp; Kilpatrick 2018): a progressive
/// 2-D sequence, so usable at any count up to <see cref="MaxPoints"/> and independent of the planned count.
/// </summary>
/// <remarks>
/// <para>
/// <see cref="TableCount"/> sequences of each family are built once per process from fixed seeds
/// (<see cref="ProgressiveMultiJittered"/>), each on first use. Dimension pair (2k, 2k+1) of a pixel
/// reads sequence (k + h) mod <see cref="TableCount"/>, h a hash of the pixel: the pairs of one pixel
/// use different sequences (padding, as for the other 2-D generators), and which pair gets which
/// varies from pixel to pixel.
/// </para>
/// <para>
/// Randomizations, both per pixel and pair, both keeping every property of the sequence:
/// a random digital shift XORs each coordinate's binary digits with a random word. XOR with a fixed
/// word maps the dyadic intervals [a·2^-p, (a+1)·2^-p) of each length onto themselves one to one
/// (a ↦ a XOR the top p bits of the word), so it permutes the elementary intervals of every shape
/// 2^-p × 2^-q among themselves and the count in each is unchanged: (0,m,2)-nets stay nets, 1-D strata
/// stay strata, squares stay squares. Owen's nested scrambling (hash-based, <see cref="OwenScrambler"/>)
/// also maps each dyadic interval onto one of the same length (the flip of digit j depends on the
/// digits before it only), so the same argument holds. Either makes every point uniform
/// on the 2^-32 grid, hence the estimator unbiased. A Cranley–Patterson shift does not map dyadic
/// intervals onto dyadic intervals, so it is refused.
/// </para>
/// <para>Coordinates are placed at the centre of their 2^-32 cell, as <see cref="SobolSampler"/> does.</para>
/// </remarks>
public sealed class ProgressiveMultiJitteredSampler : PairedPointSampler
{
    /// <summary>Base-2 logarithm of <see cref="MaxPoints"/>.</summary>
    public const int Log2MaxPoints = 14;

    /// <summary>
    /// The most points per pixel: building 2^14 pmj02 points takes about 0.06 s per sequence on one
    /// core (the exhaustive stratum search of <see cref="ProgressiveMultiJittered"/>; measured by
    /// PmjConstructionBenchmarks), 2^16 about 0.9 s, too long to pay at first use for every sequence.
    /// </summary>
    public const int MaxPoints = 1 << Log2MaxPoints;

    /// <summary>Independent sequences per family (pairs of a pixel use different ones).</summary>
    public const int TableCount = 8;

    private const double Scale = 1.0 / 4294967296.0;

    // Fixed construction seeds: changing one changes every image made with the family.
    private const ulong ConstructionSeed = 0x504D4A3032000001UL;

    private static readonly Lazy<ProgressiveMultiJittered>[][] Tables =
        [.. Enum.GetValues<PmjVariant>().Select(v => Enumerable.Range(0, TableCount)
            .Select(t => new Lazy<ProgressiveMultiJittered>(() => ProgressiveMultiJittered.Generate(v, Log2MaxPoints, ConstructionSeed + (ulong)v * 0x100 + (ulong)t), LazyThreadSafetyMode.ExecutionAndPublication))
            .ToArray())];

    private readonly Lazy<ProgressiveMultiJittered>[] _tables;

    /// <summary>Creates the sampler for one family.</summary>
    public ProgressiveMultiJitteredSampler(SamplerSpec spec, PmjVariant variant) : base(spec)
    {
        Variant = variant;
        _tables = Tables[(int)variant];
    }

    /// <summary>The family.</summary>
    public PmjVariant Variant { get; }

    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    /// <remarks>Eight on AVX2 (the table entries are read and randomized eight lanes at a time, a shorter run masked).</remarks>
    public override int PointsAtOnce => Avx2.IsSupported ? 8 : 1;

    /// <inheritdoc/>
    /// <remarks>
    /// True with Owen scrambling on AVX2: a group of eight scrambled pairs is one chain of dependent vector multiplies
    /// (bit reversal, four Laine–Karras steps, reversal), so a call's time is that chain's latency and a second group
    /// overlaps the first: 16 points cost about 1.2 times 8 (75 → 87 ns a pair, the replay of a furnished-room frame's
    /// batches alone).
    /// </remarks>
    public override bool WholeRunsCostLittleMore => Spec.Randomize == Randomization.Owen && Avx2.IsSupported;

    /// <summary>Sequence <paramref name="table"/> of a family, as built (for tests and tools).</summary>
    public static ProgressiveMultiJittered Sequence(PmjVariant variant, int table) => Tables[(int)variant][table].Value;

    /// <inheritdoc/>
    protected override (double X, double Y) SamplePair(ulong pixel, uint index, int pair)
    {
        if (index >= MaxPoints)
        {
            ThrowPastEnd(index);
        }

        if (Spec.Randomize == Randomization.None)
        {
            // The bare sequences, the same in every pixel: a fixed quadrature rule.
            ProgressiveMultiJittered plain = _tables[pair % TableCount].Value;
            return (plain.X[(int)index] * Scale, plain.Y[(int)index] * Scale);
        }

        ulong seeds = SampleHash.Combine(pixel ^ Salts.PmjPair, (ulong)pair);
        return Randomized(Rotated(pixel, pair), index, (uint)seeds, (uint)(seeds >> 32));
    }

    /// <inheritdoc/>
    protected override void SamplePairBatch(ulong pixel, uint firstIndex, int pair, Span<double> xs, Span<double> ys)
    {
        bool inside = (ulong)firstIndex + (ulong)xs.Length <= (ulong)MaxPoints;
        if (Spec.Randomize == Randomization.None)
        {
            ProgressiveMultiJittered plain = _tables[pair % TableCount].Value;
            if (!inside || !OwenSobolBatch.TableRun(plain.X, plain.Y, (int)firstIndex, OwenSobolBatch.TableScramble.None, 0, 0, xs, ys))
            {
                base.SamplePairBatch(pixel, firstIndex, pair, xs, ys);
            }

            return;
        }

        // The pair's table and seeds, once per batch; the points on eight lanes.
        ulong seeds = SampleHash.Combine(pixel ^ Salts.PmjPair, (ulong)pair);
        ProgressiveMultiJittered s = Rotated(pixel, pair);
        OwenSobolBatch.TableScramble scramble = Spec.Randomize == Randomization.Owen ? OwenSobolBatch.TableScramble.Owen : OwenSobolBatch.TableScramble.Xor;
        bool owen = scramble == OwenSobolBatch.TableScramble.Owen;
        if (inside && OwenSobolBatch.TableRun(owen ? s.ReversedX : s.X, owen ? s.ReversedY : s.Y, (int)firstIndex, scramble, (uint)seeds, (uint)(seeds >> 32), xs, ys))
        {
            return;
        }

        // The scalar form (a single point, no AVX2, or a run reaching past the tables, which throws): the reference the eight-lane one is tested against.
        for (int i = 0; i < xs.Length; i++)
        {
            uint index = firstIndex + (uint)i;
            if (index >= MaxPoints)
            {
                ThrowPastEnd(index);
            }

            (xs[i], ys[i]) = Randomized(s, index, (uint)seeds, (uint)(seeds >> 32));
        }
    }

    // Each pixel starts the pairs at its own table, so pixels do not share one pattern per pair. Forced inline: a block the
    // profile of another randomization calls cold would otherwise keep it a call.
    [MethodImpl(InliningOptions.ShortMethod)]
    private ProgressiveMultiJittered Rotated(ulong pixel, int pair)
    {
        uint rotation = (uint)(pixel >> 40) % TableCount;
        return _tables[(int)((uint)(pair + rotation) % TableCount)].Value;
    }

    private (double X, double Y) Randomized(ProgressiveMultiJittered s, uint index, uint seedX, uint seedY)
    {
        uint x = s.X[(int)index], y = s.Y[(int)index];
        if (Spec.Randomize == Randomization.Owen)
        {
            x = OwenScrambler.Scramble(x, seedX);
            y = OwenScrambler.Scramble(y, seedY);
        }
        else
        {
            x ^= seedX;
            y ^= seedY;
        }

        return ((x + 0.5) * Scale, (y + 0.5) * Scale);
    }

    [MethodImpl(InliningOptions.ColdPath)]
    private static void ThrowPastEnd(uint index) =>
        throw new ArgumentOutOfRangeException(nameof(index), index, $"progressive multi-jittered sequences hold {MaxPoints} points");
}
