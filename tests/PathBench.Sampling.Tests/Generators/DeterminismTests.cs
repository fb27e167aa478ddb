using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Generators;

/// <summary>A sample is a pure function of (generator, randomization, count, seed, pixel, index, dimension).</summary>
public sealed class DeterminismTests
{
    public static TheoryData<string, string> All => new()
    {
        { "random", "none" }, { "jittered", "none" }, { "latin-hypercube", "none" }, { "multi-jittered", "none" },
        { "halton", "digit-permutation" }, { "hammersley", "cranley-patterson" }, { "sobol", "owen" }, { "sobol", "owen+antithetic" },
        { "pmj02", "owen" }, { "pmj02", "digital-shift" }, { "pmj02", "none" }, { "pmj", "owen" }, { "pj", "digital-shift" },
        { "lattice", "cranley-patterson" }, { "lattice", "none" }, { "bluenoise", "owen" }, { "bluenoise", "none" }, { "bluenoise", "owen+antithetic" },
    };

    [Theory]
    [MemberData(nameof(All))]
    public void Parallel_and_sequential_evaluation_give_the_same_bits(string generator, string randomize)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, anti, 64, 77), 6);
        const int pixels = 64;
        var sequential = new double[pixels * 64 * 6];
        for (int p = 0; p < pixels; p++)
        {
            s.Fill(s.PixelKey(p % 8, p / 8), 6, sequential.AsSpan(p * 384, 384));
        }

        var parallel = new double[sequential.Length];
        Parallel.For(0, pixels, new ParallelOptions { MaxDegreeOfParallelism = 4 }, p => s.Fill(s.PixelKey(p % 8, p / 8), 6, parallel.AsSpan(p * 384, 384)));
        Assert.Equal(sequential, parallel);

        // A fresh sampler from the same spec gives the same points too (no hidden state).
        var again = new double[384];
        SamplerCatalog.Create(new SamplerSpec(generator, r, anti, 64, 77), 6).Fill(s.PixelKey(0, 0), 6, again);
        Assert.Equal(sequential.AsSpan(0, 384).ToArray(), again);
    }

    [Theory]
    [MemberData(nameof(All))]
    public void Every_coordinate_lies_in_the_half_open_unit_interval(string generator, string randomize)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        foreach (int n in new[] { 1, 7, 64 })
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, anti, n, 5), 9);
            var points = new double[n * 9];
            s.Fill(s.PixelKey(1, 2), 9, points);
            Assert.All(points, x => Assert.True(x >= 0 && x < 1, $"{x}"));
        }
    }

    [Theory]
    [InlineData("jittered")]
    [InlineData("multi-jittered")]
    [InlineData("latin-hypercube")]
    public void Stratified_sets_put_one_point_in_each_stratum(string generator)
    {
        // The defining property of each construction: one point per cell of the n-cell grid
        // (jittered, multi-jittered), one per 1/n slab in every dimension (Latin, multi-jittered).
        foreach (int n in new[] { 16, 12, 7 })
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, Randomization.None, false, n, 3), 4);
            ulong key = s.PixelKey(0, 0);
            StratumGrid grid = StratumGrid.For(n);
            for (int pair = 0; pair < 2; pair++)
            {
                var cells = new HashSet<int>();
                var slabsX = new HashSet<int>();
                var slabsY = new HashSet<int>();
                for (int i = 0; i < n; i++)
                {
                    (double x, double y) = s.Sample2D(key, (uint)i, 2 * pair);
                    cells.Add((int)(x * grid.Columns) + grid.Columns * (int)(y * grid.Rows));
                    slabsX.Add((int)(x * n));
                    slabsY.Add((int)(y * n));
                }

                if (generator != "latin-hypercube")
                {
                    Assert.Equal(n, cells.Count);
                }

                if (generator != "jittered")
                {
                    Assert.Equal(n, slabsX.Count);
                    Assert.Equal(n, slabsY.Count);
                }
            }
        }
    }
}

