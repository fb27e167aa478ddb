using PathBench.Sampling;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Scenes;

/// <summary>
/// A mesh's object-to-world map: scale, then rotate (axis-angle, right-handed), then translate,
/// so p' = R·S·p + t. Normals go through the inverse transpose of R·S, which is R·S⁻¹
/// (R is orthonormal, S diagonal), and are renormalized.
/// </summary>
internal readonly struct MeshTransform
{
    // Row-major 3×3 matrices: _m = R·S for points, _n = R·S⁻¹ for normals.
    private readonly double[] _m;
    private readonly double[] _n;
    private readonly Vec3d _translate;

    private MeshTransform(double[] m, double[] n, Vec3d translate, bool flipsWinding)
    {
        _m = m;
        _n = n;
        _translate = translate;
        FlipsWinding = flipsWinding;
    }

    /// <summary>The identity.</summary>
    public static MeshTransform Identity => Create(new Vec3d(1, 1, 1), new Vec3d(0, 0, 1), 0, Vec3d.Zero);

    /// <summary>
    /// True when the map is a reflection (an odd number of negative scale factors): the loader then
    /// swaps two corners of every triangle so the winding-order normal still agrees with the
    /// transformed shading normals and with the side a one-sided emitter faces.
    /// </summary>
    public bool FlipsWinding { get; }

    /// <param name="scale">Per-axis scale factors, none zero (the caller checks).</param>
    /// <param name="axis">Rotation axis, not zero (the caller checks); normalized here.</param>
    /// <param name="degrees">Rotation angle in degrees, counter-clockwise looking down the axis towards the origin.</param>
    /// <param name="translate">Translation.</param>
    public static MeshTransform Create(Vec3d scale, Vec3d axis, double degrees, Vec3d translate)
    {
        double[] r = Rotation(axis, degrees);
        var m = new double[9];
        var n = new double[9];
        for (int row = 0; row < 3; row++)
        {
            for (int col = 0; col < 3; col++)
            {
                // Multiplying R on the right by diag(s) scales its columns.
                m[3 * row + col] = r[3 * row + col] * scale[col];
                n[3 * row + col] = r[3 * row + col] / scale[col];
            }
        }
        // Count the negative factors: the product of three tiny scales can underflow to −0.
        int negatives = (scale.X < 0 ? 1 : 0) + (scale.Y < 0 ? 1 : 0) + (scale.Z < 0 ? 1 : 0);
        return new MeshTransform(m, n, translate, negatives % 2 == 1);
    }

    /// <summary>Maps a point.</summary>
    public Vec3d Point(Vec3d p) => Apply(_m, p) + _translate;

    /// <summary>Maps a non-zero normal and renormalizes it.</summary>
    public Vec3d Normal(Vec3d n) => Unit(Apply(_n, n));

    // Normalise after scaling by the largest component, so tiny or huge (finite) vectors do not under- or overflow.
    private static Vec3d Unit(Vec3d v) => (v / Math.Max(Math.Abs(v.X), Math.Max(Math.Abs(v.Y), Math.Abs(v.Z)))).Normalized();

    private static Vec3d Apply(double[] a, Vec3d v) => new(
        a[0] * v.X + a[1] * v.Y + a[2] * v.Z,
        a[3] * v.X + a[4] * v.Y + a[5] * v.Z,
        a[6] * v.X + a[7] * v.Y + a[8] * v.Z);

    /// <summary>Rodrigues' rotation matrix R = cos θ·I + sin θ·[k]ₓ + (1 − cos θ)·k·kᵀ for the unit axis k.</summary>
    private static double[] Rotation(Vec3d axis, double degrees)
    {
        Vec3d k = Unit(axis);
        (double s, double c) = SinCosDegrees(degrees);
        double t = 1 - c;
        return
        [
            c + k.X * k.X * t, k.X * k.Y * t - k.Z * s, k.X * k.Z * t + k.Y * s,
            k.Y * k.X * t + k.Z * s, c + k.Y * k.Y * t, k.Y * k.Z * t - k.X * s,
            k.Z * k.X * t - k.Y * s, k.Z * k.Y * t + k.X * s, c + k.Z * k.Z * t,
        ];
    }

    /// <summary>Sine and cosine of an angle in degrees, exact for whole quarter turns (cos 90° is 0, not 6e-17).</summary>
    private static (double Sin, double Cos) SinCosDegrees(double degrees)
    {
        double turn = degrees % 360; // exact in floating point
        if (turn < 0)
            turn += 360;
        return turn switch
        {
            0 => (0, 1),
            90 => (1, 0),
            180 => (0, -1),
            270 => (-1, 0),
            _ => PortableMath.SinCos(turn * (Math.PI / 180)),
        };
    }
}
