namespace PathBench.Sampling.Generators;

/// <summary>
/// One generator: its command-line name, published source, what it needs, which randomizations mean
/// something for it, and the one used when none is asked for (the usual randomized form of the
/// generator, so that a plain render is an unbiased estimate).
/// </summary>
public sealed record GeneratorInfo(
    string Name,
    string Source,
    bool NeedsCount,
    int MaxDimensions,
    IReadOnlyList<Randomization> Randomizations,
    Randomization DefaultRandomization,
    string WhyOthersRefused,
    Func<SamplerSpec, PointSampler> Create)
{
    /// <summary>
    /// The most points per pixel the generator defines, whatever the planned count: a progressive
    /// sequence built into finite tables stops at their length. <c>int.MaxValue</c> when unlimited.
    /// </summary>
    public int MaxPoints { get; init; } = int.MaxValue;

    /// <summary>
    /// Where a generator that is not built in comes from, as <c>pathbench samplers</c> shows it
    /// (<c>plug-in PATH</c>, <c>point file PATH</c>); null for the built-ins. Set by PathBench, not by a plug-in.
    /// </summary>
    public string? Origin { get; init; }

    /// <summary>
    /// What identifies the points of a generator that is not built in beyond its name (a point file's
    /// SHA-256, a plug-in assembly's name and module version id), recorded with renders so resume, merge
    /// and the study cache refuse points that changed; null for the built-ins, whose points the PathBench
    /// version fixes. Set by PathBench, not by a plug-in.
    /// </summary>
    public string? Provenance { get; init; }

    /// <summary>
    /// Why neighbouring pixels' points are not independent by design (the blue-noise sampler chooses
    /// them together, from a tile that repeats); null for generators whose pixels are decorrelated.
    /// </summary>
    public string? PixelsCorrelatedBecause { get; init; }

    /// <summary>True for generators whose points are random with no randomization on top (random, jittered, Latin hypercube, multi-jittered).</summary>
    public bool RandomByConstruction => Randomizations.Count == 1 && Randomizations[0] == Randomization.None;

    /// <summary>
    /// True when the sampler built with <paramref name="randomize"/> gives random points, so that a
    /// render with it is an unbiased estimate; false for a deterministic set (the same points in
    /// every pixel: a quadrature rule, biased at any finite count).
    /// </summary>
    public bool IsRandomized(Randomization randomize) => RandomByConstruction || randomize != Randomization.None;
}

/// <summary>Raised when a sampler cannot be built from what was asked; the message is one line for the user.</summary>
public sealed class SamplerSpecException : Exception
{
    /// <summary>Creates the exception.</summary>
    public SamplerSpecException(string message) : base(message) { }

    /// <summary>Creates an empty exception.</summary>
    public SamplerSpecException() { }

    /// <summary>Creates the exception with a cause.</summary>
    public SamplerSpecException(string message, Exception inner) : base(message, inner) { }
}

/// <summary>The registry of generators, and the one place that validates a <see cref="SamplerSpec"/>.</summary>
/// <remarks>
/// The built-ins are fixed. Plug-in generators and point files are seen only inside a scope
/// (<see cref="OpenScope"/>): the command line opens one per invocation and adds what <c>--plugin</c>
/// names, so two invocations in one process (the tests) never see each other's plug-ins. The scope
/// flows with the execution context into tasks and threads started inside it.
/// </remarks>
public static class SamplerCatalog
{
    /// <summary>The prefix of a point-file generator name, <c>file:POINTS.csv</c>.</summary>
    public const string FilePrefix = "file:";

    private static readonly AsyncLocal<CatalogScope?> Ambient = new();

    private const string RandomByConstruction =
        "it is random by construction (its seed drives its jitter and shuffles); a further shift or scramble adds nothing";

