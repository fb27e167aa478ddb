using PathBench.Rendering.Scenes;

namespace PathBench.Rendering.Tests.Scenes;

/// <summary>
/// The malformed-scene corpus: each row is a scene that must be refused with one exact one-line
/// message at one position. The messages are the loader's own (listed in scenes/README.md,
/// "Errors"); each position is where the offending token starts in the row's text (1-based line
/// and column of the bad value, the unknown key, or the mapping that lacks a key). Where a
/// row rests on a rule of YAML itself the comment names it.
/// </summary>
public sealed class MalformedSceneTests(CorpusMeshes meshes) : IClassFixture<CorpusMeshes>
{
    /// <summary>One malformed scene. A message ending in "..." is a prefix (the rest is the operating system's wording).</summary>
    public sealed record Case(string Text, string Message, int Line, int Column);

    // Most rows vary one line of this small valid scene; its line prefixes are 8 ("camera: "), 11 ("materials: ") and 8 ("shapes: ") characters.
    private const string Camera = "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }";
    private const string Materials = "{ wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }";
    private const string Shapes = "[ { type: sphere, center: [0, 0, 0], radius: 1, material: wall } ]";

    private static string Scene(string camera = Camera, string materials = Materials, string shapes = Shapes, string extra = "") =>
        $"camera: {camera}\nmaterials: {materials}\nshapes: {shapes}\n{extra}";

