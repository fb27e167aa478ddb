namespace PathBench.Cli.Tests;

public sealed class BenchCommandTests
{
    [Theory]
    [InlineData("--scene", "nowhere-room", "unknown benchmark scene 'nowhere-room'")]
    [InlineData("--threads", "0", "--threads")]
    [InlineData("--share-of", "halton/owen", "--share-of: no generator/randomization 'halton/owen'")]
    [InlineData("--share-of", "nowhere", "--share-of: no generator/randomization 'nowhere'")]
    public void Bad_options_are_one_line_errors_with_exit_code_2(string option, string value, string expected)
    {
        (int code, string output, string err) = CliRunner.Run("bench", option, value);
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Contains(expected, err, StringComparison.Ordinal);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
    }
}
