using MathNet.Numerics.Distributions;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Sampling.Analysis;

/// <summary>
/// A warp to be tested: the map under test, its claimed density, and a parameterization
/// of its domain by the unit square in which equal-size bins are equal measure (solid
/// angle, area), with the constant measure of the whole domain.
/// </summary>
/// <param name="Name">For reports.</param>
/// <param name="Sample">The warp under test, returning its output in bin coordinates (a, b) ∈ [0, 1)², or NaN for a rejected sample.</param>
/// <param name="Density">The claimed density at the domain point with bin coordinates (a, b), per unit of the domain's measure.</param>
/// <param name="Measure">The domain's measure per unit area of (a, b): 2π for the hemisphere in (cos θ, φ/2π).</param>
public sealed record WarpCase(string Name, Func<double, double, (double A, double B)> Sample, Func<double, double, double> Density, double Measure);

/// <summary>The outcome of one χ² test.</summary>
public sealed record ChiSquareResult(string Name, double Statistic, int DegreesOfFreedom, double PValue, int PooledBins);

/// <summary>
/// Pearson's χ² goodness-of-fit test of a warp against its density: N independent uniform
/// inputs, binned in a grid of equal-measure bins; expected counts from the density integrated
/// over each bin (midpoint rule on a 16 × 16 sub-grid per bin, exact for
/// densities linear in the bin coordinates); bins expecting fewer than 5 pooled, smallest first
/// (the usual rule of thumb of Cochran 1954, "Some methods for strengthening the common χ² tests").
/// The p-value is the upper tail of the χ² distribution (MathNet.Numerics).
/// </summary>
public static class ChiSquareWarpTest
{
    /// <summary>The minimum expected count per (pooled) bin.</summary>
    public const double MinExpected = 5.0;

    /// <summary>Runs the test with <paramref name="samples"/> inputs from the counter-based hash seeded by <paramref name="seed"/>.</summary>
    public static ChiSquareResult Run(WarpCase warp, int samples, int binsA, int binsB, ulong seed)
    {
        ArgumentNullException.ThrowIfNull(warp);
        // One extra bin, last, for samples the warp rejects (NaN coordinates: a BSDF sample
        // below the horizon); it expects whatever mass the density leaves outside the domain.
        var observed = new double[binsA * binsB + 1];
        ulong key = SampleHash.Mix64(seed);
        for (int i = 0; i < samples; i++)
        {
            (double a, double b) = warp.Sample(SampleHash.Uniform(key, (uint)i, 0), SampleHash.Uniform(key, (uint)i, 1));
            if (double.IsNaN(a) || double.IsNaN(b))
            {
                observed[binsA * binsB]++;
                continue;
            }

            int ia = Math.Clamp((int)(a * binsA), 0, binsA - 1);
            int ib = Math.Clamp((int)(b * binsB), 0, binsB - 1);
            observed[ia * binsB + ib]++;
        }

        var expected = new double[binsA * binsB + 1];
        const int sub = 16;
        double cellA = 1.0 / binsA, cellB = 1.0 / binsB;
        for (int ia = 0; ia < binsA; ia++)
        {
            for (int ib = 0; ib < binsB; ib++)
            {
                double sum = 0;
                for (int sa = 0; sa < sub; sa++)
                {
                    for (int sb = 0; sb < sub; sb++)
                    {
                        sum += warp.Density((ia + (sa + 0.5) / sub) * cellA, (ib + (sb + 0.5) / sub) * cellB);
                    }
                }

                expected[ia * binsB + ib] = samples * warp.Measure * sum / (sub * sub) * cellA * cellB;
            }
        }

        expected[binsA * binsB] = Math.Max(0, samples - expected.Take(binsA * binsB).Sum());
        return Evaluate(warp.Name, observed, expected);
    }

    /// <summary>The χ² statistic and p-value of observed against expected counts, pooling low-expectation bins.</summary>
    public static ChiSquareResult Evaluate(string name, IReadOnlyList<double> observed, IReadOnlyList<double> expected)
    {
        ArgumentNullException.ThrowIfNull(observed);
        ArgumentNullException.ThrowIfNull(expected);
        int[] order = Enumerable.Range(0, expected.Count).OrderBy(i => expected[i]).ThenBy(i => i).ToArray();
        double stat = 0;
        int bins = 0, pooled = 0;
        double poolO = 0, poolE = 0;
        foreach (int i in order)
        {
            if (expected[i] < MinExpected || poolE > 0)
            {
                // Pool from the smallest expectation up until the pool itself is large enough.
                poolO += observed[i];
                poolE += expected[i];
                pooled++;
                if (poolE >= MinExpected)
                {
                    stat += Term(poolO, poolE);
                    bins++;
                    poolO = poolE = 0;
                }

                continue;
            }

            stat += Term(observed[i], expected[i]);
            bins++;
        }

        if (poolE > 0 || poolO > 0)
        {
            // A remainder too small to stand alone: observations where none are expected are
            // a failure in themselves, so they are kept as a bin of their own.
            stat += poolE > 0 ? Term(poolO, poolE) : double.PositiveInfinity;
            bins++;
        }

        int dof = Math.Max(1, bins - 1);
        double p = double.IsPositiveInfinity(stat) ? 0.0 : 1.0 - ChiSquared.CDF(dof, stat);
        return new ChiSquareResult(name, stat, dof, p, pooled);
    }