    private static readonly GeneratorInfo[] Table =
    [
        new("random", "independent uniform; counter-based hash, SplitMix64 finaliser (Steele, Lea & Flood 2014)",
            false, int.MaxValue, [Randomization.None], Randomization.None,
            "independent uniform points are already as random as they get", s => new RandomSampler(s)),
        new("jittered", "stratified, one jittered point per cell of a near-square grid, padded per 2-D pair",
            true, int.MaxValue, [Randomization.None], Randomization.None, RandomByConstruction, s => new JitteredSampler(s)),
        new("latin-hypercube", "Latin hypercube; McKay, Beckman & Conover 1979, Technometrics 21(2)",
            true, int.MaxValue, [Randomization.None], Randomization.None, RandomByConstruction, s => new LatinHypercubeSampler(s)),
        new("multi-jittered", "correlated multi-jittered; Kensler 2013, Pixar Technical Memo 13-01",
            true, int.MaxValue, [Randomization.None], Randomization.None, RandomByConstruction, s => new MultiJitteredSampler(s)),
        new("halton", "radical inverse in the first primes; Halton 1960, Numer. Math. 2",
            false, Sequences.RadicalInverse.PrimeCount, [Randomization.None, Randomization.CranleyPatterson, Randomization.DigitPermutation], Randomization.DigitPermutation,
            "Halton is not a base-2 digital sequence beyond its first dimension; use digit-permutation",
            s => s.Randomize == Randomization.DigitPermutation ? new PermutedHaltonSampler(s) : new HaltonSampler(s)),
        new("hammersley", "(i/n, radical inverses); Hammersley & Handscomb 1964, Monte Carlo Methods",
            true, Sequences.RadicalInverse.PrimeCount + 1, [Randomization.None, Randomization.CranleyPatterson], Randomization.CranleyPatterson,
            "its first coordinate i/n has no digit structure to shift or scramble", s => new HammersleySampler(s)),
        new("sobol", "base-2 digital sequence, Sobol 1967; direction numbers of Joe & Kuo 2008, SIAM J. Sci. Comput. 30(5)",
            false, 21201, [Randomization.None, Randomization.CranleyPatterson, Randomization.DigitalShift, Randomization.Owen], Randomization.Owen,
            "digit permutations in base 2 are the digital shift; use digital-shift", s => new SobolSampler(s)),
        new("bluenoise", "Owen-scrambled Sobol whose per-pixel scramble seeds and sequence blocks come from a 64x64 tile (repeating every 64 " +
            "pixels) arranged so that errors form a blue noise in screen space, with ranking tables optimised for 1, 2, 4, 8 and 16 spp " +
            "(a planned count uses the table of the largest power of two not above it, 16 above that, so it is not progressive: a study " +
            "renders each rung); Heitz, Belcour, Ostromoukhov, Coeurjolly & Iehl 2019, 'A low-discrepancy sampler that distributes Monte " +
            "Carlo errors as a blue noise in screen space' (SIGGRAPH Talks), seeds placed by swapping as in Heitz & Belcour 2019, Comput. " +
            "Graph. Forum 38(4) (EGSR); tables made by tools/PathBench.BlueNoise, optimised pair of dimensions by pair on 2-D steps: " +
            "strongest at 1 spp, weaker from 2 spp on in path-traced images, where a path couples the pairs",
            true, 21201, [Randomization.None, Randomization.Owen], Randomization.Owen,
            "the tile is optimised for errors seen through an Owen scramble common to all pixels: a Cranley-Patterson shift moves points " +
            "across the dyadic cells that relation lives in, and a digital shift alone moves each pixel's one fixed scramble rigidly, " +
            "so smooth integrands lose Owen's rate; digit permutations in base 2 are the digital shift",
            s => new BlueNoiseSobolSampler(s))
        {
            PixelsCorrelatedBecause = "neighbouring pixels' seeds are chosen together so that their errors cancel (Heitz et al. 2019), from a tile that repeats every 64 pixels",
        },
        Pmj("pmj02", "progressive multi-jittered (0,2): every power-of-2 prefix a (0,m,2)-net in base 2", Sequences.PmjVariant.ProgressiveMultiJittered02),
        Pmj("pmj", "progressive multi-jittered: stratified in 2-D squares and both 1-D projections", Sequences.PmjVariant.ProgressiveMultiJittered),
        Pmj("pj", "progressive jittered: stratified in 2-D squares", Sequences.PmjVariant.ProgressiveJittered),
        new("lattice", "rank-1 lattice rule: the Fibonacci lattice (1, F(m-1)) when n = F(m), otherwise a component-by-component vector " +
            "(Sloan & Reztsov 2002, Math. Comp. 71; weighted P2 criterion of Nuyens & Cools 2006, Math. Comp. 75)",
            true, LatticeSampler.Dimensions, [Randomization.None, Randomization.CranleyPatterson], Randomization.CranleyPatterson,
            "a lattice is a group under addition mod 1, not a digital net: only a toroidal shift maps it onto a copy of itself", s => new LatticeSampler(s))
        {
            MaxPoints = LatticeSampler.MaxPoints,
        },
    ];

