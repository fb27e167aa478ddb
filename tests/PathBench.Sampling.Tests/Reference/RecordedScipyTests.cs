using System.Text.Json;
using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Reference;

/// <summary>
/// Against values recorded from Debian's scipy.stats.qmc (version in the file) by
/// tools/scipy/record_qmc_reference.py: these need no Python at test time, and disagreeing
/// with them while the live checks pass means scipy itself changed.
/// </summary>
public sealed class RecordedScipyTests
{
    [Fact]
    public void Points_and_discrepancies_equal_the_recorded_scipy_values()
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Reference", "scipy_qmc_reference.json");
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(path));
        Assert.StartsWith("1.", doc.RootElement.GetProperty("scipy_version").GetString(), StringComparison.Ordinal);
        foreach (JsonElement c in doc.RootElement.GetProperty("cases").EnumerateArray())
        {
            string generator = c.GetProperty("generator").GetString()!;
            int dims = c.GetProperty("dims").GetInt32(), n = c.GetProperty("count").GetInt32();
            bool gray = c.GetProperty("order").GetString() == "gray-code";
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, Randomization.None, false, n, 0), dims);
            var ours = new double[n * dims];
            int k = 0;
            foreach (JsonElement row in c.GetProperty("points").EnumerateArray())
            {
                uint index = gray ? (uint)(k ^ (k >> 1)) : (uint)k;
                int d = 0;
                foreach (JsonElement v in row.EnumerateArray())
                {
                    double mine = s.Sample(0, index, d);
                    Assert.True(Math.Abs(mine - v.GetDouble()) <= 4e-16, $"{generator} point {k} dim {d}: recorded {v.GetDouble()}, ours {mine}");
                    ours[k * dims + d] = v.GetDouble();
                    d++;
                }

                k++;
            }

            Assert.Equal(c.GetProperty("l2_star").GetDouble(), Discrepancy.L2Star(ours, dims), 13);
        }
    }
}
