using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;

namespace PathBench.Analysis;

/// <summary>A study as its file states it, validated: what to render, against which reference, how often.</summary>
/// <param name="SourcePath">The study file, as named in messages.</param>
/// <param name="ScenePath">The scene file, resolved against the study file's folder.</param>
/// <param name="Reference">How the ground truth is obtained.</param>
/// <param name="Spp">The sample counts of the ladder, strictly increasing.</param>
/// <param name="Replicates">Independent renders per configuration and sample count (K).</param>
/// <param name="Seed">Base seed: replicate k of every configuration uses seed + 1 + k.</param>
/// <param name="Configurations">The configurations compared, names unique.</param>
public sealed record StudyDefinition(
    string SourcePath,
    string ScenePath,
    ReferenceSource Reference,
    IReadOnlyList<int> Spp,
    int Replicates,
    ulong Seed,
    IReadOnlyList<StudyConfiguration> Configurations)
{
    /// <summary>The image size the study renders at, overriding the scene's camera resolution; null for the scene's own.</summary>
    public (int Width, int Height)? Resolution { get; init; }

    /// <summary>Worker threads per render; null for every core.</summary>
    public int? Threads { get; init; }

    /// <summary>The seed of each replicate; null for <see cref="Seed"/> + 1 … <see cref="Seed"/> + K.</summary>
    public IReadOnlyList<ulong>? Seeds { get; init; }

    /// <summary>The seed of replicate <paramref name="k"/> (0-based).</summary>
    public ulong SeedOf(int k) => Seeds is { } list ? list[k] : unchecked(Seed + 1 + (ulong)k);
}

/// <summary>Where a study's ground truth comes from: rendered with <paramref name="Spp"/> samples, or read from <paramref name="Path"/>.</summary>
/// <param name="Spp">Samples per pixel of a rendered reference (null when read from a file).</param>
/// <param name="Path">An image file (null when rendered); its variance file is used when present.</param>
/// <param name="Generator">Generator of a rendered reference.</param>
/// <param name="Randomize">Randomization of a rendered reference.</param>
public sealed record ReferenceSource(int? Spp, string? Path, string Generator = "sobol", string Randomize = "owen")
{
    /// <summary>Where the study file names the reference file (<c>FILE:LINE:COLUMN</c>), for messages about it.</summary>
    public string? Location { get; init; }
}

/// <summary>One configuration of a study: every render option, under a unique name.</summary>
/// <param name="Name">The configuration's name in tables, files and plots.</param>
/// <param name="Generator">Generator name as the catalog knows it.</param>
/// <param name="Randomization">Randomization kind.</param>
/// <param name="Antithetic">Whether points are paired antithetically.</param>
/// <param name="Hemisphere">How diffuse bounces sample directions.</param>
/// <param name="Lights">Light-sampling strategy.</param>
/// <param name="MaxDepth">Longest path in bounces; null for the scene's own.</param>
/// <param name="RussianRoulette">Whether paths are ended by Russian roulette.</param>
public sealed record StudyConfiguration(
    string Name,
    string Generator,
    Randomization Randomization,
    bool Antithetic,
    HemisphereStrategy Hemisphere,
    LightStrategy Lights,
    int? MaxDepth,
    bool RussianRoulette)
{
    /// <summary>The catalog's entry for the generator.</summary>
    public GeneratorInfo Info => SamplerCatalog.Find(Generator);

    /// <summary>The randomization as written in files, e.g. <c>owen</c>.</summary>
    public string RandomizeName => new SamplerSpec(Generator, Randomization, Antithetic, 1, 0).RandomizeName;

    /// <summary>
    /// True when renders with different seeds give independent estimates; false for a deterministic
    /// quadrature (a QMC generator without randomization), which a study renders once.
    /// </summary>
    public bool IsRandomized => Info.IsRandomized(Randomization);

    /// <summary>
    /// True when one render can serve every sample count of the ladder: the generator's points do
    /// not depend on the planned count (a sequence), so the first n samples of a long render are
    /// exactly an n-sample render.
    /// </summary>
    public bool IsProgressive => !Info.NeedsCount;

    /// <summary>The hemisphere strategy as written in files.</summary>
    public string HemisphereName => Hemisphere == HemisphereStrategy.Uniform ? "uniform" : "cosine";

    /// <summary>The light strategy as written in files.</summary>
    public string LightsName => Lights switch { LightStrategy.Bsdf => "bsdf", LightStrategy.Nee => "nee", _ => "mis" };
}
