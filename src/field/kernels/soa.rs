//! A polyline's geometry as a structure of arrays, the layout every kernel reads.

use crate::field::Vec3;
use wide::f64x4;

/// A polyline's geometry laid out for the vector kernel.
#[derive(Clone, Debug, Default)]
pub(crate) struct Soa {
    pub(super) x: Vec<f64>,
    pub(super) y: Vec<f64>,
    pub(super) z: Vec<f64>,
    pub(super) ex: Vec<f64>,
    pub(super) ey: Vec<f64>,
    pub(super) ez: Vec<f64>,
    pub(super) len: Vec<f64>,
    /// Segment vectors b − a (m).
    pub(super) lx: Vec<f64>,
    pub(super) ly: Vec<f64>,
    pub(super) lz: Vec<f64>,
    /// L + max(L/100, 2a) per segment (m): the eight-lane field's safe Ri + Rf.
    pub(super) reach: Vec<f64>,
    /// The wire radius a the reach was made for (m).
    wire_radius: f64,
}

/// The per-segment arrays of the eight-lane field kernel, all in metres.
#[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
pub(crate) struct FieldArrays<'a> {
    /// Segment vectors b − a: x, y and z.
    pub(crate) lx: &'a [f64],
    pub(crate) ly: &'a [f64],
    pub(crate) lz: &'a [f64],
    /// Segment lengths L.
    pub(crate) len: &'a [f64],
    /// L + max(L/100, 2a): beyond this Ri + Rf the closed form is safe.
    pub(crate) reach: &'a [f64],
}

impl Soa {
    /// Lays out `vertices` (m) of a wire of radius `wire_radius` (m).
    pub(crate) fn new(vertices: &[Vec3], wire_radius: f64) -> Self {
        let mut s = Soa {
            wire_radius,
            ..Soa::default()
        };
        for v in vertices {
            s.x.push(v.x);
            s.y.push(v.y);
            s.z.push(v.z);
        }
        for w in vertices.windows(2) {
            let d = w[1] - w[0];
            let l = d.norm();
            let e = if l > 0.0 { d / l } else { Vec3::zeros() };
            s.ex.push(e.x);
            s.ey.push(e.y);
            s.ez.push(e.z);
            s.len.push(l);
            s.lx.push(d.x);
            s.ly.push(d.y);
            s.lz.push(d.z);
            s.reach.push(l + (0.01 * l).max(2.0 * wire_radius));
        }
        s
    }

    /// The wire radius (m) the layout was made for.
    #[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
    pub(crate) fn wire_radius(&self) -> f64 {
        self.wire_radius
    }

    /// Each segment's vector b − a, length and reach L + max(L/100, 2a) (m).
    #[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
    pub(crate) fn field_arrays(&self) -> FieldArrays<'_> {
        FieldArrays {
            lx: &self.lx,
            ly: &self.ly,
            lz: &self.lz,
            len: &self.len,
            reach: &self.reach,
        }
    }

    /// Number of segments laid out.
    pub(crate) fn segments(&self) -> usize {
        self.len.len()
    }

    /// The vertex coordinates (m): x, y and z, one more than the segments.
    pub(crate) fn vertex_arrays(&self) -> (&[f64], &[f64], &[f64]) {
        (&self.x, &self.y, &self.z)
    }

    /// Each segment's unit direction (x, y, z) and length (m).
    pub(crate) fn segment_arrays(&self) -> (&[f64], &[f64], &[f64], &[f64]) {
        (&self.ex, &self.ey, &self.ez, &self.len)
    }

    /// Unit direction of segment `k`.
    pub(crate) fn direction(&self, k: usize) -> Vec3 {
        Vec3::new(self.ex[k], self.ey[k], self.ez[k])
    }
}

/// Four consecutive values of `v` from index `k`.
pub(super) fn load(v: &[f64], k: usize) -> f64x4 {
    f64x4::from([v[k], v[k + 1], v[k + 2], v[k + 3]])
}

/// Distances (m) from `r` to every vertex of `soa`, into `dist`.
#[inline(always)]
pub(super) fn distances_into(soa: &Soa, r: &Vec3, dist: &mut Vec<f64>) {
    let n = soa.x.len();
    // Every entry is overwritten: only a change of length touches the allocation.
    dist.resize(n, 0.0);
    for (((d, x), y), z) in dist.iter_mut().zip(&soa.x).zip(&soa.y).zip(&soa.z) {
        let (dx, dy, dz) = (r.x - x, r.y - y, r.z - z);
        *d = (dx * dx + dy * dy + dz * dz).sqrt();
    }
}
