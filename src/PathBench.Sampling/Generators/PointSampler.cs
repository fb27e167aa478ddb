using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// A sample generator bound to its randomization, its planned count and a global seed:
/// it answers "coordinate <c>d</c> of point <c>i</c> of the set for pixel <c>p</c>".
/// Immutable and free of shared mutable state, so one instance serves every thread.
/// </summary>
/// <remarks>
/// Sequences (Halton, Sobol, random) accept any index; sets (Hammersley, jittered, Latin
/// hypercube, multi-jittered) are defined for indices below <see cref="Count"/> only.
/// Every coordinate lies in [0, 1).
/// </remarks>
public abstract class PointSampler
{
    /// <summary>Creates the sampler.</summary>
    protected PointSampler(SamplerSpec spec)
    {
        ArgumentNullException.ThrowIfNull(spec);
        Spec = spec;
    }

    /// <summary>
    /// The lane form of the batches of the sets built on Kensler permutations (jittered, Latin hypercube,
    /// multi-jittered): the machine's widest by default. Tests set it, before the sampler's first use, to run the
    /// narrower forms on a machine that has the wider; every form gives the same bits.
    /// </summary>
    internal LaneWidth Width { get; set; } = Lanes.Best;

    /// <summary>What this sampler was built from.</summary>
    public SamplerSpec Spec { get; }

    /// <summary>The planned number of points per pixel.</summary>
    public int Count => Spec.Count;

    /// <summary>The largest number of dimensions this generator defines.</summary>
    public abstract int MaxDimensions { get; }

    /// <summary>The key of pixel (x, y) under this sampler's global seed.</summary>
    /// <remarks>
    /// Every caller gets a pixel's key here and passes it to <see cref="Sample"/>. A generator that
    /// needs the screen position itself (the blue-noise sampler reads its seed tile at (x, y)) overrides
    /// this and folds the position into the key; the key must stay a pure function of (x, y) and the spec.
    /// </remarks>
    public virtual ulong PixelKey(int x, int y) => SampleHash.PixelKey(x, y, Spec.Seed);

    /// <summary>Coordinate <paramref name="dimension"/> of point <paramref name="index"/> for the pixel with key <paramref name="pixel"/>.</summary>
    public abstract double Sample(ulong pixel, uint index, int dimension);

    /// <summary>
    /// Dimensions <paramref name="dimension"/> and <paramref name="dimension"/>+1 of one point.
    /// Generators override it where the pair shares work (an index shuffle, a stratum).
    /// </summary>
    public virtual (double X, double Y) Sample2D(ulong pixel, uint index, int dimension) =>
        (Sample(pixel, index, dimension), Sample(pixel, index, dimension + 1));

    /// <summary>
    /// Whether a single coordinate of an even-aligned pair (2k, 2k+1) costs about as much as the pair: the
    /// generator makes the pair's shared work (a cell, a point of a 2-D pattern) for either coordinate, and
    /// <see cref="Sample2D"/>(2k) is (<see cref="Sample"/>(2k), <see cref="Sample"/>(2k+1)) bit for bit. A caller
    /// that will want both coordinates may then ask for the pair once instead of two singles.
    /// </summary>
    public virtual bool PairsShareWork => false;

    /// <summary>
    /// Whether a batch costs about the same whatever its length: a dimension's per-pixel tables dominate and the points
    /// themselves are a few operations (Halton with digit permutations draws a position's permutation for the run).
    /// A caller that would make a dimension in short runs, for samples that may never ask for it, may then make the
    /// rest of its block in one batch instead; the values are the same either way.
    /// </summary>
    public virtual bool WholeRunsCostLittleMore => false;

    /// <summary>
    /// How many consecutive points a batch makes for about the cost of one (its vector lanes: 8 for the sets built on
    /// Kensler permutations, whose eight-lane forms pad a shorter run with copies of its last index); 1 when each point
    /// costs its own. A caller that makes short runs may round them up to this many at no extra cost.
    /// </summary>
    public virtual int PointsAtOnce => 1;

