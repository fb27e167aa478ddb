using PathBench.Rendering.Geometry;
using PathBench.Rendering.Scenes;
using PathBench.Sampling;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering;

/// <summary>A perspective camera with an optional thin lens; image row 0 is the top row.</summary>
public sealed class Camera
{
    private readonly Vec3d _position, _forward, _right, _up;
    private readonly double _tanHalf, _aspect, _aperture, _focus;

    /// <summary>Creates the camera; <paramref name="up"/> must not be parallel to the view direction.</summary>
    public Camera(Vec3d position, Vec3d lookAt, Vec3d up, double fovDegrees, int width, int height, double apertureRadius = 0, double focusDistance = 1)
    {
        Width = width;
        Height = height;
        _position = position;
        // Scaled first: a view direction or an 'up' of length 1e-200 is valid input, and its plain square underflows.
        _forward = ScaledVector.Unit(lookAt - position);
        _right = ScaledVector.Unit(Vec3d.Cross(_forward, ScaledVector.Tame(up)));
        _up = Vec3d.Cross(_right, _forward);
        _tanHalf = PortableMath.Tan(fovDegrees * Math.PI / 360);
        _aspect = (double)width / height;
        _aperture = apertureRadius;
        _focus = focusDistance;
    }

    /// <summary>Image width in pixels.</summary>
    public int Width { get; }

    /// <summary>Image height in pixels.</summary>
    public int Height { get; }

    /// <summary>The camera of a scene description.</summary>
    public static Camera From(CameraDescription c)
    {
        ArgumentNullException.ThrowIfNull(c);
        return new Camera(c.Position, c.LookAt, c.Up, c.FovDegrees, c.Width, c.Height, c.ApertureRadius, c.FocusDistance);
    }

    /// <summary>Whether the camera has a thin lens (a positive aperture): a pinhole camera ignores the lens sample.</summary>
    public bool HasLens => _aperture > 0;

    /// <summary>The primary ray through film position (x, y) in pixels, lens sample (lu, lv) (ignored without <see cref="HasLens"/>).</summary>
    public Ray Generate(double x, double y, double lu, double lv)
    {
        double px = (2 * x / Width - 1) * _tanHalf * _aspect;
        double py = (1 - 2 * y / Height) * _tanHalf;
        Vec3d dir = (_forward + _right * px + _up * py).Normalized();
        if (_aperture <= 0)
        {
            return new Ray(_position, dir, double.PositiveInfinity);
        }

        // Thin lens: every ray through the lens meets the pinhole ray on the plane of focus.
        Vec3d focusPoint = _position + dir * (_focus / Vec3d.Dot(dir, _forward));
        (double dx, double dy) = Warp.ConcentricDisk(lu, lv);
        Vec3d origin = _position + (_right * dx + _up * dy) * _aperture;
        return new Ray(origin, (focusPoint - origin).Normalized(), double.PositiveInfinity);
    }
}
