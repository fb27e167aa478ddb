#!/usr/bin/env python3
"""Writes scenes/meshes/bowl.obj: a bowl turned on a lathe (our own demo geometry).

The profile runs up the outside of a flattened half-sphere, over a rounded rim and down the
inside; it is swept around +Y in SEGMENTS steps. Faces wind counter-clockwise seen from
outside the material, so geometric normals point out of the bowl's wall; per-vertex normals
come from the profile's tangent.
"""
import math
import os

SEGMENTS = 48
here = os.path.dirname(os.path.abspath(__file__))
out = os.path.join(here, "..", "..", "scenes", "meshes", "bowl.obj")

# Profile points (r, y) from the centre of the base outward and up, then over the rim and
# back down inside: a closed cross-section of the wall.
profile = []
R_OUT, R_IN, H = 1.0, 0.92, 0.55
for k in range(0, 17):
    t = k / 16 * math.pi / 2          # outside: from the bottom (t=0) to the rim (t=pi/2)
    profile.append((R_OUT * math.sin(t), H * (1 - math.cos(t)) + 0.0))
for k in range(1, 6):                 # rim: a half circle joining outside and inside
    a = k / 6 * math.pi
    rr = (R_OUT + R_IN) / 2 + (R_OUT - R_IN) / 2 * math.cos(a)
    profile.append((rr, H + (R_OUT - R_IN) / 2 * math.sin(a)))
for k in range(16, -1, -1):           # inside: from the rim back down to the centre
    t = k / 16 * math.pi / 2
    profile.append((R_IN * math.sin(t), 0.06 + (H - 0.06) * (1 - math.cos(t)) * 0.98))

# Normals of the profile from central differences, turned outward from the material.
normals2d = []
for i, (r, y) in enumerate(profile):
    r0, y0 = profile[max(i - 1, 0)]
    r1, y1 = profile[min(i + 1, len(profile) - 1)]
    dr, dy = r1 - r0, y1 - y0
    n = (dy, -dr)  # the profile runs with the material on its left
    length = math.hypot(*n) or 1.0
    normals2d.append((n[0] / length, n[1] / length))

lines = ["# Lathe-turned bowl for the polished-bowl demo scene; written by tools/meshes/make_bowl.py."]
for (r, y) in profile:
    for s in range(SEGMENTS):
        phi = 2 * math.pi * s / SEGMENTS
        lines.append(f"v {r * math.cos(phi):.6f} {y:.6f} {r * math.sin(phi):.6f}")
for (nr, ny) in normals2d:
    for s in range(SEGMENTS):
        phi = 2 * math.pi * s / SEGMENTS
        lines.append(f"vn {nr * math.cos(phi):.6f} {ny:.6f} {nr * math.sin(phi):.6f}")
P = len(profile)
def idx(i, s):
    return i * SEGMENTS + (s % SEGMENTS) + 1
for i in range(P - 1):
    for s in range(SEGMENTS):
        a, b, c, d = idx(i, s), idx(i, s + 1), idx(i + 1, s + 1), idx(i + 1, s)
        # Skip the zero-area quads where the profile touches the axis.
        if profile[i][0] < 1e-9 and profile[i + 1][0] < 1e-9:
            continue
        lines.append(f"f {a}//{a} {d}//{d} {c}//{c} {b}//{b}")
with open(out, "w", newline="\n") as f:
    f.write("\n".join(lines) + "\n")
print(f"wrote {os.path.normpath(out)}")
