using System.Globalization;

namespace PathBench.Imaging;

/// <summary>An axis-aligned pixel rectangle, origin at the top-left pixel, y downwards.</summary>
/// <param name="X">Left column.</param>
/// <param name="Y">Top row.</param>
/// <param name="Width">Width in pixels (positive).</param>
/// <param name="Height">Height in pixels (positive).</param>
public readonly record struct PixelRect(int X, int Y, int Width, int Height)
{
    /// <summary>The whole of a <paramref name="width"/>×<paramref name="height"/> image.</summary>
    public static PixelRect Full(int width, int height) => new(0, 0, width, height);

    /// <summary>Number of pixels.</summary>
    public long PixelCount => (long)Width * Height;

    /// <summary>Parses "X,Y,W,H" (non-negative integers, W and H positive).</summary>
    /// <exception cref="FormatException">The text is not four such integers.</exception>
    public static PixelRect Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        string[] parts = text.Split(',');
        if (parts.Length != 4)
        {
            throw new FormatException($"region '{text}' is not X,Y,W,H");
        }

        var v = new int[4];
        for (int i = 0; i < 4; i++)
        {
            if (!int.TryParse(parts[i].Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out v[i]))
            {
                throw new FormatException($"region '{text}': '{parts[i]}' is not a non-negative integer");
            }
        }

        if (v[2] == 0 || v[3] == 0)
        {
            throw new FormatException($"region '{text}' is empty (width and height must be positive)");
        }

        return new PixelRect(v[0], v[1], v[2], v[3]);
    }

    /// <summary>Whether the rectangle lies inside a <paramref name="width"/>×<paramref name="height"/> image.</summary>
    public bool FitsIn(int width, int height) =>
        X >= 0 && Y >= 0 && Width > 0 && Height > 0 && (long)X + Width <= width && (long)Y + Height <= height;

    /// <summary>Throws unless the rectangle lies inside the image.</summary>
    /// <exception cref="ArgumentOutOfRangeException">It does not.</exception>
    public void ThrowIfOutside(int width, int height)
    {
        if (!FitsIn(width, height))
        {
            throw new ArgumentOutOfRangeException(
                nameof(width), FormattableString.Invariant($"region {this} does not lie inside the {width}x{height} image"));
        }
    }

    /// <summary>"X,Y,W,H".</summary>
    public override string ToString() => FormattableString.Invariant($"{X},{Y},{Width},{Height}");
}
