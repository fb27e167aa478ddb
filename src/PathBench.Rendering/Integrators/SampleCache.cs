using System.Runtime.CompilerServices;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;

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
/// One thread's coordinates for a block of consecutive samples of one pixel. A dimension is
/// generated for the whole block the first time any sample of the block asks for it, through the
/// sampler's batch methods (<see cref="PointSampler.SampleBatch"/>, <see cref="PointSampler.Sample2DBatch"/>),
/// which compute a dimension's per-pixel seeds once per block and vectorise where they can; every later
/// request is a load. Each value is the one <see cref="SampleStream"/> gives (the same method of the
/// sampler computes it: <c>Sample</c> for single dimensions, <c>Sample2D</c> for pairs; past the
/// generator's dimension limit the same padding hash), so images keep their bits; the cost is
/// that a dimension reached by one sample of the block is made for all of it.
/// </summary>
/// <remarks>One per worker thread, reused for every block: nothing is allocated per sample or per pixel.</remarks>
public sealed class SampleCache
{
    /// <summary>Samples per block: enough to amortise a dimension's seeds, few enough that deep dimensions reached by a few paths waste little.</summary>
    public const int BlockSize = 16;

    private readonly PointSampler _sampler;
    private readonly int _limit;
    private double[] _values;
    private int[] _filled;
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
        int d = Math.Max(2, dimensions);
        _values = new double[d * BlockSize];
        _filled = new int[d];
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
        if ((uint)dimension >= (uint)_filled.Length || _filled[dimension] != _block)
        {
            Fill(dimension);
        }

        return _values[dimension * BlockSize + slot];
    }

    /// <summary>Dimensions <paramref name="dimension"/> and the next of sample <paramref name="slot"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal (double X, double Y) Get2D(int slot, int dimension)
    {
        if ((uint)(dimension + 1) >= (uint)_filled.Length || _filled[dimension] != _block || _filled[dimension + 1] != _block)
        {
            Fill2D(dimension);
        }

        int at = dimension * BlockSize + slot;
        return (_values[at], _values[at + BlockSize]);
    }

    [MethodImpl(MethodImplOptions.NoInlining)]
    private void Fill(int dimension)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(dimension);
        Reserve(dimension + 1);
        Span<double> row = _values.AsSpan(dimension * BlockSize, _count);
        if (dimension < _limit)
        {
            _sampler.SampleBatch(_pixel, _first, dimension, row);
        }
        else
        {
            for (int i = 0; i < row.Length; i++)
            {
                row[i] = SampleStream.Padding(_pixel, _first + (uint)i, dimension);
            }
        }

        _filled[dimension] = _block;
    }

    [MethodImpl(MethodImplOptions.NoInlining)]
    private void Fill2D(int dimension)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(dimension);
        if (dimension + 1 >= _limit)
        {
            // As SampleStream.Get2D: a pair that reaches past the limit is two single coordinates.
            Fill(dimension);
            Fill(dimension + 1);
            return;
        }

        Reserve(dimension + 2);
        _sampler.Sample2DBatch(_pixel, _first, dimension, _values.AsSpan(dimension * BlockSize, _count), _values.AsSpan((dimension + 1) * BlockSize, _count));
        _filled[dimension] = _block;
        _filled[dimension + 1] = _block;
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
    }
}

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