    /// <summary>The per-test significance that keeps the family-wise rate at <paramref name="alpha"/> over <paramref name="tests"/> independent tests (Šidák 1967).</summary>
    public static double SidakLevel(double alpha, int tests) => 1.0 - Math.Pow(1.0 - alpha, 1.0 / tests);

    private static double Term(double o, double e) => (o - e) * (o - e) / e;

    /// <summary>The warps of <see cref="Warp"/>, each with its own density: every one of these should pass.</summary>
    public static IReadOnlyList<WarpCase> StandardCases(double coneCosThetaMax = 0.8)
    {
        const double TwoPi = 2 * Math.PI;
        double c = coneCosThetaMax;
        return
        [
            new("uniform-hemisphere", (u, v) => HemisphereBin(Warp.UniformHemisphere(u, v)),
                (a, b) => Warp.UniformHemispherePdf(HemisphereDir(a, b)), TwoPi),
            new("cosine-hemisphere", (u, v) => HemisphereBin(Warp.CosineHemisphere(u, v)),
                (a, b) => Warp.CosineHemispherePdf(HemisphereDir(a, b)), TwoPi),
            new("uniform-sphere", (u, v) => SphereBin(Warp.UniformSphere(u, v)),
                (a, b) => Warp.UniformSpherePdf(default), 2 * TwoPi),
            new("concentric-disk", (u, v) => DiskBin(Warp.ConcentricDisk(u, v)),
                (a, b) => Warp.ConcentricDiskPdf(Math.Sqrt(a) * Math.Cos(TwoPi * b), Math.Sqrt(a) * Math.Sin(TwoPi * b)), Math.PI),
            // Triangle bins in (w, r) = (b1 + b2, b2 / (b1 + b2)): smooth, and dA = w dw dr.
            new("uniform-triangle", (u, v) => TriangleBin(Warp.UniformTriangle(u, v)),
                (a, b) => Warp.UniformTrianglePdf(a * (1 - b), a * b) * a, 1.0),
            new("uniform-cone", (u, v) => ConeBin(Warp.UniformCone(u, v, c), c),
                (a, b) => Warp.UniformConePdf(new Vec3d(0, 0, 1 - a * (1 - c)), c), TwoPi * (1 - c)),
        ];
    }

    /// <summary>Bin coordinates of a hemisphere direction: (cos θ, φ / 2π), equal solid angle per equal area.</summary>
    public static (double A, double B) HemisphereBin(Vec3d w) => (w.Z, Azimuth(w));

    /// <summary>The hemisphere direction at bin coordinates (cos θ, φ / 2π).</summary>
    public static Vec3d HemisphereDir(double a, double b)
    {
        double r = Math.Sqrt(Math.Max(0, 1 - a * a));
        return new Vec3d(r * Math.Cos(2 * Math.PI * b), r * Math.Sin(2 * Math.PI * b), a);
    }

    private static (double, double) SphereBin(Vec3d w) => ((w.Z + 1) / 2, Azimuth(w));

    /// <summary>Bin coordinates of a direction in the cone cos θ ≥ <paramref name="c"/>: ((1 − cos θ)/(1 − c), φ / 2π).</summary>
    public static (double A, double B) ConeBin(Vec3d w, double c) => ((1 - w.Z) / (1 - c), Azimuth(w));

    private static (double, double) DiskBin((double X, double Y) p) =>
        (p.X * p.X + p.Y * p.Y, Azimuth(new Vec3d(p.X, p.Y, 0)));

    private static (double, double) TriangleBin((double B1, double B2) p)
    {
        double w = p.B1 + p.B2;
        return (w, w > 0 ? p.B2 / w : 0);
    }

    private static double Azimuth(Vec3d w)
    {
        double phi = Math.Atan2(w.Y, w.X);
        return (phi < 0 ? phi + 2 * Math.PI : phi) / (2 * Math.PI);
    }
}
