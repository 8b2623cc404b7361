//! Building the moments M_{i,k} of a source's segments, in chunks of 64 segments
//! per task, four quadrature nodes per lane group, terms in cache-sized blocks.

use super::indices::Indices;
use crate::field::Vec3;

/// Gauss–Legendre nodes and weights on [0, 1] exact for polynomials of degree `order`
/// along a segment: (t, weight).
pub(super) fn moment_nodes(order: usize) -> Vec<(f64, f64)> {
    let (gx, gw) = crate::quadrature::gauss_legendre(order / 2 + 1);
    gx.iter()
        .zip(&gw)
        .map(|(x, w)| ((x + 1.0) / 2.0, w / 2.0))
        .collect()
}

/// Terms accumulated together by [`chunk_moments`]: their lane sums (3 × 32 bytes each)
/// stay in the first-level cache.
const TERM_BLOCK: usize = 128;

/// Four lanes of f64: plain arrays, which the compiler turns into vector code of the
/// width the calling function is compiled for.
type Quad = [f64; 4];

/// The moments M_{i,k} (|k| ≤ `order`, the first `terms` entries of `idx`) of the
/// segments `chunk` (start relative to the centre m, direction × length m, weight),
/// integrated with `nodes` (t on [0, 1], weight).
///
/// With AVX2 (detected at run time) the same source runs in 256-bit registers: the
/// same IEEE operations in the same order in every lane, so the same bits.
pub(super) fn chunk_moments(
    chunk: &[(Vec3, Vec3, f64)],
    nodes: &[(f64, f64)],
    idx: &Indices,
    order: usize,
    terms: usize,
) -> Vec<[f64; 3]> {
    #[cfg(target_arch = "x86_64")]
    if crate::field::simd() >= crate::field::Simd::Avx2 {
        // SAFETY: the CPU supports AVX2, checked by `simd`.
        return unsafe { chunk_moments_avx2(chunk, nodes, idx, order, terms) };
    }
    chunk_moments_body(chunk, nodes, idx, order, terms)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
pub(super) unsafe fn chunk_moments_avx2(
    chunk: &[(Vec3, Vec3, f64)],
    nodes: &[(f64, f64)],
    idx: &Indices,
    order: usize,
    terms: usize,
) -> Vec<[f64; 3]> {
    chunk_moments_body(chunk, nodes, idx, order, terms)
}

#[inline(always)]
pub(super) fn chunk_moments_body(
    chunk: &[(Vec3, Vec3, f64)],
    nodes: &[(f64, f64)],
    idx: &Indices,
    order: usize,
    terms: usize,
) -> Vec<[f64; 3]> {
    // Every (segment, node) pair, four to a group: its point y and its weight vector
    // f = d · w · wt, padded with zero weights to whole groups.
    let mut ys: Vec<Vec3> = Vec::with_capacity(chunk.len() * nodes.len() + 3);
    let mut fs: Vec<Vec3> = Vec::with_capacity(chunk.len() * nodes.len() + 3);
    for &(a, d, w) in chunk {
        for &(t, wt) in nodes {
            ys.push(a + d * t);
            fs.push(d * (w * wt));
        }
    }
    while !ys.len().is_multiple_of(4) {
        ys.push(Vec3::zeros());
        fs.push(Vec3::zeros());
    }
    let groups = ys.len() / 4;
    let lane = |v: &[Vec3], g: usize, c: usize| -> Quad {
        [
            v[4 * g][c],
            v[4 * g + 1][c],
            v[4 * g + 2][c],
            v[4 * g + 3][c],
        ]
    };
    // Power tables: the rows (g, axis) hold y_axis^e, e = 0..=order, of group g.
    let width = order + 1;
    let mut powers: Vec<Quad> = vec![[1.0; 4]; groups * 3 * width];
    let mut weights: Vec<[Quad; 3]> = Vec::with_capacity(groups);
    for g in 0..groups {
        for axis in 0..3 {
            let y = lane(&ys, g, axis);
            let row = &mut powers[(g * 3 + axis) * width..(g * 3 + axis + 1) * width];
            for e in 1..width {
                let prev = row[e - 1];
                row[e] = std::array::from_fn(|j| prev[j] * y[j]);
            }
        }
        weights.push([lane(&fs, g, 0), lane(&fs, g, 1), lane(&fs, g, 2)]);
    }
    let mut m = vec![[0.0; 3]; terms];
    let mut sums = [[[0.0f64; 4]; 3]; TERM_BLOCK];
    for first in (0..terms).step_by(TERM_BLOCK) {
        let block = &idx.k[first..(first + TERM_BLOCK).min(terms)];
        for s in sums.iter_mut() {
            *s = [[0.0; 4]; 3];
        }
        for (g, f) in weights.iter().enumerate() {
            let base = g * 3 * width;
            let (px, rest) = powers[base..base + 3 * width].split_at(width);
            let (py, pz) = rest.split_at(width);
            for (s, k) in sums.iter_mut().zip(block) {
                let (a, b, c) = (px[k[0]], py[k[1]], pz[k[2]]);
                let mut mono = [0.0f64; 4];
                for j in 0..4 {
                    mono[j] = a[j] * b[j] * c[j];
                }
                for comp in 0..3 {
                    for j in 0..4 {
                        s[comp][j] += f[comp][j] * mono[j];
                    }
                }
            }
        }
        for (out, s) in m[first..].iter_mut().zip(&sums[..block.len()]) {
            for c in 0..3 {
                let v = s[c];
                out[c] = (v[0] + v[1]) + (v[2] + v[3]);
            }
        }
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::multipole::MAX_ORDER;

    #[test]
    fn avx2_moment_build_gives_the_same_bits_as_the_portable_build() {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // 37 wandering segments (a partial last group of four nodes) at degree 24.
            let mut rng = crate::field::TestLcg(99);
            let mut next = || rng.next();
            let chunk: Vec<(Vec3, Vec3, f64)> = (0..37)
                .map(|_| {
                    let a = Vec3::new(next(), next(), next()) * 0.02;
                    let d = Vec3::new(next(), next(), next()) * 0.003;
                    (a, d, 1.0 + next())
                })
                .collect();
            let order = MAX_ORDER;
            let idx = Indices::new(order + 1);
            let terms = idx.start[order + 1];
            let nodes = moment_nodes(order);
            // SAFETY: AVX2 was detected above.
            let fast = unsafe { chunk_moments_avx2(&chunk, &nodes, &idx, order, terms) };
            let slow = chunk_moments_body(&chunk, &nodes, &idx, order, terms);
            assert_eq!(fast.len(), terms);
            for (k, (a, b)) in fast.iter().zip(&slow).enumerate() {
                for c in 0..3 {
                    assert_eq!(a[c].to_bits(), b[c].to_bits(), "term {k}");
                }
            }
            // And the moments are the sums they should be: the monopole moment of each
            // component is Σ w·d (the nodes' weights add to one).
            let m0: Vec3 = chunk.iter().map(|(_, d, w)| d * *w).sum();
            for c in 0..3 {
                assert!((slow[0][c] - m0[c]).abs() <= 1e-15 * m0.norm());
            }
        }
    }
}
