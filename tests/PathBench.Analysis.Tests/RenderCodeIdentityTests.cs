using System.Reflection;
using PathBench.Analysis;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;
using Xunit;

namespace PathBench.Analysis.Tests;

/// <summary>
/// The study cache's code identity: made from the rendering assemblies' content, so a commit that
/// does not touch them keeps a study's renders, and one that does re-renders them.
/// </summary>
public sealed class RenderCodeIdentityTests
{
    [Fact]
    public void Rendering_assemblies_carry_no_commit_so_their_content_alone_decides_the_identity()
    {
        // The SDK appends "+<commit>" to the informational version when it knows the commit; that
        // attribute is part of the assembly's bytes, and so of its deterministic module version id.
        // A portable PDB records the module ids of its references and the PDB's id is written into
        // the assembly, so every PathBench assembly they reference must be free of the commit too.
        var seen = new HashSet<string>();
        var pending = new Queue<Assembly>(RenderCodeIdentity.Assemblies);
        while (pending.TryDequeue(out Assembly? a))
        {
            if (!seen.Add(a.GetName().Name!))
            {
                continue;
            }

            foreach (AssemblyName r in a.GetReferencedAssemblies().Where(r => r.Name!.StartsWith("PathBench.", StringComparison.Ordinal)))
            {
                pending.Enqueue(Assembly.Load(r));
            }

            string? informational = a.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion;
            Assert.NotNull(informational);
            Assert.DoesNotContain('+', informational);
        }

        Assert.Contains("PathBench.Imaging", seen);
    }

    [Fact]
    public void Identity_is_stable_and_names_every_assembly_that_makes_pixels()
    {
        Assert.Matches("^[0-9a-f]{32}$", RenderCodeIdentity.Value);
        Assert.Equal(RenderCodeIdentity.Value, RenderCodeIdentity.Value);
        string[] names = [.. RenderCodeIdentity.Assemblies.Select(a => a.GetName().Name!)];
        Assert.Contains(typeof(PathTracer).Assembly.GetName().Name, names);
        Assert.Contains(typeof(SamplerCatalog).Assembly.GetName().Name, names);
        Assert.Contains(typeof(StudyRunner).Assembly.GetName().Name, names);
    }

    [Fact]
    public void Cache_key_follows_the_code_identity()
    {
        var c = new StudyConfiguration("a", "sobol", Randomization.Owen, false,
            HemisphereStrategy.Cosine, LightStrategy.Mis, null, RussianRoulette: true);
        string k1 = StudyCache.Key("identity-one", new string('0', 64), 8, 8, c, 4, 1, 4);
        string k2 = StudyCache.Key("identity-two", new string('0', 64), 8, 8, c, 4, 1, 4);
        Assert.NotEqual(k1, k2);
        Assert.Equal(k1, StudyCache.Key("identity-one", new string('0', 64), 8, 8, c, 4, 1, 4));
    }
}
