//! The multi-index tables of the Cartesian series and the per-thread scratch arrays
//! its evaluations fill.

use super::MAX_ORDER;

/// Multi-index tables for degrees 0..=`MAX_ORDER` + 1.
#[derive(Clone)]
pub(super) struct Indices {
    /// (k1, k2, k3) of each entry, ordered by degree.
    pub(super) k: Vec<[usize; 3]>,
    /// First entry of each degree; `start[n]..start[n + 1]` is degree n.
    pub(super) start: Vec<usize>,
    /// Entry of k − e_i, or `usize::MAX`.
    pub(super) minus1: Vec<[usize; 3]>,
    /// Entry of k − 2e_i, or `usize::MAX`.
    pub(super) minus2: Vec<[usize; 3]>,
    /// As `minus1`, with a zero slot (index `TERMS`) for missing entries.
    pub(super) minus1z: Vec<[usize; 3]>,
    /// As `minus2`, with the zero slot for missing entries.
    pub(super) minus2z: Vec<[usize; 3]>,
}

/// The entry of multi-index `k` in the tables.
pub(super) fn index_of(k: [usize; 3]) -> usize {
    // Entries before degree n: C(n + 2, 3); within degree n, ordered by k1 descending
    // then k2 descending.
    let n = k[0] + k[1] + k[2];
    let before = n * (n + 1) * (n + 2) / 6;
    let r = n - k[0];
    // Entries with larger k1 at this degree: Σ_{j=0}^{r−1} (j + 1) = r(r + 1)/2.
    before + r * (r + 1) / 2 + (r - k[1])
}

impl Indices {
    /// Fills the Taylor coefficients of degree `deg` in `a` from the two degrees
    /// below (the recurrence of the module's doc comment), for the point at `dv` (m)
    /// from the centre, `r2` = |dv|². Missing neighbours count as zero.
    #[inline(always)]
    pub(super) fn recur(&self, a: &mut [f64], deg: usize, dv: &[f64; 3], r2: f64) {
        let nf = deg as f64;
        let (c1, c2) = ((2.0 * nf - 1.0) / (nf * r2), (nf - 1.0) / (nf * r2));
        for e in self.start[deg]..self.start[deg + 1] {
            let m1 = &self.minus1[e];
            let m2 = &self.minus2[e];
            let mut s1 = 0.0;
            let mut s2 = 0.0;
            for i in 0..3 {
                if m1[i] != usize::MAX {
                    s1 += dv[i] * a[m1[i]];
                }
                if m2[i] != usize::MAX {
                    s2 += a[m2[i]];
                }
            }
            a[e] = c1 * s1 - c2 * s2;
        }
    }

    pub(super) fn new(max_degree: usize) -> Self {
        let mut k = Vec::new();
        let mut start = Vec::new();
        for n in 0..=max_degree {
            start.push(k.len());
            for k1 in (0..=n).rev() {
                for k2 in (0..=n - k1).rev() {
                    k.push([k1, k2, n - k1 - k2]);
                }
            }
        }
        start.push(k.len());
        let less = |kk: [usize; 3], i: usize, by: usize| {
            if kk[i] < by {
                usize::MAX
            } else {
                let mut m = kk;
                m[i] -= by;
                index_of(m)
            }
        };
        let minus1 = k
            .iter()
            .map(|&kk| std::array::from_fn(|i| less(kk, i, 1)))
            .collect();
        let minus2 = k
            .iter()
            .map(|&kk| std::array::from_fn(|i| less(kk, i, 2)))
            .collect();
        let zero = |v: &Vec<[usize; 3]>| -> Vec<[usize; 3]> {
            v.iter()
                .map(|m| m.map(|i| if i == usize::MAX { TERMS } else { i }))
                .collect()
        };
        let (minus1z, minus2z) = (zero(&minus1), zero(&minus2));
        Indices {
            k,
            start,
            minus1,
            minus2,
            minus1z,
            minus2z,
        }
    }
}

/// Entries of the multi-index table through degree MAX_ORDER + 1: C(MAX_ORDER + 4, 3).
pub(super) const TERMS: usize = (MAX_ORDER + 2) * (MAX_ORDER + 3) * (MAX_ORDER + 4) / 6;

/// A per-thread scratch array, taken for one evaluation and put back when dropped
/// (every entry is written before it is read, so it is never cleared).
pub(super) struct Scratch<T: 'static> {
    home: &'static std::thread::LocalKey<std::cell::Cell<Option<Box<T>>>>,
    made: fn() -> Box<T>,
    array: Option<Box<T>>,
}

impl<T: 'static> Scratch<T> {
    fn take(
        home: &'static std::thread::LocalKey<std::cell::Cell<Option<Box<T>>>>,
        made: fn() -> Box<T>,
    ) -> Self {
        let array = home.with(|c| c.take()).or_else(|| Some(made()));
        Scratch { home, made, array }
    }

    pub(super) fn get(&mut self) -> &mut T {
        self.array.get_or_insert_with(self.made)
    }
}

impl<T: 'static> Drop for Scratch<T> {
    fn drop(&mut self) {
        if let Some(b) = self.array.take() {
            self.home.with(|c| c.set(Some(b)));
        }
    }
}

thread_local! {
    /// The Taylor coefficients a_k of [`FarField::b`] and [`FarField::a_degrees`].
    static COEFFICIENTS: std::cell::Cell<Option<Box<[f64; TERMS]>>> =
        const { std::cell::Cell::new(None) };
    /// The four-lane coefficients of [`FarField::b4`], with one extra slot held at zero.
    static LANES: std::cell::Cell<Option<Box<[wide::f64x4; TERMS + 1]>>> =
        const { std::cell::Cell::new(None) };
}

/// The scratch array of the one-point series.
pub(super) fn coefficients() -> Scratch<[f64; TERMS]> {
    Scratch::take(&COEFFICIENTS, || Box::new([0.0; TERMS]))
}

/// The scratch array of the four-lane series.
pub(super) fn lane_coefficients() -> Scratch<[wide::f64x4; TERMS + 1]> {
    Scratch::take(&LANES, || Box::new([wide::f64x4::ZERO; TERMS + 1]))
}
