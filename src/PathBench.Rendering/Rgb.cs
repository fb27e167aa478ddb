using System.Runtime.CompilerServices;

namespace PathBench.Rendering;

/// <summary>A linear RGB triple (radiance, reflectance or throughput) in double precision.</summary>
public readonly record struct Rgb(double R, double G, double B)
{
    /// <summary>Black.</summary>
    public static Rgb Black => default;

    /// <summary>The same value in every channel.</summary>
    public static Rgb Grey(double v) => new(v, v, v);

    /// <summary>Sum.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Rgb operator +(Rgb a, Rgb b) => new(a.R + b.R, a.G + b.G, a.B + b.B);

    /// <summary>Component-wise product.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Rgb operator *(Rgb a, Rgb b) => new(a.R * b.R, a.G * b.G, a.B * b.B);

    /// <summary>Scaling.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Rgb operator *(Rgb a, double s) => new(a.R * s, a.G * s, a.B * s);

    /// <summary>Scaling.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Rgb operator *(double s, Rgb a) => new(a.R * s, a.G * s, a.B * s);

    /// <summary>Division by a scalar.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Rgb operator /(Rgb a, double s) => a * (1.0 / s);

    /// <summary>True when all channels are zero.</summary>
    public bool IsBlack
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        get => R == 0 && G == 0 && B == 0;
    }

    /// <summary>The largest channel.</summary>
    public double Max
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        get => Math.Max(R, Math.Max(G, B));
    }

    /// <summary>The mean of the channels.</summary>
    public double Average => (R + G + B) / 3;

    /// <summary>True when every channel is finite.</summary>
    public bool IsFinite
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        get => double.IsFinite(R) && double.IsFinite(G) && double.IsFinite(B);
    }
}
