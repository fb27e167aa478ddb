namespace PathBench.BlueNoise;

/// <summary>Exact values of the Heaviside step integrands both optimisers and the tests use.</summary>
public static class StepArea
{
    /// <summary>
    /// Area of {p in [0,1]² : (p − c)·n ≥ 0}: the unit square clipped by the half-plane (Sutherland &amp;
    /// Hodgman 1974, "Reentrant polygon clipping", CACM 17(1)), then the shoelace formula.
    /// </summary>
    public static double HalfPlaneArea(double nx, double ny, double cx, double cy)
    {
        (double X, double Y)[] square = [(0, 0), (1, 0), (1, 1), (0, 1)];
        var clipped = new List<(double X, double Y)>();
        for (int i = 0; i < 4; i++)
        {
            var a = square[i];
            var b = square[(i + 1) % 4];
            double da = ((a.X - cx) * nx) + ((a.Y - cy) * ny), db = ((b.X - cx) * nx) + ((b.Y - cy) * ny);
            if (da >= 0)
            {
                clipped.Add(a);
            }

            if ((da >= 0) != (db >= 0))
            {
                double t = da / (da - db);
                clipped.Add((a.X + (t * (b.X - a.X)), a.Y + (t * (b.Y - a.Y))));
            }
        }

        double area = 0;
        for (int i = 0; i < clipped.Count; i++)
        {
            var a = clipped[i];
            var b = clipped[(i + 1) % clipped.Count];
            area += (a.X * b.Y) - (b.X * a.Y);
        }

        return Math.Abs(area) / 2;
    }
}
