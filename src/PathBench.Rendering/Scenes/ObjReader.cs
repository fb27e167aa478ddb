using System.Globalization;
using PathBench.Io;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Scenes;

/// <summary>An OBJ mesh in object space, unindexed: three corners per triangle.</summary>
/// <param name="Positions">Three per triangle.</param>
/// <param name="Normals">Unit normals, three per triangle, or empty when the faces give none.</param>
/// <param name="TexCoords">(u, v) pairs flattened, six per triangle, or empty when the faces give none.</param>
internal sealed record ObjMesh(Vec3d[] Positions, Vec3d[] Normals, double[] TexCoords)
{
    public int TriangleCount => Positions.Length / 3;
}

/// <summary>
/// Reads the polygon subset of Wavefront OBJ: <c>v</c>, <c>vt</c>, <c>vn</c> and <c>f</c>, faces
/// fan-triangulated from their first corner. <c>o</c>, <c>g</c>, <c>s</c>, <c>usemtl</c> and <c>mtllib</c>
/// are ignored (a scene assigns one material per mesh); any other statement is an error. Columns
/// count characters from 1, a tab being one.
/// </summary>
internal static class ObjReader
{
    /// <summary>Most triangles one mesh may hold, 2^26: 4.8 GB of unindexed positions is already more than a test machine has.</summary>
    public const int MaxTriangles = 1 << 26;

    /// <summary>Most entries of each of <c>v</c>, <c>vt</c>, <c>vn</c>, 2^26.</summary>
    public const int MaxVertices = 1 << 26;

    /// <summary>
    /// Memory a triangle costs from reading to rendering: the reader's corner lists, the mesh's
    /// arrays, the primitive record, the BVH and its triangle hit records, and their build, with the
    /// collector's slack. Measured: a render of a 1,036,800-triangle OBJ grid peaked at 1.19 GiB
    /// (1,246,240 KiB) against 86 MiB for the same scene without it, 1144 bytes a triangle
    /// (`/usr/bin/time -f %M pathbench render`, Release, 2 threads, after the BVH gained its 72-byte
    /// hit records); 1280 keeps about 12 % above that for the collector's timing.
    /// </summary>
    public const int BytesPerTriangle = 1280;

    /// <summary>Memory a <c>v</c>, <c>vt</c> or <c>vn</c> entry costs while read: a 24-byte value in a list that grows by doubling, kept until the mesh is built.</summary>
    public const int BytesPerVertexEntry = 64;

    private static readonly string[] Ignored = ["o", "g", "s", "usemtl", "mtllib"];

    /// <summary>Reads a mesh; <paramref name="displayPath"/> starts every error message.</summary>
    /// <param name="text">The OBJ text.</param>
    /// <param name="displayPath">How messages name the file.</param>
    /// <param name="maxTriangles">The triangle limit; only tests pass less than <see cref="MaxTriangles"/>.</param>
    /// <param name="maxVertices">The limit on each of v, vt, vn; only tests pass less than <see cref="MaxVertices"/>.</param>
    /// <param name="bytesBefore">Memory the scene's meshes read before this one need (<see cref="BytesPerTriangle"/> a triangle): this mesh's estimate is added to it and held to <see cref="MemoryBudget.Current"/> as the file is read.</param>
    /// <exception cref="MemoryBudgetException">The meshes read so far, this one included up to the line reached, need more than the memory budget.</exception>
    public static ObjMesh Read(TextReader text, string displayPath, int maxTriangles = MaxTriangles, int maxVertices = MaxVertices, long bytesBefore = 0)
    {
        ArgumentNullException.ThrowIfNull(text);
        var state = new ObjState(displayPath, maxTriangles, maxVertices, bytesBefore);
        var lines = new BoundedLineReader(text, MaxLineLength);
        int lineNumber = 0;
        while (true)
        {
            string? line;
            try
            {
                line = lines.ReadLine();
            }
            catch (LineTooLongException)
            {
                throw new SceneException(FormattableString.Invariant($"{displayPath}:{lineNumber + 1}:1: line longer than {MaxLineLength} characters"));
            }

            if (line is null)
                break;
            lineNumber++;
            state.Line(line, lineNumber);
        }
        return state.Finish();
    }

    /// <summary>Longest OBJ line accepted, 1 MiB of characters: a file with no line breaks (or a device) must not become one unbounded string.</summary>
    public const int MaxLineLength = 1 << 20;

    private sealed class LineTooLongException : Exception;

    /// <summary>ReadLine with a cap on the line length, reading in blocks.</summary>
    private sealed class BoundedLineReader(TextReader text, int maxLength)
    {
        private readonly char[] _buffer = new char[1 << 16];
        private readonly System.Text.StringBuilder _line = new();
        private int _position, _count;

