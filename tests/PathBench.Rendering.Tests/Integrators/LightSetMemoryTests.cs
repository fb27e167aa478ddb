using System.Runtime.CompilerServices;
using PathBench.Rendering.Geometry;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Tests.Integrators;

public sealed class LightSetMemoryTests
{
    [Fact]
    public void Light_set_holds_no_copy_of_the_unlit_primitives()
    {
        // Issue 12: the light set kept a copy of every primitive record (about 130 MB on the
        // 1 M-triangle benchmark room). Now it holds one int per primitive (which light it is)
        // and copies of the lights alone: 20 000 unlit triangles and one emitting quad must cost
        // at most 4 bytes each plus one record and the per-light tables (common practice bound:
        // the arrays' element sizes, nothing measured).
        const int N = 20_000;
        var prims = new Primitive[N + 1];
        for (int i = 0; i < N; i++)
        {
            var a = new Vec3d(i % 100, i / 100, -5);
            prims[i] = Primitive.Triangle(a, a + new Vec3d(1, 0, 0), a + new Vec3d(0, 1, 0), 0, -1);
        }

        prims[N] = Primitive.Quad(new(0, 10, 0), new(1, 0, 0), new(0, 0, 1), 1);
        Material[] materials = [Material.Diffuse("grey", Rgb.Grey(0.5)), Material.Diffuse("lamp", Rgb.Black, Rgb.Grey(5))];
        Scene scene = Scene.Build(prims, materials, [], new Camera(new(0, 0, 0), new(0, 0, -1), new(0, 1, 0), 60, 8, 6), Rgb.Black);
        Assert.Equal(1, scene.Lights.AreaLightCount);
        long bound = ((N + 1) * sizeof(int)) + Unsafe.SizeOf<Primitive>() + (2 * sizeof(double)) + sizeof(int);
        Assert.Equal(bound, scene.Lights.Bytes);
        Assert.True(scene.Lights.Bytes < (long)N * Unsafe.SizeOf<Primitive>() / 20);
    }
}