    /// <summary>
    /// Dimensions <paramref name="dimension"/> and <paramref name="dimension"/>+1 of the
    /// consecutive points <paramref name="firstIndex"/>, <paramref name="firstIndex"/>+1, …, one per
    /// element of <paramref name="xs"/>: the same values as <see cref="Sample2D"/>, for callers
    /// that want many at once (generators may vectorise it).
    /// </summary>
    public virtual void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        RequireSameLength(xs, ys);
        for (int i = 0; i < xs.Length; i++)
        {
            (xs[i], ys[i]) = Sample2D(pixel, firstIndex + (uint)i, dimension);
        }
    }

    /// <summary>
    /// Dimension <paramref name="dimension"/> of the consecutive points <paramref name="firstIndex"/>,
    /// <paramref name="firstIndex"/>+1, …, one per element of <paramref name="xs"/>: the same values as
    /// <see cref="Sample"/>, for callers that want many at once. Generators override it to compute a
    /// dimension's per-pixel seeds once per batch instead of once per point.
    /// </summary>
    public virtual void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        for (int i = 0; i < xs.Length; i++)
        {
            xs[i] = Sample(pixel, firstIndex + (uint)i, dimension);
        }
    }

    /// <summary>
    /// A new memo for one thread's batches (<see cref="BatchScratch"/>), or null when the generator keeps none (the
    /// default). A caller that makes many batches on one thread (the renderer's per-thread sample cache) makes one and
    /// passes it to every batch of that thread through the overloads that take it.
    /// </summary>
    public virtual BatchScratch? NewBatchScratch() => null;

    /// <summary>
    /// <see cref="Sample2DBatch(ulong, uint, int, Span{double}, Span{double})"/> with this thread's memo from
    /// <see cref="NewBatchScratch"/> (the same values); callers whose <see cref="NewBatchScratch"/> gave null call the
    /// overload without it.
    /// </summary>
    public virtual void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys, BatchScratch scratch) =>
        Sample2DBatch(pixel, firstIndex, dimension, xs, ys);

    /// <summary>
    /// <see cref="SampleBatch(ulong, uint, int, Span{double})"/> with this thread's memo from <see cref="NewBatchScratch"/>
    /// (the same values).
    /// </summary>
    public virtual void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, BatchScratch scratch) =>
        SampleBatch(pixel, firstIndex, dimension, xs);

    /// <summary>
    /// <see cref="Sample2DBatch(ulong, uint, int, Span{double}, Span{double})"/> as two <see cref="SampleBatch(ulong, uint, int, Span{double})"/> calls: for generators that do not
    /// override <see cref="Sample2D"/>, whose pairs are two single coordinates.
    /// </summary>
    protected void PairBySingles(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        RequireSameLength(xs, ys);
        SampleBatch(pixel, firstIndex, dimension, xs);
        SampleBatch(pixel, firstIndex, dimension + 1, ys);
    }

    /// <summary>Throws unless the two coordinate buffers of a pair batch have the same length.</summary>
    protected static void RequireSameLength(Span<double> xs, Span<double> ys)
    {
        if (xs.Length != ys.Length)
        {
            throw new ArgumentException("the two coordinate buffers must be the same length", nameof(ys));
        }
    }

    /// <summary>Writes <paramref name="dims"/> coordinates of each of the first <c>points.Length / dims</c> points, row by row.</summary>
    public void Fill(ulong pixel, int dims, Span<double> points)
    {
        if (dims <= 0 || points.Length % dims != 0)
        {
            throw new ArgumentException("the buffer must hold whole points", nameof(points));
        }

        int n = points.Length / dims;
        for (int i = 0; i < n; i++)
        {
            for (int d = 0; d < dims; d++)
            {
                points[i * dims + d] = Sample(pixel, (uint)i, d);
            }
        }
    }
}

/// <summary>
/// A generator defined per 2-D pair of dimensions (2k, 2k+1): the pair's two coordinates come
/// from one point of a 2-D pattern, so both are made together; an odd first dimension straddles
/// two pairs.
/// </summary>
public abstract class PairedPointSampler(SamplerSpec spec) : PointSampler(spec)
{
    /// <inheritdoc/>
    public sealed override bool PairsShareWork => true;

    /// <inheritdoc/>
    public sealed override double Sample(ulong pixel, uint index, int dimension)
    {
        (double x, double y) = SamplePair(pixel, index, dimension >> 1);
        return (dimension & 1) == 0 ? x : y;
    }

    /// <inheritdoc/>
    public sealed override (double X, double Y) Sample2D(ulong pixel, uint index, int dimension) =>
        (dimension & 1) == 0
            ? SamplePair(pixel, index, dimension >> 1)
            : (Sample(pixel, index, dimension), Sample(pixel, index, dimension + 1));

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        const int MaxStack = 64;
        if (xs.Length > MaxStack)
        {
            base.SampleBatch(pixel, firstIndex, dimension, xs);
            return;
        }

        // The pair is made whole, as Sample makes it; the other coordinate goes to a scratch buffer.
        Span<double> other = stackalloc double[xs.Length];
        if ((dimension & 1) == 0)
        {
            SamplePairBatch(pixel, firstIndex, dimension >> 1, xs, other);
        }
        else
        {
            SamplePairBatch(pixel, firstIndex, dimension >> 1, other, xs);
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        if ((dimension & 1) != 0)
        {
            base.Sample2DBatch(pixel, firstIndex, dimension, xs, ys);
            return;
        }

        RequireSameLength(xs, ys);
        SamplePairBatch(pixel, firstIndex, dimension >> 1, xs, ys);
    }

    /// <summary>Dimensions 2·<paramref name="pair"/> and 2·<paramref name="pair"/>+1 of point <paramref name="index"/>.</summary>
    protected abstract (double X, double Y) SamplePair(ulong pixel, uint index, int pair);

    /// <summary>
    /// <see cref="SamplePair"/> of the consecutive points from <paramref name="firstIndex"/>, one per element of
    /// <paramref name="xs"/> and <paramref name="ys"/> (the same length): the same values, for generators that
    /// can hoist a pair's per-pixel work out of the loop.
    /// </summary>
    protected virtual void SamplePairBatch(ulong pixel, uint firstIndex, int pair, Span<double> xs, Span<double> ys)
    {
        for (int i = 0; i < xs.Length; i++)
        {
            (xs[i], ys[i]) = SamplePair(pixel, firstIndex + (uint)i, pair);
        }
    }
}

/// <summary>What a sampler is built from: generator name, randomization, antithetic pairing, planned count and global seed.</summary>
public sealed record SamplerSpec(string Generator, Randomization Randomize, bool Antithetic, int Count, ulong Seed)
{
    /// <summary>The randomization as written on the command line, e.g. <c>owen</c> or <c>none+antithetic</c>.</summary>
    public string RandomizeName =>
        Antithetic
            ? (Randomize == Randomization.None ? RandomizationNames.Antithetic : RandomizationNames.NameOf(Randomize) + "+" + RandomizationNames.Antithetic)
            : RandomizationNames.NameOf(Randomize);
}

/// <summary>
/// What a generator keeps between one thread's batches (<see cref="PointSampler.NewBatchScratch"/>): only pure functions
/// of their inputs, under keys of all those inputs, so the values never depend on it. One thread uses it at a time.
/// </summary>
public abstract class BatchScratch
{
    /// <summary>Only the library's generators make these.</summary>
    private protected BatchScratch()
    {
    }
}
