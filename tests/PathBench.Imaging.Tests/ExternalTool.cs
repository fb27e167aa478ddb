namespace PathBench.Imaging.Tests;

/// <summary>
/// Runs the Debian reference tools the live cross-checks need (/usr/bin/python3 with
/// python3-numpy and python3-skimage; exrheader and the other OpenEXR tools from the openexr
/// package). A missing tool fails the test with the package to install: CI installs them, so a
/// skip would hide a broken check.
/// </summary>
internal static class ExternalTool
{
    /// <summary>Debian's own interpreter; the first python3 on PATH may be another one without skimage.</summary>
    public static string Python => ReferenceTools.Python;

    /// <summary>Runs a program (absolute path or a name under /usr/bin) and waits at most <paramref name="timeoutSeconds"/>.</summary>
    public static ReferenceTools.Result Run(string program, string debianPackage, IEnumerable<string> args, int timeoutSeconds = 300) =>
        ReferenceTools.Run(program, debianPackage, args, timeoutSeconds: timeoutSeconds);

    /// <summary>Runs a Python script from the tools folder copied beside the tests, checking the modules first.</summary>
    public static ReferenceTools.Result RunPythonScript(string script, params string[] args)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "tools", script);
        Assert.True(File.Exists(path), $"{path} is missing from the test output");
        ReferenceTools.Result probe = Run(Python, "python3", ["-c", "import numpy, skimage, scipy"]);
        Assert.True(
            probe.ExitCode == 0,
            $"{Python} cannot import numpy/skimage/scipy: install the Debian packages python3-numpy python3-skimage python3-scipy ({probe.Stderr.Trim()})");
        ReferenceTools.Result result = Run(Python, "python3", [path, .. args], timeoutSeconds: 300);
        Assert.True(result.ExitCode == 0, $"{script} failed (exit {result.ExitCode}): {result.Stderr}");
        return result;
    }

    // Checked once per test run: the modules do not come and go while the tests run.
    private static readonly Lazy<ReferenceTools.Result> OiioProbe = new(() => Run(Python, "python3-openimageio", ["-c", "import numpy, OpenImageIO"]));

    /// <summary>Runs tools/imaging/oiio_exr.py, checking first that Debian's interpreter has OpenImageIO and numpy.</summary>
    public static ReferenceTools.Result RunOiioScript(string[] args)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "tools", "oiio_exr.py");
        Assert.True(File.Exists(path), $"{path} is missing from the test output");
        ReferenceTools.Result probe = OiioProbe.Value;
        Assert.True(
            probe.ExitCode == 0,
            $"{Python} cannot import OpenImageIO/numpy: install the Debian packages python3-openimageio python3-numpy ({probe.Stderr.Trim()})");
        ReferenceTools.Result result = Run(Python, "python3-openimageio", [path, .. args], timeoutSeconds: 300);
        Assert.True(result.ExitCode == 0, $"oiio_exr.py {string.Join(' ', args)} failed (exit {result.ExitCode}): {result.Stderr}");
        return result;
    }
}