    private static readonly Dictionary<string, Case> Corpus = new()
    {
        // YAML 1.2.2: a stream may hold no document; a scene needs one (from memory)
        ["empty_file"] = new("",
            "the file is empty; a scene is a mapping with keys camera, materials and shapes", 1, 1),
        ["only_a_comment"] = new("# nothing here\n",
            "the file is empty; a scene is a mapping with keys camera, materials and shapes", 1, 1),
        ["top_level_sequence"] = new("- camera\n",
            "the top level must be a mapping with keys camera, materials and shapes, got a sequence of 1 item", 1, 1),
        ["top_level_scalar"] = new("hello\n",
            "the top level must be a mapping with keys camera, materials and shapes, got 'hello'", 1, 1),
        // YAML 1.2.2: '---' starts a further document (from memory)
        ["two_documents"] = new(Scene(extra: "---\nfov: 40\n"),
            "the file holds more than one YAML document; a scene is one document", 4, 1),
        // YAML 1.2.2: a flow sequence ends with ']' (from memory); position as YamlDotNet reports it
        ["unclosed_flow_sequence"] = new("camera: { position: [0, 1, 5\n",
            "YAML syntax error: While parsing a flow sequence, did not find expected ',' or ']'.", 2, 1),
        // The same mistake followed by a plain scalar on the next line, where the YAML library's
        // scanner fails without a position: reported at the '[' left open.
        ["unclosed_flow_sequence_then_scalar"] = new("camera: [0, 1,\nfov: 3\n",
            "YAML syntax error: an unclosed '[' or '{' (a missing ']' or '}')", 1, 9),
        // YAML 1.2.2: block mapping entries share one indentation (from memory); position as YamlDotNet reports it
        ["bad_indentation"] = new("camera:\n  fov: 40\n    up: [0, 1, 0]\n",
            "YAML syntax error: While scanning a plain scalar value, found invalid mapping.", 3, 7),
        // YAML 1.2.2: mapping keys are unique (from memory)
        ["duplicate_top_level_key"] = new(Scene(extra: "camera: {}\n"),
            "duplicate key 'camera'", 4, 1),
        ["duplicate_key_in_material"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: [0.5, 0.5, 0.5], albedo: [1, 1, 1] } }"),
            "duplicate key 'albedo'", 2, 62),
        ["duplicate_material_name"] = new(Scene(materials: "{ wall: { type: dielectric, ior: 1.5 }, wall: { type: dielectric, ior: 1.3 } }"),
            "duplicate key 'wall'", 2, 52),
        // '!!float' is the core-schema tag, YAML 1.2.2 (from memory); scene files refuse tags
        ["tagged_number"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: !!float 40, resolution: [64, 48] }"),
            "YAML tags are not used in scene files, got 'tag:yaml.org,2002:float'", 1, 57),
        // YAML 1.2.2: an alias names an earlier anchor (from memory)
        ["undefined_alias"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: *angle, resolution: [64, 48] }"),
            "alias '*angle' refers to no anchor defined before it", 1, 57),
        // YAML 1.2.2 allows cycles; a scene refuses them (common practice)
        ["recursive_alias"] = new(Scene(extra: "render: &r { spp: *r }\n"),
            "alias '*r' refers to a collection that contains it", 4, 19),
        // A 1000-node anchor repeated by 101 aliases: 101 000 nodes, over the 100 000 aliases may stand for (our limit, scenes/README.md).
        // "big: &b [" is 9 characters, then 999 "0, " and a "0]"; the 101st "*b" of "more: [*b, *b, ..." starts at column 8 + 100 · 4.
        ["aliases_expand_too_far"] = new(Scene(extra: "big: &b [" + string.Concat(Enumerable.Repeat("0, ", 998)) + "0]\nmore: [" + string.Join(", ", Enumerable.Repeat("*b", 101)) + "]\n"),
            "aliases expand to more than 100000 nodes (this one, '*b', to 1000); write repeated shapes out or put repeated geometry in a mesh", 5, 408),
        ["nesting_too_deep"] = new(Scene(extra: "deep: [[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]]\n"),
            "collections nest deeper than 32 levels", 4, 38),
        // YAML 1.2.2 '? ' complex key (from memory); scene keys are names
        ["sequence_as_key"] = new("? [a, b]\n: 1\n",
            "keys must be names, got a sequence", 1, 3),
        ["alias_as_key"] = new(Scene(extra: "a: &k render\n*k : { spp: 4 }\n"),
            "keys must be written out, not aliases", 5, 1),
        ["null_key"] = new(Scene(extra: "~: 1\n"),
            "keys in the scene must be names, got nothing (null)", 4, 1),
        ["top_level_key_typo"] = new("camra: { position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }\nmaterials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\nshapes: [ { type: sphere, center: [0, 0, 0], radius: 1, material: wall } ]\n",
            "unknown key 'camra' in the scene; did you mean 'camera'?", 1, 1),
        ["top_level_key_unknown"] = new(Scene(extra: "lights: []\n"),
            "unknown key 'lights' in the scene; expected one of: camera, render, environment, materials, shapes", 4, 1),
        ["missing_camera"] = new("materials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\nshapes: [ { type: sphere, center: [0, 0, 0], radius: 1, material: wall } ]\n",
            "the scene is missing required key 'camera'", 1, 1),
        ["missing_materials"] = new("camera: { position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }\nshapes: [ { type: sphere, center: [0, 0, 0], radius: 1, material: wall } ]\n",
            "the scene is missing required key 'materials'", 1, 1),
        ["missing_shapes"] = new("camera: { position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }\nmaterials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\n",
            "the scene is missing required key 'shapes'", 1, 1),
        ["camera_not_a_mapping"] = new(Scene(camera: "[0, 1, 5]"),
            "'camera' must be a mapping, got a sequence of 3 items", 1, 9),
        ["camera_missing_fov"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], resolution: [64, 48] }"),
            "camera is missing required key 'fov'", 1, 9),
        ["camera_missing_resolution"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40 }"),
            "camera is missing required key 'resolution'", 1, 9),
        ["camera_key_typo"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], resolution: [64, 48], fvo: 40 }"),
            "unknown key 'fvo' in camera; did you mean 'fov'?", 1, 74),
        ["camera_key_unknown"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48], zoom: 2 }"),
            "unknown key 'zoom' in camera; expected one of: position, look_at, up, fov, resolution, aperture_radius, focus_distance", 1, 83),
        ["position_two_components"] = new(Scene(camera: "{ position: [0, 1], look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }"),
            "'position' in camera must be a 3-vector [x, y, z], got a sequence of 2 items", 1, 21),
        ["position_scalar"] = new(Scene(camera: "{ position: 5, look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }"),
            "'position' in camera must be a 3-vector [x, y, z], got '5'", 1, 21),
        ["position_component_word"] = new(Scene(camera: "{ position: [0, one, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }"),
            "component 2 of 'position' in camera must be a number, got 'one'", 1, 25),
        // YAML 1.2.2: a quoted scalar is a string, never a number (from memory)
        ["position_component_quoted"] = new(Scene(camera: "{ position: [0, '1', 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48] }"),
            "component 2 of 'position' in camera must be a number, got the quoted string '1'", 1, 25),
        // 1e999 overflows IEEE 754 binary64 (largest finite ≈ 1.8e308) and parses to +∞
        ["look_at_non_finite"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1e999, 0], fov: 40, resolution: [64, 48] }"),
            "component 2 of 'look_at' in camera must be a finite number, got '1e999'", 1, 45),
        ["fov_word"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: forty, resolution: [64, 48] }"),
            "'fov' in camera must be a number, got 'forty'", 1, 57),
        ["fov_zero"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 0, resolution: [64, 48] }"),
            "'fov' in camera must be in (0, 180) degrees, got 0", 1, 57),
        ["fov_180"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 180, resolution: [64, 48] }"),
            "'fov' in camera must be in (0, 180) degrees, got 180", 1, 57),
        // YAML 1.2.2: .nan and .inf are the float spellings of NaN and infinity (from memory)
        ["fov_nan"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: .nan, resolution: [64, 48] }"),
            "'fov' in camera must be a finite number, got '.nan'", 1, 57),
        ["fov_negative_infinity"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: -.inf, resolution: [64, 48] }"),
            "'fov' in camera must be a finite number, got '-.inf'", 1, 57),
        // YAML 1.2.2: ~ is null in the core schema (from memory)
        ["fov_null"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: ~, resolution: [64, 48] }"),
            "'fov' in camera must be a number, got nothing (null)", 1, 57),
        // YAML 1.2.2 writes hex as an integer form, but scene numbers are decimal (our choice, README)
        ["fov_hex"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 0x28, resolution: [64, 48] }"),
            "'fov' in camera must be a number, got '0x28'", 1, 57),
        ["resolution_three_numbers"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48, 3] }"),
            "'resolution' in camera must be [width, height], got a sequence of 3 items", 1, 73),
        ["resolution_fraction"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64.5, 48] }"),
            "the width in 'resolution' in camera must be a whole number, got '64.5'", 1, 74),
        ["resolution_zero_height"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 0] }"),
            "the height in 'resolution' in camera must be between 1 and 67108864, got 0", 1, 78),
        ["resolution_negative"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [-64, 48] }"),
            "the width in 'resolution' in camera must be between 1 and 67108864, got -64", 1, 74),
        ["resolution_too_many_pixels"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [10000, 10000] }"),
            "'resolution' in camera is 10000 × 10000 = 100000000 pixels, above the limit of 67108864 (2^26)", 1, 73),
        ["resolution_absurd_digits"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [99999999999999999999999, 1] }"),
            "the width in 'resolution' in camera must be between 1 and 67108864, got 99999999999999999999999", 1, 74),
        ["look_at_equals_position"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 5], fov: 40, resolution: [64, 48] }"),
            "'look_at' in camera equals 'position'; the camera has no view direction", 1, 41),
        ["up_parallel_to_view"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48], up: [0, 0, 2] }"),
            "'up' in camera is parallel to the view direction (look_at - position)", 1, 87),
        ["default_up_parallel_to_view"] = new(Scene(camera: "{ position: [0, 5, 0], look_at: [0, 0, 0], fov: 40, resolution: [64, 48] }"),
            "the default 'up' [0, 1, 0] of camera is parallel to the view direction (look_at - position); give 'up'", 1, 9),
        ["up_zero"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48], up: [0, 0, 0] }"),
            "'up' in camera must not be the zero vector", 1, 87),
        ["aperture_negative"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48], aperture_radius: -0.1 }"),
            "'aperture_radius' in camera must be >= 0, got -0.1", 1, 100),
        ["focus_distance_zero"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48], focus_distance: 0 }"),
            "'focus_distance' in camera must be > 0, got 0", 1, 99),
        ["spp_fraction"] = new(Scene(extra: "render: { spp: 64.5 }\n"),
            "'spp' in render must be a whole number, got '64.5'", 4, 16),
        ["spp_exponent"] = new(Scene(extra: "render: { spp: 1e3 }\n"),
            "'spp' in render must be a whole number, got '1e3'", 4, 16),
        ["spp_zero"] = new(Scene(extra: "render: { spp: 0 }\n"),
            "'spp' in render must be between 1 and 16777216, got 0", 4, 16),
        ["spp_quoted"] = new(Scene(extra: "render: { spp: '64' }\n"),
            "'spp' in render must be a whole number, got the quoted string '64'", 4, 16),
        ["max_depth_zero"] = new(Scene(extra: "render: { max_depth: 0 }\n"),
            "'max_depth' in render must be between 1 and 1024, got 0", 4, 22),
        ["max_depth_too_large"] = new(Scene(extra: "render: { max_depth: 2000 }\n"),
            "'max_depth' in render must be between 1 and 1024, got 2000", 4, 22),
        ["render_key_unknown"] = new(Scene(extra: "render: { samples: 16 }\n"),
            "unknown key 'samples' in render; expected one of: spp, max_depth", 4, 11),
        ["render_not_a_mapping"] = new(Scene(extra: "render: [64]\n"),
            "'render' must be a mapping, got a sequence of 1 item", 4, 9),
        ["environment_missing_radiance"] = new(Scene(extra: "environment: {}\n"),
            "environment is missing required key 'radiance'", 4, 14),
        ["environment_negative"] = new(Scene(extra: "environment: { radiance: [-1, 0, 0] }\n"),
            "component 1 of 'radiance' in environment must be >= 0, got -1", 4, 27),
        ["environment_two_components"] = new(Scene(extra: "environment: { radiance: [1, 1] }\n"),
            "'radiance' in environment must be an RGB triple [r, g, b], got a sequence of 2 items", 4, 26),
        ["materials_sequence"] = new(Scene(materials: "[ wall ]"),
            "'materials' must be a mapping, got a sequence of 1 item", 2, 12),
        ["materials_empty"] = new(Scene(materials: "{}"),
            "'materials' must define at least one material", 2, 12),
        ["material_not_a_mapping"] = new(Scene(materials: "{ wall: 5 }"),
            "material 'wall' must be a mapping, got '5'", 2, 20),
        ["material_empty_name"] = new(Scene(materials: "{ '': { type: dielectric, ior: 1.5 } }"),
            "keys in materials must be names, got the quoted string ''", 2, 14),
        ["material_missing_type"] = new(Scene(materials: "{ wall: { albedo: [0.5, 0.5, 0.5] } }"),
            "material 'wall' is missing required key 'type'", 2, 20),
        ["material_type_typo"] = new(Scene(materials: "{ wall: { type: difuse, albedo: [0.5, 0.5, 0.5] } }"),
            "unknown material type 'difuse' in material 'wall'; did you mean 'diffuse'?", 2, 28),
        ["material_type_unknown"] = new(Scene(materials: "{ wall: { type: plastic, albedo: [0.5, 0.5, 0.5] } }"),
            "unknown material type 'plastic' in material 'wall'; expected one of: diffuse, conductor, dielectric", 2, 28),
        ["albedo_typo"] = new(Scene(materials: "{ wall: { type: diffuse, albdo: [0.5, 0.5, 0.5] } }"),
            "unknown key 'albdo' in material 'wall'; did you mean 'albedo'?", 2, 37),
        ["key_of_other_material_type"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: [0.5, 0.5, 0.5], roughness: 0.2 } }"),
            "unknown key 'roughness' in material 'wall'; expected one of: type, albedo, emission, two_sided", 2, 62),
        ["diffuse_missing_albedo"] = new(Scene(materials: "{ wall: { type: diffuse } }"),
            "material 'wall' is missing required key 'albedo'", 2, 20),
        // albedo > 1 would reflect more energy than arrives (energy conservation)
        ["albedo_above_one"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: [1.5, 0.5, 0.5] } }"),
            "component 1 of 'albedo' in material 'wall' must be in [0, 1], got 1.5; an albedo above 1 would reflect more light than arrives", 2, 46),
        ["albedo_negative"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: [0.5, -0.1, 0.5] } }"),
            "component 2 of 'albedo' in material 'wall' must be in [0, 1], got -0.1; an albedo above 1 would reflect more light than arrives", 2, 51),
        ["albedo_scalar"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: 0.5 } }"),
            "'albedo' in material 'wall' must be an RGB triple [r, g, b] or a mapping { checker: ... }, got '0.5'", 2, 45),
        ["emission_negative"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: [0, 0, 0], emission: [10, 10, -1] } }"),
            "component 3 of 'emission' in material 'wall' must be >= 0, got -1", 2, 75),
        ["emission_infinite"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: [0, 0, 0], emission: [.inf, 1, 1] } }"),
            "component 1 of 'emission' in material 'wall' must be a finite number, got '.inf'", 2, 67),
        // YAML 1.2.2: only true/false spellings are booleans; 'yes' is YAML 1.1 (from memory)
        ["two_sided_yes"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: [0, 0, 0], two_sided: yes } }"),
            "'two_sided' in material 'wall' must be true or false, got 'yes'", 2, 67),
        ["roughness_above_one"] = new(Scene(materials: "{ wall: { type: conductor, roughness: 1.5, f0: [0.9, 0.6, 0.3] } }"),
            "'roughness' in material 'wall' must be in [0, 1], got 1.5", 2, 50),
        ["roughness_negative"] = new(Scene(materials: "{ wall: { type: conductor, roughness: -0.2, f0: [0.9, 0.6, 0.3] } }"),
            "'roughness' in material 'wall' must be in [0, 1], got -0.2", 2, 50),
        ["f0_above_one"] = new(Scene(materials: "{ wall: { type: conductor, roughness: 0.2, f0: [0.9, 1.2, 0.3] } }"),
            "component 2 of 'f0' in material 'wall' must be in [0, 1], got 1.2; an f0 above 1 would reflect more light than arrives", 2, 65),
        ["conductor_missing_f0"] = new(Scene(materials: "{ wall: { type: conductor, roughness: 0.2 } }"),
            "material 'wall' is missing required key 'f0'", 2, 20),
        ["ior_zero"] = new(Scene(materials: "{ wall: { type: dielectric, ior: 0 } }"),
            "'ior' in material 'wall' must be > 0, got 0", 2, 45),
        ["ior_negative"] = new(Scene(materials: "{ wall: { type: dielectric, ior: -1.5 } }"),
            "'ior' in material 'wall' must be > 0, got -1.5", 2, 45),
        ["ior_infinite"] = new(Scene(materials: "{ wall: { type: dielectric, ior: .inf } }"),
            "'ior' in material 'wall' must be a finite number, got '.inf'", 2, 45),
        ["checker_scale_zero"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: { checker: { scale: 0, a: [0.8, 0.8, 0.8], b: [0.1, 0.1, 0.1] } } } }"),
            "'scale' in the checker of material 'wall' must be > 0, got 0", 2, 65),
        ["checker_key_typo"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: { checkr: { scale: 1, a: [0.8, 0.8, 0.8], b: [0.1, 0.1, 0.1] } } } }"),
            "unknown key 'checkr' in the albedo of material 'wall'; did you mean 'checker'?", 2, 47),
        ["checker_missing_b"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: { checker: { scale: 1, a: [0.8, 0.8, 0.8] } } } }"),
            "the checker of material 'wall' is missing required key 'b'", 2, 56),
        ["checker_a_above_one"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: { checker: { scale: 1, a: [0.8, 2, 0.8], b: [0.1, 0.1, 0.1] } } } }"),
            "component 2 of 'a' in the checker of material 'wall' must be in [0, 1], got 2; an albedo above 1 would reflect more light than arrives", 2, 77),
        ["checker_not_a_mapping"] = new(Scene(materials: "{ wall: { type: diffuse, albedo: { checker: 5 } } }"),
            "'checker' in the albedo of material 'wall' must be a mapping, got '5'", 2, 56),
        ["shapes_mapping"] = new(Scene(shapes: "{ ball: 1 }"),
            "'shapes' must be a sequence of shapes, got a mapping", 3, 9),
        ["shapes_empty"] = new(Scene(shapes: "[]"),
            "'shapes' must hold at least one shape", 3, 9),
        ["shape_scalar"] = new(Scene(shapes: "[ sphere ]"),
            "shape 1 must be a mapping, got 'sphere'", 3, 11),
        ["shape_missing_type"] = new(Scene(shapes: "[ { center: [0, 0, 0], radius: 1, material: wall } ]"),
            "shape 1 is missing required key 'type'", 3, 11),
        ["shape_type_unknown"] = new(Scene(shapes: "[ { type: cube, center: [0, 0, 0], material: wall } ]"),
            "unknown shape type 'cube' in shape 1; expected one of: sphere, quad, disk, mesh", 3, 19),
        ["shape_type_typo"] = new(Scene(shapes: "[ { type: spere, center: [0, 0, 0], radius: 1, material: wall } ]"),
            "unknown shape type 'spere' in shape 1; did you mean 'sphere'?", 3, 19),
        ["material_name_typo"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 1, material: wal } ]"),
            "unknown material 'wal' in shape 1 (sphere); did you mean 'wall'?", 3, 67),
        ["material_name_unknown"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 1, material: marble } ]"),
            "unknown material 'marble' in shape 1 (sphere); the scene defines: wall", 3, 67),
        ["material_name_mapping"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 1, material: { type: diffuse } } ]"),
            "'material' in shape 1 (sphere) must be a name, got a mapping", 3, 67),
        ["sphere_radius_zero"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 0, material: wall } ]"),
            "'radius' in shape 1 (sphere) must be > 0, got 0", 3, 54),
        ["sphere_radius_negative"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: -2, material: wall } ]"),
            "'radius' in shape 1 (sphere) must be > 0, got -2", 3, 54),
        ["sphere_missing_radius"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], material: wall } ]"),
            "shape 1 (sphere) is missing required key 'radius'", 3, 11),
        ["sphere_key_typo"] = new(Scene(shapes: "[ { type: sphere, centre: [0, 0, 0], radius: 1, material: wall } ]"),
            "unknown key 'centre' in shape 1 (sphere); did you mean 'center'?", 3, 27),
        ["sphere_with_transform"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 1, material: wall, transform: {} } ]"),
            "unknown key 'transform' in shape 1 (sphere); expected one of: type, center, radius, material", 3, 73),
        ["sphere_center_overflow"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, -1e400], radius: 1, material: wall } ]"),
            "component 3 of 'center' in shape 1 (sphere) must be a finite number, got '-1e400'", 3, 42),
        ["second_shape_counted"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 1, material: wall }, { type: sphere, center: [0, 0, 0], radius: -1, material: wall } ]"),
            "'radius' in shape 2 (sphere) must be > 0, got -1", 3, 118),
        ["quad_parallel_edges"] = new(Scene(shapes: "[ { type: quad, corner: [0, 0, 0], edge_u: [1, 0, 0], edge_v: [-3, 0, 0], material: wall } ]"),
            "'edge_u' and 'edge_v' in shape 1 (quad) are parallel; the quad has no area", 3, 71),
        ["quad_zero_edge"] = new(Scene(shapes: "[ { type: quad, corner: [0, 0, 0], edge_u: [0, 0, 0], edge_v: [0, 1, 0], material: wall } ]"),
            "'edge_u' in shape 1 (quad) must not be the zero vector", 3, 52),
        ["quad_missing_edge_v"] = new(Scene(shapes: "[ { type: quad, corner: [0, 0, 0], edge_u: [1, 0, 0], material: wall } ]"),
            "shape 1 (quad) is missing required key 'edge_v'", 3, 11),
        ["disk_zero_normal"] = new(Scene(shapes: "[ { type: disk, center: [0, 0, 0], normal: [0, 0, 0], radius: 1, material: wall } ]"),
            "'normal' in shape 1 (disk) must not be the zero vector", 3, 52),
        ["disk_radius_negative"] = new(Scene(shapes: "[ { type: disk, center: [0, 0, 0], normal: [0, 1, 0], radius: -1, material: wall } ]"),
            "'radius' in shape 1 (disk) must be > 0, got -1", 3, 71),
        ["mesh_missing_file"] = new(Scene(shapes: "[ { type: mesh, material: wall } ]"),
            "shape 1 (mesh) is missing required key 'file'", 3, 11),
        ["mesh_file_not_found"] = new(Scene(shapes: "[ { type: mesh, file: meshes/absent.obj, material: wall } ]"),
            "cannot read mesh file 'meshes/absent.obj': ...", 3, 31),
        ["mesh_without_faces"] = new(Scene(shapes: "[ { type: mesh, file: meshes/points.obj, material: wall } ]"),
            "mesh file 'meshes/points.obj' has no faces", 3, 31),
        ["mesh_scale_zero"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { scale: 0 } } ]"),
            "'scale' in the transform of shape 1 (mesh) must not be 0; the mesh would collapse to a point", 3, 83),
        ["mesh_scale_zero_component"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { scale: [1, 0, 1] } } ]"),
            "component 2 of 'scale' in the transform of shape 1 (mesh) must not be 0; the mesh would collapse to a plane", 3, 87),
        ["mesh_scale_mapping"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { scale: { x: 2 } } } ]"),
            "'scale' in the transform of shape 1 (mesh) must be a number or a 3-vector [x, y, z], got a mapping", 3, 83),
        ["mesh_rotate_zero_axis"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { rotate: { axis: [0, 0, 0], degrees: 30 } } } ]"),
            "'axis' in the rotation of shape 1 (mesh) must not be the zero vector", 3, 92),
        ["mesh_rotate_missing_degrees"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { rotate: { axis: [0, 1, 0] } } } ]"),
            "the rotation of shape 1 (mesh) is missing required key 'degrees'", 3, 84),
        ["mesh_transform_key_typo"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { rotation: { axis: [0, 1, 0], degrees: 30 } } } ]"),
            "unknown key 'rotation' in the transform of shape 1 (mesh); expected one of: translate, rotate, scale", 3, 76),
        // Numbers above 1e100 are refused where they stand, before any transform could overflow.
        ["mesh_transform_huge_number"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { scale: 1e308, translate: [1e308, 0, 0] } } ]"),
            "component 1 of 'translate' in the transform of shape 1 (mesh) must be at most 1e100 in magnitude, got '1e308'", 3, 102),
        // Scene scale (scenes/README.md): lengths below 1e-6 · (1 + the shape's largest coordinate magnitude) cannot be computed reliably.
        ["scale_sphere_radius_1e-200"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 1e-200, material: wall } ]"),
            "'radius' in shape 1 (sphere) is 1E-200, below the scene-scale range...", 3, 54),
        ["scale_sphere_radius_relative"] = new(Scene(shapes: "[ { type: sphere, center: [1e6, 0, 0], radius: 0.5, material: wall } ]"),
            "'radius' in shape 1 (sphere) is 0.5, below the scene-scale range: lengths must be at least 1e-6 · (1 + the largest coordinate magnitude, here 1E+06) = 1", 3, 56),
        ["scale_disk_radius"] = new(Scene(shapes: "[ { type: disk, center: [0, 0, 0], normal: [0, 1, 0], radius: 1e-7, material: wall } ]"),
            "'radius' in shape 1 (disk) is 1E-07, below the scene-scale range...", 3, 71),
        ["scale_quad_edge"] = new(Scene(shapes: "[ { type: quad, corner: [0, 0, 0], edge_u: [1, 0, 0], edge_v: [0, 1e-9, 0], material: wall } ]"),
            "the length of 'edge_v' in shape 1 (quad) is 1E-09, below the scene-scale range...", 3, 71),
        ["scale_mesh_transform"] = new(Scene(shapes: "[ { type: mesh, file: meshes/tri.obj, material: wall, transform: { scale: 1e-200 } } ]"),
            "the extent of 'meshes/tri.obj' in shape 1 (mesh) is...", 3, 74),
        ["scale_quad_edge_above"] = new(Scene(shapes: "[ { type: quad, corner: [0, 0, 0], edge_u: [1e99, 0, 0], edge_v: [0, 1e99, 0], material: wall } ]"),
            "the length of 'edge_u' in shape 1 (quad) is 1E+99, above the scene-scale range: quads, disks and meshes must be at most 1e60 across", 3, 52),
        ["scale_aperture"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48], aperture_radius: 1e-12 }"),
            "'aperture_radius' in camera is 1E-12, below the scene-scale range...", 1, 100),
        ["scale_focus_distance"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 0], fov: 40, resolution: [64, 48], aperture_radius: 0.1, focus_distance: 1e-200 }"),
            "'focus_distance' in camera is 1E-200, below the scene-scale range...", 1, 121),
        ["scale_default_focus_distance"] = new(Scene(camera: "{ position: [0, 1, 5], look_at: [0, 1, 4.9999999999], fov: 40, resolution: [64, 48], aperture_radius: 0.1 }"),
            "the focus distance (from 'position' to 'look_at' in camera) is...", 1, 41),
        ["sphere_radius_huge"] = new(Scene(shapes: "[ { type: sphere, center: [0, 0, 0], radius: 1e200, material: wall } ]"),
            "'radius' in shape 1 (sphere) must be at most 1e100 in magnitude, got '1e200'", 3, 54),
    };

    public static TheoryData<string> Names => new(Corpus.Keys);

    [Theory]
    [MemberData(nameof(Names))]
    public void Malformed_scene_is_refused_with_its_message_and_position(string name)
    {
        Case c = Corpus[name];
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(c.Text, "room.yaml", meshes.Path));
        string expected = $"room.yaml:{c.Line}:{c.Column}: {c.Message}";
        Assert.DoesNotContain('\n', e.Message);
        if (c.Message.EndsWith("...", StringComparison.Ordinal))
            Assert.StartsWith(expected[..^3], e.Message, StringComparison.Ordinal);
        else
            Assert.Equal(expected, e.Message);
    }

    [Fact]
    public void The_corpus_is_large_enough()
    {
        // Issue 4 asks for at least 60 malformed scenes.
        Assert.True(Corpus.Count >= 60, $"{Corpus.Count} rows");
    }

    [Fact]
    public void The_base_scene_of_the_corpus_is_valid()
    {
        // Without this, a row could fail for a reason other than the one line it changes.
        SceneDescription scene = SceneLoader.Parse(Scene(), "room.yaml", meshes.Path);
        Assert.Single(scene.Shapes);
    }
}