/// <summary>The batch path (AVX2 where the machine has it) against the one-point reference.</summary>
public sealed class BatchTests
{
    public static TheoryData<string, string, int> Cases => new()
    {
        { "sobol", "owen", 0 }, { "sobol", "owen", 6 }, { "sobol", "owen", 1022 }, { "sobol", "owen", 3 },
        { "sobol", "digital-shift", 2 }, { "halton", "digit-permutation", 0 }, { "random", "none", 4 },
        { "sobol", "none", 0 }, { "sobol", "cranley-patterson", 5 }, { "bluenoise", "none", 0 }, { "bluenoise", "owen", 3 },
        { "bluenoise", "owen", 30 }, { "lattice", "cranley-patterson", 7 }, { "hammersley", "none", 0 },
        { "hammersley", "cranley-patterson", 3 }, { "halton", "none", 2 }, { "halton", "cranley-patterson", 9 },
        // Sobol's unscrambled pairs in one pass (both dimensions tabled, and a pair across the last tabled dimension),
        // and an odd Owen pair (two seed pairs).
        { "sobol", "cranley-patterson", 4 }, { "sobol", "none", 1022 }, { "sobol", "digital-shift", 1023 }, { "sobol", "owen", 5 },
        { "sobol", "cranley-patterson", 1023 },
        // Blue noise's hashed dimensions as pairs by one kernel (even and odd), the last tabled pair's odd straddle, and a
        // pair across the last dimension with byte tables.
        { "bluenoise", "none", 12 }, { "bluenoise", "owen", 13 }, { "bluenoise", "owen", 11 }, { "bluenoise", "none", 1023 },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Batch_equals_one_point_at_a_time(string generator, string randomize, int dimension)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, anti, 256, 13), dimension + 2);
        // Runs that cross a multiple of 256 (the eight-lane Sobol forms load eight neighbouring byte-table entries where a
        // group's indices share their upper bytes, and walk the tables otherwise) and wrap past 2^32 − 1, among them.
        foreach ((int px, uint first, int count) in new[]
        {
            (0, 0u, 256), (7, 5u, 37), (123, 0xFFFFFFF0u, 15), (2, 40u, 8), (3, 9u, 1), (4, 249u, 16), (5, 0xFFFFFFFBu, 12),
            (6, 509u, 11), (8, 0x0001FFF8u, 8), (9, 0x00FFFFFDu, 6),
        })
        {
            ulong key = s.PixelKey(px, 1);
            var xs = new double[count];
            var ys = new double[count];
            s.Sample2DBatch(key, first, dimension, xs, ys);
            for (int i = 0; i < count; i++)
            {
                (double x, double y) = s.Sample2D(key, unchecked(first + (uint)i), dimension);
                Assert.Equal(x, xs[i]);
                Assert.Equal(y, ys[i]);
            }
        }
    }

    /// <summary>
    /// Sobol/owen's batches keep a thread's scrambled indices of its last groups and reuse them when the index seed and the
    /// group's first index match: calls that alternate between pixels, first indices and dimensions (hits and misses in
    /// turn, runs of one and two groups and a part-group), on two threads of their own sharing the sampler as the renderer's do, each
    /// equal to the one-point method (Sample2D, which keeps nothing).
    /// </summary>
    [Fact]
    public void Sobol_owen_batches_that_reuse_their_index_scramble_equal_their_points()
    {
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 64, 5), 40);
        (int Px, uint First, int Count)[] runs = [(0, 0u, 16), (1, 0u, 16), (0, 0u, 16), (0, 8u, 8), (0, 3u, 13), (1, 3u, 5), (0, 0u, 16), (2, 16u, 16)];
        // Two threads of their own (Parallel.For may run both iterations on one), each with its own memo.
        var failures = new System.Collections.Concurrent.ConcurrentQueue<Exception>();
        Thread[] threads = [.. Enumerable.Range(0, 2).Select(thread => new Thread(() =>
        {
            try
            {
                Calls(thread);
            }
            catch (Exception e)
            {
                failures.Enqueue(e);
            }
        }))];
        foreach (Thread t in threads)
        {
            t.Start();
        }

        foreach (Thread t in threads)
        {
            t.Join();
        }

        Assert.Empty(failures);

        void Calls(int thread)
        {
            var xs = new double[16];
            var ys = new double[16];
            // The thread's own memo, as the renderer's cache keeps one (NewBatchScratch), in turn with the thread-static one.
            BatchScratch scratch = s.NewBatchScratch() ?? throw new InvalidOperationException("sobol/owen keeps a memo");
            for (int round = 0; round < 100; round++)
            {
                foreach ((int px, uint first, int count) in runs)
                {
                    ulong key = s.PixelKey(px + thread, round % 3);
                    int dimension = (round * 2 + px) % 38;
                    bool own = (round & 2) != 0;
                    if (own)
                    {
                        s.Sample2DBatch(key, first, dimension, xs.AsSpan(0, count), ys.AsSpan(0, count), scratch);
                    }
                    else
                    {
                        s.Sample2DBatch(key, first, dimension, xs.AsSpan(0, count), ys.AsSpan(0, count));
                    }

                    for (int i = 0; i < count; i++)
                    {
                        (double x, double y) = s.Sample2D(key, first + (uint)i, dimension);
                        Assert.True(x == xs[i] && y == ys[i], $"pixel {px + thread}, dimension {dimension}, point {first + i}, own memo {own}");
                    }

                    // A single dimension through the same memo.
                    s.SampleBatch(key, first, dimension + 1, xs.AsSpan(0, count), scratch);
                    for (int i = 0; i < count; i++)
                    {
                        Assert.True(s.Sample(key, first + (uint)i, dimension + 1) == xs[i], $"pixel {px + thread}, dimension {dimension + 1}, point {first + i}");
                    }
                }
            }
        }
    }

    /// <summary>
    /// The batch forms of the sets built on Kensler permutations, each lane width (<see cref="LaneWidth"/>: the
    /// AVX-512 form, the AVX2 form and one point at a time, all run on this machine whatever it has: a width
    /// without the hardware runs in software, with the same bits), at the catalog test's 40 (a 5 × 8 grid), powers
    /// of two (divisions by shifts and reciprocals: 16 is 4 × 4, 32 is 4 × 8, 256 is 16 × 16, past the 8 × 8 tabled shuffles), a
    /// prime (a 1 × 7 grid, the length-1 shuffle) and a single point.
    /// </summary>
    [Theory]
    [InlineData("multi-jittered", 16)]
    [InlineData("multi-jittered", 256)]
    [InlineData("multi-jittered", 32)]
    [InlineData("multi-jittered", 40)]
    [InlineData("multi-jittered", 7)]
    [InlineData("multi-jittered", 1)]
    [InlineData("jittered", 16)]
    [InlineData("jittered", 40)]
    [InlineData("jittered", 7)]
    [InlineData("latin-hypercube", 16)]
    [InlineData("latin-hypercube", 40)]
    [InlineData("latin-hypercube", 7)]
    public void Kensler_sets_batches_equal_their_points_at_every_lane_width(string generator, int count)
    {
        foreach (LaneWidth width in new[] { LaneWidth.Wide, LaneWidth.Narrow, LaneWidth.Scalar })
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, Randomization.None, false, count, 5), 12);
            s.Width = width;
            BatchesEqualPoints(s, generator + " " + width);
        }
    }

    /// <summary>
    /// The Kensler sets with more than 2^15 − 1 points, where the lane forms' index permutation takes its two-walk path
    /// (16-bit lanes hold lengths below 2^15 only): runs at the start, across the middle and at the end of the set, at
    /// each lane width, against the one-point form.
    /// </summary>
    [Theory]
    [InlineData("multi-jittered")]
    [InlineData("jittered")]
    [InlineData("latin-hypercube")]
    public void Kensler_sets_batches_past_the_16_bit_walk_equal_their_points(string generator)
    {
        const int Count = 40_000;
        var xs = new double[17];
        var ys = new double[17];
        foreach (LaneWidth width in new[] { LaneWidth.Wide, LaneWidth.Narrow, LaneWidth.Scalar })
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, Randomization.None, false, Count, 5), 12);
            s.Width = width;
            foreach (int first in new[] { 0, 8, 16_383, 32_760, 39_983 })
            {
                ulong key = s.PixelKey(first, 3);
                for (int d = 0; d < 5; d++)
                {
                    s.Sample2DBatch(key, (uint)first, d, xs, ys);
                    for (int i = 0; i < xs.Length; i++)
                    {
                        (double a, double b) = s.Sample2D(key, (uint)(first + i), d);
                        Assert.True(a == xs[i] && b == ys[i], $"{generator} {width} dimensions {d}, {d + 1} point {first + i}");
                    }
                }
            }
        }
    }

    /// <summary>
    /// The plain radical-inverse batches of Hammersley (its first coordinate i / n among them) and Halton, with and without
    /// a Cranley–Patterson rotation, at each lane width (<see cref="LaneWidth"/>; a width without the hardware runs in
    /// software, with the same bits), against their one-point forms.
    /// </summary>
    [Theory]
    [InlineData("hammersley", "none", 40)]
    [InlineData("hammersley", "cranley-patterson", 40)]
    [InlineData("hammersley", "none", 256)]
    [InlineData("hammersley", "cranley-patterson", 7)]
    [InlineData("halton", "none", 40)]
    [InlineData("halton", "cranley-patterson", 256)]
    public void Radical_inverse_batches_equal_their_points_at_every_lane_width(string generator, string randomize, int count)
    {
        foreach (LaneWidth width in new[] { LaneWidth.Wide, LaneWidth.Narrow, LaneWidth.Scalar })
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, SamplerCatalog.ParseRandomization(randomize).Kind, false, count, 5), 12);
            s.Width = width;
            BatchesEqualPoints(s, generator + "/" + randomize + " " + width);
        }
    }

    private static void BatchesEqualPoints(PointSampler s, string generator)
    {
        int count = s.Count;
        var xs = new double[count];
        var ys = new double[count];
        for (int first = 0; first < count; first += 1 + first % 5)
        {
            int n = Math.Min(count - first, 1 + (first * 3 % 17));
            ulong key = s.PixelKey(first, 2);
            for (int d = 0; d < 10; d++)
            {
                s.SampleBatch(key, (uint)first, d, xs.AsSpan(0, n));
                s.Sample2DBatch(key, (uint)first, d, xs.AsSpan(0, n), ys.AsSpan(0, n));
                for (int i = 0; i < n; i++)
                {
                    (double a, double b) = s.Sample2D(key, (uint)(first + i), d);
                    Assert.True(a == xs[i] && b == ys[i], $"{generator} n={count} dimensions {d}, {d + 1} point {first + i}");
                }

                s.SampleBatch(key, (uint)first, d, xs.AsSpan(0, n));
                for (int i = 0; i < n; i++)
                {
                    Assert.True(s.Sample(key, (uint)(first + i), d) == xs[i], $"{generator} n={count} dimension {d} point {first + i}");
                }
            }
        }
    }

    /// <summary>Every generator × randomization the catalog offers, as the renderer's sample cache uses them.</summary>
    public static TheoryData<string, string> Catalog()
    {
        var data = new TheoryData<string, string>();
        foreach (GeneratorInfo g in SamplerCatalog.Generators)
        {
            foreach (Randomization r in g.Randomizations)
            {
                data.Add(g.Name, RandomizationNames.NameOf(r));
            }
        }

        data.Add("sobol", "owen+antithetic");
        data.Add("halton", "digit-permutation+antithetic");
        return data;
    }

    /// <summary>
    /// The renderer takes its coordinates from the batch methods (single dimensions from SampleBatch,
    /// pairs from Sample2DBatch) where it used to call Sample and Sample2D: each must give the same bits,
    /// at even and odd dimensions, batches of 1 to 16 points (the AVX2 path from 8; the eight-lane paths of the
    /// Kensler-permuted sets for any length, their unused lanes padded), and batches that start anywhere in the
    /// sequence, up to its last point.
    /// </summary>
    [Theory]
    [MemberData(nameof(Catalog))]
    public void Batches_equal_the_one_point_methods_for_every_generator(string generator, string randomize)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        const int count = 40;
        GeneratorInfo info = SamplerCatalog.Find(generator);
        int dims = Math.Min(info.MaxDimensions, 76);
        PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, anti, count, 21), dims);
        var xs = new double[16];
        var ys = new double[16];
        foreach ((int px, uint first, int n) in new[] { (0, 0u, 16), (5, 3u, 13), (9, 24u, 16), (2, 31u, 9), (4, 39u, 1), (6, 16u, 8), (1, 36u, 4), (3, 17u, 7), (8, 30u, 2) })
        {
            ulong key = s.PixelKey(px, px + 1);
            for (int d = 0; d + 1 < dims; d++)
            {
                Span<double> x = xs.AsSpan(0, n), y = ys.AsSpan(0, n);
                // Past the run the buffers hold a mark the batch must leave (the vector forms store part-groups under masks).
                xs.AsSpan(n).Fill(-1);
                ys.AsSpan(n).Fill(-1);
                s.SampleBatch(key, first, d, x);
                for (int i = 0; i < n; i++)
                {
                    Assert.True(s.Sample(key, first + (uint)i, d) == x[i], $"{generator}/{randomize} dimension {d} point {first + i}: SampleBatch");
                }

                s.Sample2DBatch(key, first, d, x, y);
                for (int i = 0; i < n; i++)
                {
                    (double a, double b) = s.Sample2D(key, first + (uint)i, d);
                    Assert.True(a == x[i] && b == y[i], $"{generator}/{randomize} dimensions {d}, {d + 1} point {first + i}: Sample2DBatch");
                }

                Assert.True(xs.AsSpan(n).IndexOfAnyExcept(-1.0) < 0 && ys.AsSpan(n).IndexOfAnyExcept(-1.0) < 0, $"{generator}/{randomize} dimension {d}: a batch of {n} wrote past its run");
            }
        }
    }
}
