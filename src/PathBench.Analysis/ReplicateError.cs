namespace PathBench.Analysis;

/// <summary>
/// One replicate image's error against a reference, over every pixel and channel.
/// <list type="bullet">
/// <item>MseUncorrected = (1/N)·Σ (x − r)².</item>
/// <item>Mse = MseUncorrected − (1/N)·Σ Var(r): unbiased for the true MSE E[(x − μ)²] when x is
/// independent of the reference, because E[(x − r)²] = E[(x − μ)²] + Var(r) (μ the exact value).</item>
/// <item>RelMse = (1/N)·Σ ((x − r)² − Var(r)) / (r² + ε): the relative MSE of Rousselle, Knaus &amp;
/// Zwicker 2011 (ε = 0.01, from memory, as in <c>compare</c>), corrected in the same way.</item>
/// </list>
/// </summary>
/// <param name="MseUncorrected">Mean squared difference to the reference.</param>
/// <param name="Mse">The same less the reference's mean variance; may be negative when the test image is near exact.</param>
/// <param name="RelMse">Relative MSE, corrected.</param>
public readonly record struct ReplicateError(double MseUncorrected, double Mse, double RelMse)
{
    /// <summary>ε of relMSE, as <c>compare</c> uses it.</summary>
    public const double Epsilon = 0.01;

    /// <summary>Measures <paramref name="image"/> (RGB interleaved, the reference's size) against <paramref name="reference"/>.</summary>
    public static ReplicateError Measure(ReadOnlySpan<float> image, ReferenceImage reference)
    {
        ArgumentNullException.ThrowIfNull(reference);
        if (image.Length != reference.Value.Length)
        {
            throw new ArgumentException(FormattableString.Invariant($"the image holds {image.Length} values, the reference {reference.Value.Length}"), nameof(image));
        }

        double squared = 0, variance = 0, relative = 0;
        double[] r = reference.Value;
        double[] v = reference.VarianceOfMean;
        for (int i = 0; i < image.Length; i++)
        {
            double d = image[i] - r[i];
            squared += d * d;
            variance += v[i];
            relative += ((d * d) - v[i]) / ((r[i] * r[i]) + Epsilon);
        }

        double n = image.Length;
        return new ReplicateError(squared / n, (squared - variance) / n, relative / n);
    }
}
