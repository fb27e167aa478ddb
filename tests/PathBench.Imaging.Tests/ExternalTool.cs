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

    // Checked once per test run: the modules do not come and go while the tests run.
    private static readonly Lazy<ReferenceTools.Result> ScipyProbe = new(() => Run(Python, "python3", ["-c", "import numpy, skimage, scipy"]));
    private static readonly Lazy<ReferenceTools.Result> PillowProbe = new(() => Run(Python, "python3-pil", ["-c", "import numpy, PIL.Image, PIL.PngImagePlugin"]));
    private static readonly Lazy<ReferenceTools.Result> OiioProbe = new(() => Run(Python, "python3-openimageio", ["-c", "import numpy, OpenImageIO"]));

    /// <summary>Runs a Python script from the tools folder copied beside the tests, checking numpy, scikit-image and scipy first.</summary>
    public static ReferenceTools.Result RunPythonScript(string script, params string[] args) =>
        RunScript(script, args, ScipyProbe.Value, "python3", "numpy/skimage/scipy", "python3-numpy python3-skimage python3-scipy", script);

    /// <summary>Runs a Python script from the tools folder copied beside the tests, checking first that Debian's interpreter has Pillow and numpy.</summary>
    public static ReferenceTools.Result RunPillowScript(string script, params string[] args) =>
        RunScript(script, args, PillowProbe.Value, "python3-pil", "PIL/numpy", "python3-pil python3-numpy", script + " " + string.Join(' ', args));

    /// <summary>Runs tools/imaging/oiio_exr.py, checking first that Debian's interpreter has OpenImageIO and numpy.</summary>
    public static ReferenceTools.Result RunOiioScript(string[] args) =>
        RunScript("oiio_exr.py", args, OiioProbe.Value, "python3-openimageio", "OpenImageIO/numpy", "python3-openimageio python3-numpy", "oiio_exr.py " + string.Join(' ', args));

    private static ReferenceTools.Result RunScript(string script, string[] args, ReferenceTools.Result probe, string package, string modules, string packages, string what)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "tools", script);
        Assert.True(File.Exists(path), $"{path} is missing from the test output");
        Assert.True(probe.ExitCode == 0, $"{Python} cannot import {modules}: install the Debian packages {packages} ({probe.Stderr.Trim()})");
        ReferenceTools.Result result = Run(Python, package, [path, .. args], timeoutSeconds: 300);
        Assert.True(result.ExitCode == 0, $"{what} failed (exit {result.ExitCode}): {result.Stderr}");
        return result;
    }
}
