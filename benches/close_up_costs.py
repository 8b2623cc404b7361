#!/usr/bin/env python3
"""Cost model (not a measurement) of two ways to accelerate the close-up map of
benches/maps.rs, `winding-close`: a 128^3 grid 50 mm wide around the 21 120-segment
helix (10 mm radius, 20 mm long, 40 turns), tolerance 1e-6.

Both keep strayflux's rule that a proven bound, not an estimate, decides where an
approximation is used. Both walk an octree of the grid (boxes of 128, 64, 32, 16, 8
points a side). A box splits the segments it was handed into far ones, whose field it
approximates for all its points, and near ones, handed to its eight children; a box of
`--leaf` points a side or fewer sums its near segments directly. The cost is counted in
segment-point pairs of the direct kernel (about 1e9 per second on the development
machine), with an approximation's work converted at 30 flops a pair.

* chebyshev: the far segments' field is evaluated exactly at the box's n^3 tensor
  Chebyshev points and interpolated. A segment is far when it is at least KAPPA box
  half-widths from the box. The proven bound for tensor Chebyshev interpolation
  (Trefethen, Approximation Theory and Approximation Practice, 2013, Thm 8.2 with the
  Lebesgue constants of Thm 15.2) with the field bounded on the Bernstein ellipse needs
  degree about 19 at KAPPA = 2 for a bound of 1e-8 of the far field's gross size.
* taylor: the far segments are put into a local Taylor expansion of degree p about the
  box centre (2 Gauss nodes a segment, each node costing the Lindsay-Krasny recurrence
  over all terms). A segment is far when t = (box half-diagonal)/(distance) <= T_MAX(p),
  where strayflux's own truncation bound sqrt(2) t^(p+1) ((p+2)-(p+1)t)/(1-t)^2 is
  about 1e-8.

With the proven bounds neither gets the map under 10 s at 1e9 pairs/s: the gain is
1.7-2.8x (16-26 s). Chebyshev at degree 12 would reach 8.5 s, but nothing proves its
error there. A fast multipole method would also need translations of the expansions
between boxes.

    python3 benches/close_up_costs.py [--half 25] [--leaf 8]
"""

import argparse

import numpy as np

CELLS = 128
SEGMENTS = 21120


def helix():
    t = np.linspace(0.0, 40 * 2 * np.pi, SEGMENTS + 1)
    z = np.linspace(-0.01, 0.01, SEGMENTS + 1)
    v = np.stack([0.01 * np.cos(t), 0.01 * np.sin(t), z], 1)
    mid = (v[1:] + v[:-1]) / 2
    half_len = np.linalg.norm(v[1:] - v[:-1], axis=1) / 2
    return mid, half_len


def cost(mid, half_len, half, leaf, far_of, far_cost):
    """Pairs for the whole grid; far_of(box lo, hi, segments) -> far mask."""
    h = 2 * half / (CELLS - 1)
    total = 0.0
    stack = [(np.zeros(3, int), CELLS, np.arange(SEGMENTS))]
    while stack:
        i0, m, segs = stack.pop()
        if m <= leaf or len(segs) == 0:
            total += m**3 * len(segs)
            continue
        lo = -half + i0 * h
        hi = lo + (m - 1) * h
        far = far_of(lo, hi, segs)
        total += far_cost(m, int(far.sum()))
        near = segs[~far]
        k = m // 2
        for dx in (0, k):
            for dy in (0, k):
                for dz in (0, k):
                    stack.append((i0 + np.array([dx, dy, dz]), k, near))
    return total


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--half", type=float, default=0.025, help="grid half-width, m")
    ap.add_argument("--leaf", type=int, default=8)
    a = ap.parse_args()
    mid, half_len = helix()
    direct = CELLS**3 * SEGMENTS
    print(f"direct: {direct:.3g} pairs, {direct / 1e9:.1f} s at 1e9 pairs/s")

    kappa = 2.0
    for n in (12, 19):

        def far_box(lo, hi, segs):
            gap = np.maximum(0.0, np.maximum(lo - mid[segs], mid[segs] - hi))
            dist = np.linalg.norm(gap, axis=1) - half_len[segs]
            return dist >= kappa * (hi[0] - lo[0]) / 2

        pairs = cost(
            mid, half_len, a.half, max(a.leaf, n), far_box, lambda m, f: n**3 * f + 3 * m**3
        )
        note = "proven-bound degree" if n == 19 else "degree without a proven bound"
        print(
            f"chebyshev n={n} ({note}): {pairs:.3g} pairs, {direct / pairs:.1f}x, "
            f"{pairs / 1e9:.1f} s"
        )

    for p, t_max in ((12, 0.19), (16, 0.27), (20, 0.34), (24, 0.40)):
        terms = (p + 1) * (p + 2) * (p + 3) // 6
        per_node = terms * 13 / 30  # recurrence + 3 accumulations a term, in pairs

        def far_ball(lo, hi, segs):
            c = (lo + hi) / 2
            rho = np.linalg.norm(hi - lo) / 2
            dist = np.linalg.norm(mid[segs] - c, axis=1) - half_len[segs]
            return dist * t_max >= rho

        pairs = cost(
            mid,
            half_len,
            a.half,
            a.leaf,
            far_ball,
            lambda m, f: 2 * per_node * f + 3 * m**3,
        )
        print(f"taylor p={p}: {pairs:.3g} pairs, {direct / pairs:.1f}x, {pairs / 1e9:.1f} s")


if __name__ == "__main__":
    main()
