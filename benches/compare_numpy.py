#!/usr/bin/env python3
"""The field of a 2000-segment polygon on a 64^3 grid: strayflux against the same
segment formula written the way an engineer would in numpy (vectorised over points and
segments, chunked to bound memory), in the same session on the same machine.

    cargo build --release
    python3 benches/compare_numpy.py [--cells 64] [--segments 2000] [--chunk 4096]

Both evaluate B of straight segments by the closed form of Hanson & Hirshman, "Compact
expressions for the Biot-Savart fields of a filamentary segment", Phys. Plasmas 9,
4410 (2002), eq. (2): B = mu0 I/4pi * 2L(Ri+Rf)/(Ri Rf ((Ri+Rf)^2 - L^2)) * e x (r - a).
strayflux runs `map --exact` (direct sums only, as the comparison asks) on a scene
holding the polygon and a box map of cells^3 cells (its wall time includes reading the
scene and writing the .vti); numpy computes the
same grid points. The script prints both times, the ratio and the largest relative
difference between the two fields at a sample of grid points (read back with Python
vtk when it is installed). Needs numpy; the field comparison needs vtk.
"""

import argparse
import math
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

MU0_OVER_4PI = 1.25663706212e-6 / (4 * math.pi)  # CODATA 2018 mu0 over 4 pi, H/m


def wavy_polygon(n):
    """The closed wavy polygon of benches/kernels.rs: about 20 mm radius, in z = 0."""
    t = 2 * math.pi * np.arange(n) / n
    r = 0.02 * (1 + 0.3 * np.cos(5 * t))
    v = np.stack([r * np.cos(t), r * np.sin(t), np.zeros(n)], axis=1)
    return np.vstack([v, v[:1]])


def numpy_field(vertices, points, chunk):
    """B (T per ampere) of the polyline at every point, vectorised, `chunk` points at a time."""
    a = vertices[:-1]
    b = vertices[1:]
    seg = b - a
    length = np.linalg.norm(seg, axis=1)
    e = seg / length[:, None]
    out = np.empty_like(points)
    for start in range(0, len(points), chunk):
        p = points[start:start + chunk]
        da = p[:, None, :] - a[None, :, :]          # (P, S, 3)
        db = p[:, None, :] - b[None, :, :]
        ri = np.sqrt(np.einsum("psk,psk->ps", da, da))
        rf = np.sqrt(np.einsum("psk,psk->ps", db, db))
        s = ri + rf
        factor = 2 * length[None, :] * s / (ri * rf * (s * s - length[None, :] ** 2))
        cross = np.cross(e[None, :, :], da)           # e x (r - a)
        out[start:start + chunk] = np.einsum("ps,psk->pk", factor, cross)
    return out * MU0_OVER_4PI


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--cells", type=int, default=64)
    ap.add_argument("--segments", type=int, default=2000)
    ap.add_argument("--chunk", type=int, default=4096)
    ap.add_argument("--binary", default=os.path.join(os.path.dirname(__file__), "..",
                                                     "target", "release", "strayflux"))
    args = ap.parse_args()
    n = args.cells
    verts = wavy_polygon(args.segments)
    lo, hi = np.array([-0.04, -0.04, 0.002]), np.array([0.04, 0.04, 0.042])
    with tempfile.TemporaryDirectory() as tmp:
        scene = os.path.join(tmp, "compare.toml")
        with open(scene, "w") as f:
            f.write("[scene]\ntitle = \"numpy comparison (invented geometry)\"\n")
            f.write("[solver]\nwire_radius = \"0.01 mm\"\n")
            f.write("[[source]]\nid = \"poly\"\nkind = \"polygon\"\nvertices = [")
            f.write(", ".join(f"[{float(x)!r}, {float(y)!r}, {float(z)!r}]" for x, y, z in verts[:-1]))
            f.write("]\ncurrent = { frequency = \"10 kHz\", peak = \"1 A\" }\n")
            f.write("[[map]]\nid = \"grid\"\nkind = \"box\"\n")
            f.write("min = [%r, %r, %r]\nmax = [%r, %r, %r]\n"
                    % tuple(float(v) for v in (*lo, *hi)))
            f.write(f"cells = [{n}, {n}, {n}]\n")
        out = os.path.join(tmp, "out")
        t0 = time.perf_counter()
        subprocess.run([args.binary, "map", scene, "--out", out, "--exact"], check=True,
                       stdout=subprocess.DEVNULL)
        t_rust = time.perf_counter() - t0

        axes = [np.linspace(lo[k], hi[k], n + 1) for k in range(3)]
        zz, yy, xx = np.meshgrid(axes[2], axes[1], axes[0], indexing="ij")
        points = np.stack([xx.ravel(), yy.ravel(), zz.ravel()], axis=1)  # x fastest, as VTK
        t0 = time.perf_counter()
        b_np = numpy_field(verts, points, args.chunk)
        t_np = time.perf_counter() - t0

        pairs = len(points) * args.segments
        print(f"grid {n + 1}^3 = {len(points)} points x {args.segments} segments = {pairs:.3e} pairs")
        print(f"strayflux map --exact (whole run): {t_rust:8.2f} s  ({pairs / t_rust:.3e} pairs/s)")
        print(f"numpy (chunk {args.chunk}):       {t_np:8.2f} s  ({pairs / t_np:.3e} pairs/s)")
        print(f"ratio numpy / strayflux:    {t_np / t_rust:8.1f}")
        try:
            import vtk
            from vtk.util.numpy_support import vtk_to_numpy
        except ImportError:
            print("(vtk not installed: field comparison skipped)")
            return
        r = vtk.vtkXMLImageDataReader()
        r.SetFileName(os.path.join(out, "grid.vti"))
        r.Update()
        b_re = vtk_to_numpy(r.GetOutput().GetPointData().GetArray("B_re"))
        # strayflux stores the peak phasor for 1 A peak: B per ampere.
        sample = slice(None, None, max(1, len(points) // 5000))
        diff = np.linalg.norm(b_re[sample] - b_np[sample], axis=1)
        rel = diff / np.linalg.norm(b_np[sample], axis=1)
        print(f"largest relative difference over {len(rel)} sampled points: {rel.max():.2e}")


if __name__ == "__main__":
    sys.exit(main())
