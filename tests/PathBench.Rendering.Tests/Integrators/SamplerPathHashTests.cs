using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Tests.Integrators;

/// <summary>
/// The image bits of every generator × randomization, recorded before the renderer fetched its
/// coordinates through the per-thread sample cache (issue 12): the cache, the generic path tracer
/// and the skipped lens pair of a pinhole camera change no arithmetic, so every image must keep
/// its bits. SHA-256 (FIPS 180-4) of the float RGB film, recorded on x86-64 Linux. The two
/// <c>bluenoise</c> rows were recorded again, with the same one-call-per-coordinate code, when its
/// per-count ranking tables (issue 13) changed its points. The three <c>halton</c>/<c>digit-permutation</c> rows
/// were recorded again when the digit permutations' construction changed (issue 12: each position's image of 0 from
/// the digits of one hash, the other images drawn without replacement, <see cref="PathBench.Sampling.Sequences.RadicalInverse.Permuted"/>):
/// other uniformly random permutations, so other points and other images, of the same distribution; and again when each
/// draw of a digit image became a 32-bit half of a hash (two draws a hash, ⌊v·m / 2^32⌋; issue 12, ninth round): other
/// permutations again, each draw's bias below 2^−32 a value instead of 2^−53; and again when the draws' hash became a
/// one-multiply mixer (<c>RadicalInverse.DrawHash</c>; issue 12, tenth round): each
/// draw still within 2^−32 of uniform, keys still 64 bits wide, other permutations of the same distribution. The
/// <c>jittered</c>, <c>latin-hypercube</c> and <c>multi-jittered</c> rows were recorded again when their jitters moved
/// to <see cref="PathBench.Sampling.Hashing.JitterHash"/> (issue 12, ninth round: 32-bit integer hashing, multi-jittered's
/// keyed by the point's index): other independent uniform jitters, so the same estimator with other random values; and
/// again when a pair's two jitter streams came from one key (the second the first ⊕ a constant,
/// <see cref="PathBench.Sampling.Hashing.JitterHash.PixelPairStreams"/>; issue 12, tenth round): other jitters again.
/// </summary>
public sealed class SamplerPathHashTests
{
    private static readonly PathTracerOptions Options = new(HemisphereStrategy.Cosine, LightStrategy.Mis, 6, true);

    /// <summary>The box of <see cref="DeterminismTests"/> seen through a thin lens (aperture 0.05, focused at 3).</summary>
    private static Scene LensBox()
    {
        Scene box = DeterminismTests.Box();
        return Scene.Build(box.Bvh.Primitives.ToArray(), box.Materials.ToArray(), [],
            new Camera(new(0, 1, 3), new(0, 1, 0), new(0, 1, 0), 45, 24, 20, 0.05, 3), Rgb.Grey(0.1));
    }