        public string? ReadLine()
        {
            _line.Clear();
            bool any = false;
            while (true)
            {
                if (_position == _count)
                {
                    _count = text.Read(_buffer, 0, _buffer.Length);
                    _position = 0;
                    if (_count == 0)
                        return any ? Finish() : null;
                }

                any = true;
                int start = _position;
                while (_position < _count && _buffer[_position] != '\n')
                    _position++;
                _line.Append(_buffer, start, _position - start);
                if (_line.Length > maxLength)
                    throw new LineTooLongException();
                if (_position < _count)
                {
                    _position++; // the '\n'
                    return Finish();
                }
            }
        }

        private string Finish()
        {
            // ReadLine semantics: "\r\n" and "\n" both end a line.
            if (_line.Length > 0 && _line[^1] == '\r')
                _line.Length--;
            return _line.ToString();
        }
    }

    private enum IndexKind { Position, TexCoord, Normal }

    /// <summary>A positive index beyond the entries read so far: legal if the file defines enough entries later.</summary>
    private readonly record struct ForwardReference(long Index, IndexKind Kind, int Line, int Column);

    private sealed class ObjState(string path, int maxTriangles, int maxVertices, long bytesBefore)
    {
        private readonly MemoryBudget _budget = MemoryBudget.Current;
        private long _bytes = bytesBefore;
        private readonly List<Vec3d> _v = [];
        private readonly List<(double U, double V)> _vt = [];
        private readonly List<Vec3d> _vn = [];
        // Corner indices (0-based) of the triangles, three per triangle; -1 where the form has no such index.
        private readonly List<int> _cornerV = [];
        private readonly List<int> _cornerVt = [];
        private readonly List<int> _cornerVn = [];
        private readonly List<ForwardReference> _forward = [];
        private string? _form;
        private int _formLine;

        public void Line(string line, int lineNumber)
        {
            int hash = line.IndexOf('#', StringComparison.Ordinal);
            List<(string Text, int Column)> tokens = Tokens(hash < 0 ? line : line[..hash]);
            if (tokens.Count == 0)
                return;
            string keyword = tokens[0].Text;
            switch (keyword)
            {
                case "v":
                    Vertex(tokens, lineNumber);
                    break;
                case "vt":
                    TexCoord(tokens, lineNumber);
                    break;
                case "vn":
                    Normal(tokens, lineNumber);
                    break;
                case "f":
                    Face(tokens, lineNumber);
                    break;
                default:
                    if (!Ignored.Contains(keyword, StringComparer.Ordinal))
                    {
                        // Only a keyword-like word is quoted: a file that is not OBJ at all (a key, a
                        // password file given by mistake) must not have its first line printed.
                        bool keywordLike = keyword.Length <= 16 && keyword.All(c => char.IsAsciiLetterOrDigit(c) || c == '_');
                        throw Error(lineNumber, tokens[0].Column, keywordLike
                            ? $"unsupported OBJ statement '{keyword}' (read: v, vt, vn, f; ignored: o, g, s, usemtl, mtllib)"
                            : "not an OBJ statement (read: v, vt, vn, f; ignored: o, g, s, usemtl, mtllib); is this an OBJ file?");
                    }
                    break;
            }
        }

        public ObjMesh Finish()
        {
            foreach (ForwardReference f in _forward)
            {
                int count = Count(f.Kind);
                if (f.Index > count)
                    throw Error(f.Line, f.Column, FormattableString.Invariant($"{IndexName(f.Kind)} {f.Index} out of range (the file has {Counted(count, f.Kind)})"));
            }

            int corners = _cornerV.Count;
            var positions = new Vec3d[corners];
            for (int i = 0; i < corners; i++)
                positions[i] = _v[_cornerV[i]];

            Vec3d[] normals = [];
            if (corners > 0 && _cornerVn[0] >= 0)
            {
                normals = new Vec3d[corners];
                for (int i = 0; i < corners; i++)
                    normals[i] = _vn[_cornerVn[i]];
            }

            double[] texCoords = [];
            if (corners > 0 && _cornerVt[0] >= 0)
            {
                texCoords = new double[2 * corners];
                for (int i = 0; i < corners; i++)
                    (texCoords[2 * i], texCoords[2 * i + 1]) = _vt[_cornerVt[i]];
            }
            return new ObjMesh(positions, normals, texCoords);
        }

        private void Vertex(List<(string Text, int Column)> tokens, int line)
        {
            // x y z, optionally w (only 1: a weight means nothing for a polygon) or r g b (a common colour extension, ignored).
            int n = tokens.Count - 1;
            if (n is not (3 or 4 or 6))
                throw Error(line, tokens[0].Column, FormattableString.Invariant($"'v' takes 3 coordinates (x y z), got {n}"));
            double[] c = Numbers(tokens, line, "coordinate");
            if (n == 4 && c[3] != 1)
                throw Error(line, tokens[4].Column, $"vertex weight w = {tokens[4].Text} is not supported (only w = 1)");
            CheckCapacity(_v.Count, line, tokens[0].Column, "vertices");
            _v.Add(new Vec3d(c[0], c[1], c[2]));
        }

