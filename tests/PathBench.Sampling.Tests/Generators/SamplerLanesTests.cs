using System.Runtime.Intrinsics;
using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Generators;

/// <summary>
/// The lane form the generators run (<see cref="SamplerLanes"/>): the choice is one of speed only (every form gives the
/// same bits, <c>BatchTests</c>), so what is checked here is that a request never names a form the machine cannot run and
/// that a misspelt request is refused rather than ignored. Project decisions, no outside source.
/// </summary>
public sealed class SamplerLanesTests
{
    [Fact]
    public void Default_is_the_256_bit_form_wherever_the_machine_has_it()
    {
        LaneWidth expected = Vector256.IsHardwareAccelerated ? LaneWidth.Narrow : LaneWidth.Scalar;
        Assert.Equal(expected, SamplerLanes.Choose(null));
        Assert.Equal(expected, SamplerLanes.Choose(""));
        Assert.Equal(expected, SamplerLanes.Choose("narrow"));
    }

    [Fact]
    public void A_request_gets_at_most_what_the_machine_runs()
    {
        Assert.Equal(LaneWidth.Scalar, SamplerLanes.Choose("scalar"));
        LaneWidth wide = Vector512.IsHardwareAccelerated && Vector256.IsHardwareAccelerated ? LaneWidth.Wide
            : Vector256.IsHardwareAccelerated ? LaneWidth.Narrow
            : LaneWidth.Scalar;
        Assert.Equal(wide, SamplerLanes.Choose("wide"));
    }

    [Fact]
    public void The_process_runs_the_form_its_environment_asks_for()
    {
        // tools/test.sh runs this assembly with PATHBENCH_SAMPLER_LANES unset and set to wide: each pass checks its own.
        Assert.Equal(SamplerLanes.Choose(Environment.GetEnvironmentVariable(SamplerLanes.Variable)), Lanes.Best);
        Assert.Equal(Lanes.Best == LaneWidth.Wide, SamplerLanes.Uses512BitVectors);
        Assert.Equal(Lanes.Best.ToString().ToLowerInvariant(), SamplerLanes.Form);
    }

    [Theory]
    [InlineData("Wide")]
    [InlineData("avx512")]
    [InlineData(" narrow")]
    public void A_value_that_names_no_form_is_a_usage_error(string value)
    {
        string? error = SamplerLanes.Check(value);
        Assert.NotNull(error);
        Assert.Contains(SamplerLanes.Variable, error, StringComparison.Ordinal);
        Assert.Contains($"'{value}'", error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(null)]
    [InlineData("")]
    [InlineData("scalar")]
    [InlineData("narrow")]
    [InlineData("wide")]
    public void The_forms_names_are_accepted(string? value) => Assert.Null(SamplerLanes.Check(value));
}