    public static TheoryData<string, string, string, string> Cases => new()
    {
        { "random", "none", "pinhole", "71ff968e5c73746d30c023bdcec16ccb5a55dde001ad6641fcdff56db4fa4b0b" },
        { "jittered", "none", "pinhole", "e9687916ee81ec16648331a8592b7dbf559281d5257cd7bb79bf84c5d29239d2" },
        { "latin-hypercube", "none", "pinhole", "7ceb8a50b555c6a94ae4f6f1da69c429f68ddb2e54ecf43c01e1bd3066e39a09" },
        { "multi-jittered", "none", "pinhole", "e7d5282786240795de279442cc781b122fbab656ff565d41dd2473dd8dc5a5e7" },
        { "halton", "none", "pinhole", "3b910d8de691586afc35f1e450e7978ac1a51d6fc98e12925bd3c571fdef8d71" },
        { "halton", "cranley-patterson", "pinhole", "13a6178118b3add6fae06736ecda66d49f3b13518422ea76daa618b3c29d48d5" },
        { "halton", "digit-permutation", "pinhole", "e28ccd2da1207656a76a75510728e987afd436174f223863722f6749605abe50" },
        { "hammersley", "none", "pinhole", "4dd177caa0ede10bff3c1b388e11e7f97a571c1f323064263b4aa876feab6f99" },
        { "hammersley", "cranley-patterson", "pinhole", "9494f7ad31048104cf56f91788d28c94058724e372ae52594da59dc20efd78b6" },
        { "sobol", "none", "pinhole", "150b7aa9131345b4b5163bfc4ac76461f0230141ddb8b6ec8bc0b593c567b91c" },
        { "sobol", "cranley-patterson", "pinhole", "1149e5bc6b43ef142a70c695cfde55cd1bbe8202cdf2ccfc82612f1174f88964" },
        { "sobol", "digital-shift", "pinhole", "04021db7a0b7861ea0def9cf6494a9839a636bbe9d31c122792f39f2cd4b1ae9" },
        { "sobol", "owen", "pinhole", "0714cebf234893b462cedb8bbc848f4b5a9ac8f266c0d968fdbd919510326f5d" },
        { "sobol", "owen+antithetic", "pinhole", "4344a4899c99e5f0bea15ec1d88fa9f0c1f5c97eae5fff6a9f6efa15b49a7f21" },
        { "bluenoise", "none", "pinhole", "2db615057e8583bd4fb04e7d8379e5c8dedc6767b28424e518341cc28df68192" },
        { "bluenoise", "owen", "pinhole", "7c23d5849400e7bee198a25cf862f019b3413026404e3a7a886e942ae1c791b7" },
        { "pmj02", "none", "pinhole", "ef293a5cbd5b4d78d4e7edc72e2fab1613838b978ab9a2449e6a296b6b2a2afc" },
        { "pmj02", "digital-shift", "pinhole", "164148870eed1e51ac7313d8c35540b3b227560eff26a6bcc8fef1a885573d9f" },
        { "pmj02", "owen", "pinhole", "d9535dfaeab188c99b1840b59e6b17e43eb9e47aaefcd91c74295489259abf6b" },
        { "pmj", "owen", "pinhole", "e3c778a58d54e67f7542860550b90663e4800d58cc1c1f3b0d4502cb6892d13e" },
        { "pj", "digital-shift", "pinhole", "979d4688ac3def5ee1668f32f460c1524d74800de6835de80c92fbe107ba257c" },
        { "lattice", "none", "pinhole", "fe4cee3a968d759af36e7ddfaa447cc0dc3ccc22e821e3ed710f84cb47fb5ced" },
        { "lattice", "cranley-patterson", "pinhole", "aa3154deedd45fdb3f9e688350205a070317581ade3275045cd5c109d8bf2345" },
        { "sobol", "owen", "lens", "c0d95852313c1a4c8988879d47ead8297a3dc2eb5824e173e55e187e98219dc0" },
        { "halton", "digit-permutation", "lens", "a66d6f7fac3be459aa9eb349b2e59140a360d9a78139f2bc1ec06c0cf82bfa56" },
        { "multi-jittered", "none", "lens", "565d6d47828eb4567b37b6c9d033852dfcd2bbc36b35f007db99738c648ed6d1" },
        { "sobol", "owen", "range", "32a5a6482608fb3ed79f51e98039298a0ce92dfd118663dd33161a1c246ad05f" },
        { "halton", "digit-permutation", "range", "bbdd901dcd2437a1525b3638e10c4d157349853325b2092a0095e16eee7b3cd0" },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Image_bits_are_the_ones_recorded_before_the_sample_cache(string generator, string randomize, string setup, string recorded)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        const int spp = 40; // not a multiple of any block size a cache might use
        int dims = Math.Min(Math.Min(64, SamplerCatalog.Find(generator).MaxDimensions), DimensionLayout.Total(Options.MaxDepth));
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec(generator, r, anti, spp, 5), dims);
        Scene scene = setup == "lens" ? LensBox() : DeterminismTests.Box();
        // "range": the sample range [13, 37) of the 40 planned, as a resumed pass renders it.
        (int first, int end) = setup == "range" ? (13, 37) : (0, spp);
        float[] rgb = Renderer.Render(new RenderJob(scene, sampler, Options, first, end, 2)).Film.ToRgb();
        byte[] bytes = new byte[rgb.Length * 4];
        Buffer.BlockCopy(rgb, 0, bytes, 0, bytes.Length);
        string actual = Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(bytes));
        Assert.True(actual == recorded, $"{generator}/{randomize}/{setup}: SHA-256 {actual}");
    }
}