        private void TexCoord(List<(string Text, int Column)> tokens, int line)
        {
            // u [v [w]]: v defaults to 0 and w, a third texture dimension nothing here uses, is dropped.
            int n = tokens.Count - 1;
            if (n is < 1 or > 3)
                throw Error(line, tokens[0].Column, FormattableString.Invariant($"'vt' takes 1 to 3 coordinates (u [v [w]]), got {n}"));
            double[] c = Numbers(tokens, line, "texture coordinate");
            CheckCapacity(_vt.Count, line, tokens[0].Column, "texture coordinates");
            _vt.Add((c[0], n > 1 ? c[1] : 0));
        }

        private void Normal(List<(string Text, int Column)> tokens, int line)
        {
            int n = tokens.Count - 1;
            if (n != 3)
                throw Error(line, tokens[0].Column, FormattableString.Invariant($"'vn' takes 3 components (x y z), got {n}"));
            double[] c = Numbers(tokens, line, "normal component");
            var normal = new Vec3d(c[0], c[1], c[2]);
            // A zero normal cannot be renormalized after the transform; it would become NaN in the renderer.
            if (normal.X == 0 && normal.Y == 0 && normal.Z == 0)
                throw Error(line, tokens[0].Column, "normal has zero length");
            CheckCapacity(_vn.Count, line, tokens[0].Column, "normals");
            // OBJ does not promise unit normals; dividing by the largest component first keeps tiny ones from underflowing.
            normal /= Math.Max(Math.Abs(normal.X), Math.Max(Math.Abs(normal.Y), Math.Abs(normal.Z)));
            _vn.Add(normal.Normalized());
        }

        private void Face(List<(string Text, int Column)> tokens, int line)
        {
            int n = tokens.Count - 1;
            if (n < 3)
                throw Error(line, tokens[0].Column, FormattableString.Invariant($"face has {n} {(n == 1 ? "vertex" : "vertices")}; a face needs at least 3"));
            // Checked before anything is added: the size of what follows is known from the token count.
            if ((long)_cornerV.Count / 3 + (n - 2) > maxTriangles)
                throw Error(line, tokens[0].Column, FormattableString.Invariant($"too many triangles: a mesh may hold at most {maxTriangles}"));
            Spend((long)(n - 2) * BytesPerTriangle, line, tokens[0].Column);

            var v = new int[n];
            var vt = new int[n];
            var vn = new int[n];
            string? form = null;
            for (int i = 0; i < n; i++)
            {
                (string text, int column) = tokens[i + 1];
                string[] parts = text.Split('/');
                bool ok = parts.Length switch
                {
                    1 => true,
                    2 => parts[1].Length > 0,
                    3 => parts[2].Length > 0,
                    _ => false,
                } && parts[0].Length > 0;
                if (!ok)
                    throw Error(line, column, $"malformed face corner '{YamlNodeReader.Shown(text)}'; expected v, v/vt, v//vn or v/vt/vn");
                string cornerForm = parts.Length switch
                {
                    1 => "v",
                    2 => "v/vt",
                    _ => parts[1].Length > 0 ? "v/vt/vn" : "v//vn",
                };
                if (form is null)
                    form = cornerForm;
                else if (cornerForm != form)
                    throw Error(line, column, $"face corner '{YamlNodeReader.Shown(text)}' has the form {cornerForm} but the face's first corner has the form {form}");

                v[i] = Index(parts[0], IndexKind.Position, line, column);
                vt[i] = parts.Length >= 2 && parts[1].Length > 0 ? Index(parts[1], IndexKind.TexCoord, line, column) : -1;
                vn[i] = parts.Length == 3 ? Index(parts[2], IndexKind.Normal, line, column) : -1;
            }

            // The output has normals and texture coordinates on every triangle or on none, so all faces share one form.
            if (_form is null)
            {
                _form = form;
                _formLine = line;
            }
            else if (form != _form)
            {
                throw Error(line, tokens[0].Column,
                    FormattableString.Invariant($"face has the form {form} but the first face (line {_formLine}) has the form {_form}; every face of a mesh must use the same form"));
            }

            // Fan from the first corner: (0, i, i+1). Exact for convex polygons, which is what OBJ faces are meant to be.
            for (int i = 1; i + 1 < n; i++)
            {
                foreach (int c in (ReadOnlySpan<int>)[0, i, i + 1])
                {
                    _cornerV.Add(v[c]);
                    _cornerVt.Add(vt[c]);
                    _cornerVn.Add(vn[c]);
                }
            }
        }