    // Owen by default: a digital shift moves one fixed table rigidly, so replicates see the same
    // geometry and smooth integrands converge at the QMC rate only; the nested scramble
    // re-randomizes every level, which is what Owen (1997) needs for N^-3/2.
    private static GeneratorInfo Pmj(string name, string what, Sequences.PmjVariant variant) =>
        new(name, what + "; Christensen, Kensler & Kilpatrick 2018, Comput. Graph. Forum 37(4) (EGSR)",
            false, int.MaxValue, [Randomization.None, Randomization.DigitalShift, Randomization.Owen], Randomization.Owen,
            "a Cranley-Patterson shift moves points across dyadic cell edges and loses the stratification; digit permutations in base 2 are the digital shift",
            s => new ProgressiveMultiJitteredSampler(s, variant))
        {
            MaxPoints = ProgressiveMultiJitteredSampler.MaxPoints,
        };

    /// <summary>The built-in generators, in the order <c>pathbench samplers</c> lists them.</summary>
    public static IReadOnlyList<GeneratorInfo> BuiltIn => Table;

    /// <summary>Every generator: the built-ins, then the plug-ins added to the current scope.</summary>
    public static IReadOnlyList<GeneratorInfo> Generators =>
        Ambient.Value is { } scope && scope.Plugins.Count > 0 ? [.. Table, .. scope.Plugins] : Table;

    /// <summary>
    /// Opens a scope in which <see cref="Add"/> registers generators and point files are read once;
    /// disposing it restores the scope that was current before.
    /// </summary>
    public static IDisposable OpenScope()
    {
        var scope = new CatalogScope(Ambient.Value);
        Ambient.Value = scope;
        return scope;
    }

    /// <summary>
    /// Adds generators to the current scope (<see cref="OpenScope"/>), each marked with
    /// <paramref name="origin"/>; a name that clashes with a built-in, an added generator or the
    /// <c>file:</c> prefix is refused, naming the origin.
    /// </summary>
    public static void Add(string origin, string provenance, IEnumerable<GeneratorInfo> generators)
    {
        ArgumentNullException.ThrowIfNull(generators);
        CatalogScope scope = Ambient.Value ?? throw new InvalidOperationException("generators are added inside a catalog scope; open one first");
        var added = new List<GeneratorInfo>();
        foreach (GeneratorInfo g in generators)
        {
            if (g is null || g.Create is null || string.IsNullOrWhiteSpace(g.Name))
            {
                throw new SamplerSpecException($"{origin}: a generator has no name or no factory");
            }

            if (g.Name.StartsWith(FilePrefix, StringComparison.Ordinal) || g.Name.Any(ch => char.IsWhiteSpace(ch) || char.IsControl(ch)))
            {
                throw new SamplerSpecException($"{origin}: generator name '{g.Name}' is not allowed (no spaces, and '{FilePrefix}' names point files)");
            }

            if (Table.Any(t => t.Name == g.Name))
            {
                throw new SamplerSpecException($"{origin}: generator name '{g.Name}' clashes with the built-in generator of that name; rename it in the plug-in");
            }

            if (scope.Plugins.Concat(added).FirstOrDefault(t => t.Name == g.Name) is { } other)
            {
                throw new SamplerSpecException($"{origin}: generator name '{g.Name}' clashes with the one from {other.Origin}");
            }

            if (g.Randomizations is null || g.Randomizations.Count == 0 || !g.Randomizations.Contains(g.DefaultRandomization) || g.MaxDimensions < 1 || g.MaxPoints < 1)
            {
                throw new SamplerSpecException($"{origin}: generator '{g.Name}' must list its randomizations, including its default, and allow at least one dimension and one point");
            }

            added.Add(g with { Origin = origin, Provenance = provenance });
        }

        if (added.Count == 0)
        {
            throw new SamplerSpecException($"{origin}: the plug-in lists no generators");
        }

        scope.Plugins.AddRange(added);
    }

    /// <summary>
    /// The generator of that name: a built-in, a plug-in of the current scope, or <c>file:PATH</c> (a
    /// point file, read once per scope); otherwise an error listing the known names.
    /// </summary>
    public static GeneratorInfo Find(string name)
    {
        ArgumentNullException.ThrowIfNull(name);
        foreach (GeneratorInfo g in Generators)
        {
            if (string.Equals(g.Name, name, StringComparison.Ordinal))
            {
                return g;
            }
        }

        if (name.StartsWith(FilePrefix, StringComparison.Ordinal))
        {
            return Ambient.Value is { } scope
                ? scope.PointFile(name)
                : PointFile.Generator(name);
        }

        throw new SamplerSpecException($"unknown generator '{name}'; known: {string.Join(", ", Generators.Select(t => t.Name))}, or {FilePrefix}POINTS.csv for a point file (a plug-in's generators need --plugin PATH.dll on the command line)");
    }

    private sealed class CatalogScope(CatalogScope? outer) : IDisposable
    {
        private readonly Dictionary<string, GeneratorInfo> _files = new(StringComparer.Ordinal);

