using PathBench.Rendering.Geometry;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Tests.Materials;

/// <summary>
/// <see cref="Material.EmittedUnnormalized"/> must give exactly what <see cref="Material.Emitted"/> gives
/// for the normalized normal, the form it replaces in the sphere light's cap sample (issue 12): the
/// reference is that form itself, evaluated beside it.
/// </summary>
public sealed class EmissionTests
{
    private static readonly Material Lamp = Material.Diffuse("lamp", Rgb.Black, new Rgb(3, 2, 1));
    private static readonly Material TwoSidedLamp = Material.Diffuse("lamp2", Rgb.Black, new Rgb(3, 2, 1), twoSided: true);
    private static readonly Material Grey = Material.Diffuse("grey", Rgb.Grey(0.5));

    private static void AssertSame(Material m, Vec3d n, Vec3d w)
    {
        Rgb expected = m.Emitted(n.Normalized(), w), actual = m.EmittedUnnormalized(n, w);
        Assert.True(expected == actual, $"{m.Name}: n = {n}, w = {w}: {actual} instead of {expected}");
    }

    [Fact]
    public void Unnormalized_normals_give_the_normalized_result()
    {
        // Random normals of lengths 1e-6 to 1e6 and random unit directions (SampleHash, fixed keys),
        // then directions tilted off the tangent plane by 1e-20 to 1e-3 of |n| on either side, where
        // the sign of n · w is decided by the last bits; and the edges: zero, tiny, huge and NaN normals.
        for (uint i = 0; i < 20_000; i++)
        {
            Vec3d n = Warp.UniformSphere(SampleHash.Uniform(1, i, 0), SampleHash.Uniform(1, i, 1)) * Math.Pow(10, (12 * SampleHash.Uniform(1, i, 2)) - 6);
            Vec3d w = Warp.UniformSphere(SampleHash.Uniform(2, i, 0), SampleHash.Uniform(2, i, 1));
            Vec3d tangent = Vec3d.Cross(n, w).Normalized();
            double tilt = Math.Pow(10, (17 * SampleHash.Uniform(3, i, 0)) - 20) * (i % 2 == 0 ? 1 : -1);
            Vec3d grazing = (Vec3d.Cross(tangent, n).Normalized() + (n.Normalized() * tilt)).Normalized();
            foreach (Material m in new[] { Lamp, TwoSidedLamp, Grey })
            {
                AssertSame(m, n, w);
                AssertSame(m, n, grazing);
                AssertSame(m, n, -grazing);
            }
        }

        var up = new Vec3d(0, 1, 0);
        foreach (Vec3d n in new[] { new Vec3d(0, 0, 0), new Vec3d(0, 1e-300, 0), new Vec3d(0, 1e-60, 0), new Vec3d(0, 1e200, 0), new Vec3d(1e300, 1e300, 0), new Vec3d(double.NaN, 1, 0), new Vec3d(0, double.PositiveInfinity, 0) })
        {
            AssertSame(Lamp, n, up);
            AssertSame(Lamp, n, -up);
            AssertSame(Lamp, n, new Vec3d(1, 0, 0));
        }
    }

    [Fact]
    public void Sphere_light_samples_keep_the_normalized_emission_test()
    {
        // The cap sample (LightSet.SampleCap) of a sphere light seen from outside, from points near
        // and far: its radiance must be what the normalized outward normal at the sampled point gives.
        // The point is rebuilt as the tracer rebuilds it (p + w·dist, the same arithmetic).
        var center = new Vec3d(0.3, 2, -0.4);
        Primitive[] prims = [Primitive.Sphere(center, 0.25, 0), Primitive.Quad(new(-5, 0, -5), new(10, 0, 0), new(0, 0, 10), 1)];
        Scene scene = Scene.Build(prims, [Lamp, Grey], [], new Camera(new(0, 1, 3), new(0, 1, 0), new(0, 1, 0), 45, 8, 6), Rgb.Black);
        int lit = 0;
        for (uint i = 0; i < 20_000; i++)
        {
            double reach = Math.Pow(10, 3 * SampleHash.Uniform(4, i, 3)) * 0.26;
            Vec3d p = center + (Warp.UniformSphere(SampleHash.Uniform(4, i, 0), SampleHash.Uniform(4, i, 1)) * reach);
            LightSample ls = scene.Lights.Sample(p, 0.5, SampleHash.Uniform(5, i, 0), SampleHash.Uniform(5, i, 1));
            Vec3d y = p + (ls.Direction * ls.Distance);
            Assert.Equal(Lamp.Emitted((y - center).Normalized(), -ls.Direction), ls.Radiance);
            lit += ls.Radiance.IsBlack ? 0 : 1;
        }

        Assert.True(lit > 19_000, $"only {lit} of 20000 cap samples were lit");
    }
}
