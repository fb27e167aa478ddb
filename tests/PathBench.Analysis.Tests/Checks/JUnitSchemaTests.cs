using System.Security.Cryptography;
using System.Text;
using System.Xml;
using System.Xml.Schema;
using PathBench.Analysis.Checks;

namespace PathBench.Analysis.Tests.Checks;

/// <summary>
/// The JUnit XML of <c>pathbench check --junit</c> against the schema CI tools commonly validate the Ant
/// JUnit report format with: Windy Road's JUnit.xsd ("JUnit test result schema for the Apache Ant JUnit
/// and JUnitReport tasks", github.com/windyroad/JUnit-Schema at commit cfa434d, Apache License 2.0),
/// vendored as Checks/JUnit.xsd with a provenance comment. Two validators: .NET's
/// <see cref="XmlSchemaSet"/> and, independently, libxml2 through Debian's python3-lxml
/// (<c>etree.XMLSchema</c>), whose verdicts are first checked on a known-good and a known-bad document.
/// </summary>
public sealed class JUnitSchemaTests
{
    private static string SchemaPath => Path.Combine(AppContext.BaseDirectory, "Checks", "JUnit.xsd");

    /// <summary>A minimal document the schema's text allows (written by hand from the XSD).</summary>
    private const string KnownGood = """
        <?xml version="1.0" encoding="UTF-8"?>
        <testsuites>
          <testsuite name="s" timestamp="2026-01-02T03:04:05" hostname="localhost" tests="1" failures="1" errors="0" time="0.5" package="p" id="0">
            <properties><property name="k" value="v"/></properties>
            <testcase name="t" classname="c" time="0.5"><failure type="AssertionFailed" message="m">detail</failure></testcase>
            <system-out/>
            <system-err/>
          </testsuite>
        </testsuites>
        """;

    /// <summary>The layout the writer had before: output inside a passing testcase, no timestamp, hostname, properties or system-err.</summary>
    private const string KnownBad = """
        <?xml version="1.0" encoding="UTF-8"?>
        <testsuites>
          <testsuite name="s" tests="1" failures="0" errors="0" skipped="0" time="0.5">
            <testcase classname="c" name="t" time="0.5"><system-out>measured 1</system-out></testcase>
          </testsuite>
        </testsuites>
        """;

    [Fact]
    public void The_vendored_schema_is_the_published_file_plus_its_provenance_comment()
    {
        // Taking the comment out must give back the published bytes (SHA-256 recorded in the comment).
        string text = File.ReadAllText(SchemaPath, Encoding.UTF8);
        int start = text.IndexOf("<!--\n  Provenance", StringComparison.Ordinal), end = text.IndexOf("-->\n", start, StringComparison.Ordinal) + 4;
        byte[] original = Encoding.UTF8.GetBytes(text[..start] + text[end..]);
        Assert.Equal("147ff89ef34a82f9a1b2951e7cad251b98c9a7a48a0e0c8e44937141791f57a8", Convert.ToHexStringLower(SHA256.HashData(original)));
        Assert.Contains("Apache License", File.ReadAllText(SchemaPath + ".LICENSE"), StringComparison.Ordinal);
    }

    [Fact]
    public void Our_junit_validates_with_dotnet_and_with_libxml2_and_the_old_layout_did_not()
    {
        using var temp = new TempFolder();
        File.WriteAllText(temp.File("good.xml"), KnownGood);
        File.WriteAllText(temp.File("bad.xml"), KnownBad);
        using (FileStream f = File.Create(temp.File("ours.xml")))
        {
            CheckRun.WriteJUnit(f, Result());
        }

        // .NET: the known documents first, so that a validator that accepts everything cannot pass the test.
        Assert.Empty(DotNetErrors(temp.File("good.xml")));
        Assert.NotEmpty(DotNetErrors(temp.File("bad.xml")));
        Assert.Empty(DotNetErrors(temp.File("ours.xml")));

        // libxml2 (python3-lxml): one line per document, "valid" or "invalid: errors"; exit status checked.
        const string code = """
            import sys
            from lxml import etree
            schema = etree.XMLSchema(etree.parse(sys.argv[1]))
            for path in sys.argv[2:]:
                ok = schema.validate(etree.parse(path))
                print("valid" if ok else "invalid: " + "; ".join(str(e) for e in schema.error_log))
            """;
        ReferenceTools.Result r = ReferenceTools.Run(ReferenceTools.Python, "python3-lxml", ["-c", code, SchemaPath, temp.File("good.xml"), temp.File("bad.xml"), temp.File("ours.xml")]);
        Assert.True(r.ExitCode == 0, r.Stderr);
        string[] lines = r.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(3, lines.Length);
        Assert.Equal("valid", lines[0]);
        Assert.StartsWith("invalid: ", lines[1], StringComparison.Ordinal);
        Assert.True(lines[2] == "valid", lines[2]);
    }

    /// <summary>A result with a passing, a failing and an errored assertion, and text that needs escaping.</summary>
    private static CheckResult Result()
    {
        var suite = new CheckSuite("/tmp/suite <α>.yaml", null, []);
        Verdict[] verdicts =
        [
            new("room", new Assertion("unbiased", 0, 0.001), 0.42, 0.001, 0.42, true, "most extreme: z = 1.2 (tile (0, 0) at 16 spp); Šidák-adjusted p = 0.42"),
            new("room", new Assertion("mse_at_most", 0.002, 0.001), 0.0031, 0.002, 1e-5, false, "mean MSE 0.0031 > 0.002 & t = 5 < ∞"),
            new("their-renderer", new Assertion("unbiased", 0, 0.001), double.NaN, 0.001, null, false, "case 'their-renderer': the command exited with status 3 (log: x.log)"),
        ];
        return new CheckResult(suite, verdicts, new Dictionary<string, CaseFigures>(), new Dictionary<string, double> { ["room"] = 1.5, ["their-renderer"] = 0.25 });
    }

    private static List<string> DotNetErrors(string path)
    {
        var schemas = new XmlSchemaSet();
        schemas.Add(null, SchemaPath);
        var errors = new List<string>();
        var settings = new XmlReaderSettings { ValidationType = ValidationType.Schema, Schemas = schemas };
        settings.ValidationEventHandler += (_, e) => errors.Add($"{e.Severity}: {e.Message}");
        using XmlReader reader = XmlReader.Create(path, settings);
        while (reader.Read())
        {
        }

        return errors;
    }
}
