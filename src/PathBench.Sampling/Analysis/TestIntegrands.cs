namespace PathBench.Sampling.Analysis;

/// <summary>An integrand over [0, 1)² with its exact integral.</summary>
public sealed record TestIntegrand(string Name, string Formula, Func<double, double, double> F, double Exact);

/// <summary>
/// The test integrands of the multi-jittered literature (after Kensler 2013, §5; and
/// Pilleboue et al. 2015 for the rates): two with edges, one with a single axis-aligned
/// discontinuity, two smooth. Exact values from elementary integration.
/// </summary>
public static class TestIntegrands
{
    /// <summary>The five integrands, in report order.</summary>
    public static IReadOnlyList<TestIntegrand> All { get; } =
    [
        // Quarter disk of radius r with r² = 2/π: area πr²/4 = 1/2.
        new("disk", "x² + y² < 2/π", (x, y) => x * x + y * y < 2 / Math.PI ? 1.0 : 0.0, 0.5),
        new("triangle", "y < x", (x, y) => y < x ? 1.0 : 0.0, 0.5),
        new("step", "x < 1/π", (x, _) => x < 1 / Math.PI ? 1.0 : 0.0, 1 / Math.PI),
        // (∫₀¹ e^(−x²) dx)² = (√π/2 · erf 1)².
        new("gaussian", "exp(−x² − y²)", (x, y) => Math.Exp(-x * x - y * y), Math.PI / 4 * Math.Pow(MathNet.Numerics.SpecialFunctions.Erf(1.0), 2)),
        new("bilinear", "x·y", (x, y) => x * y, 0.25),
    ];

    /// <summary>The integrand of that name.</summary>
    public static TestIntegrand Find(string name) =>
        All.FirstOrDefault(i => i.Name == name) ?? throw new ArgumentException($"unknown integrand '{name}'", nameof(name));
}