        /// <summary>A 1-based or negative (relative) OBJ index, returned 0-based.</summary>
        private int Index(string text, IndexKind kind, int line, int column)
        {
            ReadOnlySpan<char> body = text.AsSpan(text[0] == '-' ? 1 : 0);
            if (body.IsEmpty || body.ContainsAnyExcept("0123456789"))
                throw Error(line, column, $"{IndexName(kind)} '{YamlNodeReader.Shown(text)}' is not an integer");
            int count = Count(kind);
            if (!long.TryParse(text, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out long index))
                index = text[0] == '-' ? long.MinValue : long.MaxValue; // more digits than a long: out of range either way
            if (index == 0)
                throw Error(line, column, $"{IndexName(kind)} 0 is invalid; OBJ indices start at 1 (negative ones count back from the latest entry)");
            if (index < 0)
            {
                if (index < -(long)count)
                    throw Error(line, column, FormattableString.Invariant($"{IndexName(kind)} {Shown(index, text)} out of range (only {Counted(count, kind)} before this line)"));
                return (int)(count + index);
            }
            if (index > maxVertices)
                throw Error(line, column, FormattableString.Invariant($"{IndexName(kind)} {Shown(index, text)} out of range (a mesh holds at most {maxVertices} {Plural(kind)})"));
            if (index > count)
                _forward.Add(new ForwardReference(index, kind, line, column));
            return (int)(index - 1);
        }

        private static string Shown(long index, string text) => index is long.MinValue or long.MaxValue ? YamlNodeReader.Shown(text) : index.ToString(CultureInfo.InvariantCulture);

        private double[] Numbers(List<(string Text, int Column)> tokens, int line, string what)
        {
            var values = new double[tokens.Count - 1];
            for (int i = 1; i < tokens.Count; i++)
            {
                (string text, int column) = tokens[i];
                if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double value))
                    throw Error(line, column, $"{what} '{YamlNodeReader.Shown(text)}' is not a number");
                if (!double.IsFinite(value))
                    throw Error(line, column, $"{what} '{YamlNodeReader.Shown(text)}' is not a finite number");
                // The scene's own bound on numbers (squared lengths must stay finite).
                if (Math.Abs(value) > YamlNodeReader.MaxMagnitude)
                    throw Error(line, column, $"{what} '{YamlNodeReader.Shown(text)}' is above 1e100 in magnitude");
                values[i - 1] = value;
            }
            return values;
        }

        private void CheckCapacity(int count, int line, int column, string plural)
        {
            if (count >= maxVertices)
                throw Error(line, column, FormattableString.Invariant($"too many {plural}: a mesh may hold at most {maxVertices}"));
            Spend(BytesPerVertexEntry, line, column);
        }

        /// <summary>Adds <paramref name="bytes"/> to the estimate before what they stand for is stored, and refuses past the budget.</summary>
        private void Spend(long bytes, int line, int column)
        {
            _bytes += bytes;
            if (_bytes > _budget.Bytes)
            {
                _budget.Require(_bytes, FormattableString.Invariant(
                    $"{path}:{line}:{column}: reading the scene's meshes up to here ({BytesPerTriangle} bytes a triangle, {BytesPerVertexEntry} a vertex entry)"));
            }
        }

        private int Count(IndexKind kind) => kind switch
        {
            IndexKind.Position => _v.Count,
            IndexKind.TexCoord => _vt.Count,
            _ => _vn.Count,
        };

        private static string IndexName(IndexKind kind) => kind switch
        {
            IndexKind.Position => "face index",
            IndexKind.TexCoord => "texture coordinate index",
            _ => "normal index",
        };

        private static string Plural(IndexKind kind) => kind switch
        {
            IndexKind.Position => "vertices",
            IndexKind.TexCoord => "texture coordinates",
            _ => "normals",
        };

        private static string Counted(int count, IndexKind kind) => count == 1
            ? kind switch { IndexKind.Position => "1 vertex", IndexKind.TexCoord => "1 texture coordinate", _ => "1 normal" }
            : FormattableString.Invariant($"{count} {Plural(kind)}");

        private SceneException Error(int line, int column, string message) =>
            new(FormattableString.Invariant($"{path}:{line}:{column}: {message}"));

        private static List<(string Text, int Column)> Tokens(string line)
        {
            var tokens = new List<(string, int)>();
            int i = 0;
            while (i < line.Length)
            {
                while (i < line.Length && char.IsWhiteSpace(line[i]))
                    i++;
                int start = i;
                while (i < line.Length && !char.IsWhiteSpace(line[i]))
                    i++;
                if (i > start)
                    tokens.Add((line[start..i], start + 1));
            }
            return tokens;
        }
    }
}
