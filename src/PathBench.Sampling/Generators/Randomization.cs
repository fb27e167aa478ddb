namespace PathBench.Sampling.Generators;

/// <summary>How a point set is randomized. Antithetic pairing is a separate, composable flag.</summary>
public enum Randomization
{
    /// <summary>No randomization beyond what the generator does by construction.</summary>
    None,

    /// <summary>Random toroidal shift of every coordinate (Cranley &amp; Patterson 1976).</summary>
    CranleyPatterson,

    /// <summary>Random XOR of the base-2 digits of every coordinate.</summary>
    DigitalShift,

    /// <summary>Nested uniform scrambling in base 2 (Owen 1995), hash-based (Laine &amp; Karras 2011; Burley 2020), with a scrambled index order.</summary>
    Owen,

    /// <summary>Random permutation of the digits at each digit position, per prime base.</summary>
    DigitPermutation,
}

/// <summary>Names used on the command line and in JSON.</summary>
public static class RandomizationNames
{
    /// <summary>The name of the antithetic pairing, which combines with any randomization as <c>R+antithetic</c>.</summary>
    public const string Antithetic = "antithetic";

    private static readonly (Randomization Kind, string Name, string Source)[] Table =
    [
        (Randomization.None, "none", "no randomization"),
        (Randomization.CranleyPatterson, "cranley-patterson", "random toroidal shift; Cranley & Patterson 1976, SIAM J. Numer. Anal. 13(6)"),
        (Randomization.DigitalShift, "digital-shift", "random XOR in base 2; see Owen 2003, 'Variance with alternative scramblings of digital nets'"),
        (Randomization.Owen, "owen", "nested uniform scrambling, Owen 1995; hash-based, Laine & Karras 2011 and Burley 2020"),
        (Randomization.DigitPermutation, "digit-permutation", "random permutation per digit position, after Braaten & Weller 1979"),
    ];

    /// <summary>Every randomization with its name and published source.</summary>
    public static IReadOnlyList<(Randomization Kind, string Name, string Source)> All => Table;

    /// <summary>The command-line name of a randomization.</summary>
    public static string NameOf(Randomization kind) => Table.First(t => t.Kind == kind).Name;

    /// <summary>Parses a name; <c>false</c> when unknown.</summary>
    public static bool TryParse(string name, out Randomization kind)
    {
        foreach (var t in Table)
        {
            if (string.Equals(t.Name, name, StringComparison.Ordinal))
            {
                kind = t.Kind;
                return true;
            }
        }

        kind = default;
        return false;
    }
}