        public List<GeneratorInfo> Plugins { get; } = [.. outer?.Plugins ?? []];

        public GeneratorInfo PointFile(string name)
        {
            lock (_files)
            {
                if (!_files.TryGetValue(name, out GeneratorInfo? g))
                {
                    g = global::PathBench.Sampling.Generators.PointFile.Generator(name);
                    _files.Add(name, g);
                }

                return g;
            }
        }

        public void Dispose() => Ambient.Value = outer;
    }

    /// <summary>
    /// Every meaningful generator × randomization, as the command line writes them (each also
    /// with <c>+antithetic</c> when <paramref name="withAntithetic"/>), that gives random points:
    /// the combinations whose estimates must be unbiased.
    /// </summary>
    public static IEnumerable<(string Generator, string Randomize)> RandomizedCombinations(bool withAntithetic)
    {
        foreach (GeneratorInfo g in Generators)
        {
            foreach (Randomization r in g.Randomizations.Where(g.IsRandomized))
            {
                string name = RandomizationNames.NameOf(r);
                yield return (g.Name, name);
                if (withAntithetic)
                {
                    yield return (g.Name, r == Randomization.None ? RandomizationNames.Antithetic : name + "+" + RandomizationNames.Antithetic);
                }
            }
        }
    }

    /// <summary>Parses <c>none</c>, <c>owen</c>, <c>antithetic</c>, <c>owen+antithetic</c> and so on.</summary>
    public static (Randomization Kind, bool Antithetic) ParseRandomization(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        bool antithetic = false;
        Randomization kind = Randomization.None;
        bool haveKind = false;
        foreach (string part in text.Split('+'))
        {
            if (part == RandomizationNames.Antithetic && !antithetic)
            {
                antithetic = true;
            }
            else if (!haveKind && RandomizationNames.TryParse(part, out kind))
            {
                haveKind = true;
            }
            else
            {
                string known = string.Join(", ", RandomizationNames.All.Select(r => r.Name)) + ", " + RandomizationNames.Antithetic;
                throw new SamplerSpecException($"unknown randomization '{text}'; known: {known}, combined as R+antithetic");
            }
        }

        return (kind, antithetic);
    }

    /// <summary>Validates the spec and builds the sampler; <paramref name="dims"/> is how many dimensions the caller will ask for.</summary>
    public static PointSampler Create(SamplerSpec spec, int dims)
    {
        ArgumentNullException.ThrowIfNull(spec);
        GeneratorInfo g = Find(spec.Generator);
        if (!g.Randomizations.Contains(spec.Randomize))
        {
            throw new SamplerSpecException(
                $"randomization '{RandomizationNames.NameOf(spec.Randomize)}' is meaningless for '{g.Name}': {g.WhyOthersRefused} " +
                $"(it takes: {string.Join(", ", g.Randomizations.Select(RandomizationNames.NameOf))}, each optionally +antithetic)");
        }

        if (spec.Count < 1)
        {
            throw new SamplerSpecException($"count must be at least 1, got {spec.Count}");
        }

        if (spec.Count > g.MaxPoints)
        {
            throw new SamplerSpecException($"'{g.Name}' defines at most {g.MaxPoints} points per pixel, asked for {spec.Count}");
        }

        if (dims < 1)
        {
            throw new SamplerSpecException($"dims must be at least 1, got {dims}");
        }

        if (dims > g.MaxDimensions)
        {
            throw new SamplerSpecException($"'{g.Name}' defines at most {g.MaxDimensions} dimensions, asked for {dims}");
        }

        if (!spec.Antithetic)
        {
            return Build(g, spec);
        }

        PointSampler inner = Build(g, spec with { Antithetic = false, Count = (spec.Count + 1) / 2 });
        return new AntitheticSampler(spec, inner);
    }

    // A plug-in's factory is code PathBench does not know: its failure is the plug-in's, reported as such.
    private static PointSampler Build(GeneratorInfo g, SamplerSpec spec)
    {
        if (g.Origin is null)
        {
            return g.Create(spec);
        }

        try
        {
            PointSampler sampler = g.Create(spec) ?? throw new SamplerSpecException($"{g.Origin}: generator '{g.Name}' built no sampler (null)");
            return new PluginSampler(sampler, g);
        }
        catch (Exception e) when (e is not SamplerSpecException and not OutOfMemoryException)
        {
            throw new SamplerSpecException($"{g.Origin}: generator '{g.Name}' failed to build its sampler: {e.GetType().Name}: {e.Message.ReplaceLineEndings(" ")}", e);
        }
    }
}
