namespace PathBench.Sampling.Generators;

/// <summary>
/// What a plug-in assembly implements to add generators to PathBench: a public class with a public
/// parameterless constructor, found when the assembly is loaded with <c>--plugin PATH.dll</c>.
/// </summary>
/// <remarks>
/// <para>
/// Each <see cref="GeneratorInfo"/> describes one generator exactly as the built-ins are described
/// (name, published source, whether it needs the planned count, its dimension and point limits, the
/// randomizations that mean something for it and the default) and builds its <see cref="PointSampler"/>
/// from a <see cref="SamplerSpec"/>. The sampler receives the same inputs a built-in receives: the
/// pixel key (<see cref="PointSampler.PixelKey"/>, a hash of pixel and global seed), the point index,
/// the dimension and the planned count; randomness is drawn from <see cref="Hashing.SampleHash"/>
/// keyed with the pixel key and a salt (<see cref="Salts"/>, or a word of the plug-in's own), and the
/// coordinate-wise randomizations from <see cref="PointRandomizations"/>, so a plug-in's renders are as
/// deterministic as a built-in's: independent of threads, tiles and shards.
/// </para>
/// <para>
/// Names must not clash with a built-in generator, another plug-in's, or the <c>file:</c> prefix. The
/// README's "Bring your own sampler" section has a worked example; <c>tools/plugin-example</c> is one.
/// </para>
/// </remarks>
public interface IGeneratorPlugin
{
    /// <summary>The generators this plug-in adds, in the order <c>pathbench samplers</c> lists them.</summary>
    IEnumerable<GeneratorInfo> Generators { get; }
}
