using System.Runtime.CompilerServices;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Integrators;

/// <summary>
/// What the path tracer asks of one pixel sample: its coordinates by dimension
/// (<see cref="DimensionLayout"/>). The tracer is generic over a struct implementing it, so the
/// JIT specialises it and inlines these calls: no virtual call per coordinate.
/// </summary>
public interface ISampleStream
{
    /// <summary>Coordinate <paramref name="dimension"/> of this sample.</summary>
    double Get(int dimension);

    /// <summary>Dimensions <paramref name="dimension"/> and the next.</summary>
    (double X, double Y) Get2D(int dimension);
}

/// <summary>
/// One thread's coordinates for a block of consecutive samples of one pixel. The first time a sample
/// of the block asks for a dimension, it is generated for that sample and the following ones (the
/// samples run in order, so the earlier ones did not need it): the rest of the block for the camera's
/// and the first vertices' dimensions, which nearly every path uses, and a short run of
/// <see cref="DeepRun"/> samples for the vertices from the fifth on (vertex 4), where Russian roulette ends many
/// paths first. The values come from the sampler's batch methods (<see cref="PointSampler.SampleBatch(ulong, uint, int, Span{double})"/>, <see cref="PointSampler.Sample2DBatch(ulong, uint, int, Span{double}, Span{double})"/>),
/// which compute a dimension's per-pixel seeds once per block and vectorise where they can; every later
/// request is a load. Each value is the one <see cref="SampleStream"/> gives (the same method of the
/// sampler computes it: <c>Sample</c> for single dimensions, <c>Sample2D</c> for pairs; past the
/// generator's dimension limit the same padding hash), so images keep their bits; the cost is
/// that a dimension is made for some later samples that end their paths before using it. For a generator whose
/// single coordinates cost as much as their even-aligned pair (<see cref="PointSampler.PairsShareWork"/>: the
/// jittered and the pair-wise 2-D sets), a single dimension is made with its pair partner through
/// <c>Sample2DBatch</c>: the vertex's lobe and light choice are such a pair, made once instead of twice.
/// </summary>
/// <remarks>One per worker thread, reused for every block: nothing is allocated per sample or per pixel.</remarks>
public sealed class SampleCache
{
    /// <summary>Samples per block: enough to amortise a dimension's seeds, few enough that deep dimensions reached by a few paths waste little.</summary>
    public const int BlockSize = 16;

    /// <summary>Samples made at once for a dimension of the vertices from vertex 4 on (see the type's remarks), unless the sampler's batches cost little more for the whole block (<see cref="PointSampler.WholeRunsCostLittleMore"/>: then the rest of the block) or it makes more points at once (<see cref="PointSampler.PointsAtOnce"/>, up to the block: then that many).</summary>
    public const int DeepRun = 4;

    // Dimensions below this are made for the rest of the block at once: the camera's and those of vertices 0–3. Russian
    // roulette first ends a path after its vertex 3 (PathTracer: depth >= 3), so in a closed room nearly every path reads
    // vertex 3's dimensions (furnished room: 95–97 % of samples, against 28 % for vertex 4's; `pathbench bench` counts
    // coordinates_read), and making them in runs of DeepRun cost four calls where one does.
    private static readonly int ShallowDimensions = DimensionLayout.Vertex(4);

    private readonly PointSampler _sampler;
    private readonly int _limit;
    private readonly bool _pairsShareWork;
    private readonly int _deepRun;
    private readonly int _paddingRun;
    private readonly BatchScratch? _scratch;
    private double[] _values;
    private int[] _filled;
    private int[] _filledEnd;
    private int _block;
    private ulong _pixel;
    private uint _first;
    private int _count;

    /// <summary>Creates the cache of <paramref name="sampler"/> sized for <paramref name="dimensions"/> dimensions (it grows past them when asked).</summary>
    public SampleCache(PointSampler sampler, int dimensions)
    {
        ArgumentNullException.ThrowIfNull(sampler);
        _sampler = sampler;
        _limit = sampler.MaxDimensions;
        _pairsShareWork = sampler.PairsShareWork;
        _deepRun = sampler.WholeRunsCostLittleMore ? BlockSize : Math.Clamp(sampler.PointsAtOnce, DeepRun, BlockSize);
        // Past the generator's limit the padding hash runs eight at a time in the 512-bit lane form (SampleStream.Padding, SamplerLanes).
        _paddingRun = SamplerLanes.Uses512BitVectors ? 8 : DeepRun;
        // This thread's memo for the sampler's batches (Owen-scrambled Sobol's scrambled indices), when it keeps one.
        _scratch = sampler.NewBatchScratch();
        int d = Math.Max(2, dimensions);
        _values = new double[d * BlockSize];
        _filled = new int[d];
        _filledEnd = new int[d];
    }

    /// <summary>The sampler the coordinates come from.</summary>
    public PointSampler Sampler => _sampler;

    /// <summary>Starts the block of samples [<paramref name="first"/>, <paramref name="first"/> + <paramref name="count"/>) of the pixel with key <paramref name="pixel"/>.</summary>
    public void BeginBlock(ulong pixel, uint first, int count)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(count, 1);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(count, BlockSize);
        _pixel = pixel;
        _first = first;
        _count = count;
        if (++_block == int.MaxValue)
        {
            // The stamps would wrap: forget every dimension instead.
            Array.Clear(_filled);
            _block = 1;
        }
    }

    /// <summary>The stream of sample <paramref name="slot"/> of the current block (sample index first + slot).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public CachedSampleStream Stream(int slot) => new(this, slot);

    /// <summary>Coordinate <paramref name="dimension"/> of sample <paramref name="slot"/> of the block.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal double Get(int slot, int dimension)
    {
        if ((uint)dimension >= (uint)_filled.Length || _filled[dimension] != _block || slot >= _filledEnd[dimension])
        {
            Fill(slot, dimension);
        }

        return _values[dimension * BlockSize + slot];
    }

    /// <summary>Dimensions <paramref name="dimension"/> and the next of sample <paramref name="slot"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal (double X, double Y) Get2D(int slot, int dimension)
    {
        if ((uint)(dimension + 1) >= (uint)_filled.Length || _filled[dimension] != _block || _filled[dimension + 1] != _block
            || slot >= _filledEnd[dimension] || slot >= _filledEnd[dimension + 1])
        {
            Fill2D(slot, dimension);
        }

        int at = dimension * BlockSize + slot;
        return (_values[at], _values[at + BlockSize]);
    }

    /// <summary>When set, every batch the cache asks of its sampler is noted here (the bench replays them); one thread only.</summary>
    internal List<SampleBatchCall>? Recorder { get; set; }

    [MethodImpl(MethodImplOptions.NoInlining)]
    private void Fill(int slot, int dimension)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(dimension);
        if (_pairsShareWork && (dimension | 1) < _limit)
        {
            // The generator makes the even-aligned pair for either coordinate (a path asks for both the lobe and the
            // light choice, the two singles of a vertex's pair): made once, as Sample2D, the same bits as the singles.
            Fill2D(slot, dimension & ~1);
            return;
        }

        Reserve(dimension + 1);
        uint first = _first + (uint)slot;
        Span<double> row = _values.AsSpan(dimension * BlockSize + slot, Run(slot, dimension));
        Recorder?.Add(new SampleBatchCall(_pixel, first, row.Length, dimension, false));
        if (dimension < _limit)
        {
            ScratchBatches.Sample(_sampler, _scratch, _pixel, first, dimension, row);
        }
        else
        {
            SampleStream.Padding(_pixel, first, dimension, row);
        }

        _filled[dimension] = _block;
        _filledEnd[dimension] = slot + row.Length;
    }

    private int Run(int slot, int dimension) =>
        Math.Min(_count - slot, dimension < ShallowDimensions ? BlockSize : dimension < _limit ? _deepRun : _paddingRun);

    [MethodImpl(MethodImplOptions.NoInlining)]
    private void Fill2D(int slot, int dimension)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(dimension);
        if (dimension + 1 >= _limit)
        {
            // As SampleStream.Get2D: a pair that reaches past the limit is two single coordinates.
            Fill(slot, dimension);
            Fill(slot, dimension + 1);
            return;
        }

        Reserve(dimension + 2);
        int n = Run(slot, dimension);
        Recorder?.Add(new SampleBatchCall(_pixel, _first + (uint)slot, n, dimension, true));
        ScratchBatches.Sample2D(_sampler, _scratch, _pixel, _first + (uint)slot, dimension, _values.AsSpan(dimension * BlockSize + slot, n), _values.AsSpan((dimension + 1) * BlockSize + slot, n));
        _filled[dimension] = _block;
        _filled[dimension + 1] = _block;
        _filledEnd[dimension] = slot + n;
        _filledEnd[dimension + 1] = slot + n;
    }

    private void Reserve(int dimensions)
    {
        if (dimensions <= _filled.Length)
        {
            return;
        }

        // Paths deeper than the layout planned for (the stream serves any dimension): grow by doubling.
        int d = Math.Max(dimensions, 2 * _filled.Length);
        Array.Resize(ref _values, d * BlockSize);
        Array.Resize(ref _filled, d);
        Array.Resize(ref _filledEnd, d);
    }
}

/// <summary>One batch a <see cref="SampleCache"/> asked of its sampler: <paramref name="Count"/> points from <paramref name="First"/>, one dimension or a pair.</summary>
internal readonly record struct SampleBatchCall(ulong Pixel, uint First, int Count, int Dimension, bool Pair);

/// <summary>Sample <c>slot</c> of a <see cref="SampleCache"/>'s current block, as an <see cref="ISampleStream"/>.</summary>
public readonly struct CachedSampleStream : ISampleStream
{
    private readonly SampleCache _cache;
    private readonly int _slot;

    internal CachedSampleStream(SampleCache cache, int slot)
    {
        _cache = cache;
        _slot = slot;
    }

    /// <inheritdoc/>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Get(int dimension) => _cache.Get(_slot, dimension);

    /// <inheritdoc/>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public (double X, double Y) Get2D(int dimension) => _cache.Get2D(_slot, dimension);
}

/// <summary>
/// A sampler's batch calls with one thread's scratch where the sampler keeps one (<see cref="PointSampler.NewBatchScratch"/>),
/// else the plain calls, so a generator without one keeps its direct call: what the cache and the bench's replay of its
/// calls both do.
/// </summary>
internal static class ScratchBatches
{
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Sample(PointSampler sampler, BatchScratch? scratch, ulong pixel, uint first, int dimension, Span<double> xs)
    {
        if (scratch is null)
        {
            sampler.SampleBatch(pixel, first, dimension, xs);
        }
        else
        {
            sampler.SampleBatch(pixel, first, dimension, xs, scratch);
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Sample2D(PointSampler sampler, BatchScratch? scratch, ulong pixel, uint first, int dimension, Span<double> xs, Span<double> ys)
    {
        if (scratch is null)
        {
            sampler.Sample2DBatch(pixel, first, dimension, xs, ys);
        }
        else
        {
            sampler.Sample2DBatch(pixel, first, dimension, xs, ys, scratch);
        }
    }
}
