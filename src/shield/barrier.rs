//! The scene's flat sheets combined into one stack: parallel sheets with the air gaps
//! between them are one layered medium, solved exactly together.

use super::layers::Layer;
use super::material::Material;
use super::spectral::{Path, SideFrame};
use crate::field::Vec3;

/// One `[[shield]]` sheet as written: a point on its first face, its unit normal and
/// its layers from that face outwards.
#[derive(Clone, Debug)]
pub struct Sheet {
    /// Unique id.
    pub id: String,
    /// A point on the first face, m.
    pub origin: Vec3,
    /// Unit normal; the sheet fills origin .. origin + thickness · normal.
    pub normal: Vec3,
    /// (material, thickness in m) from the first face.
    pub layers: Vec<(Material, f64)>,
    /// Whether the sheet is in place (`fitted = false`: a design option that only
    /// sweeps with `compare` use).
    pub fitted: bool,
}

impl Sheet {
    /// Total thickness, m.
    pub fn thickness(&self) -> f64 {
        self.layers.iter().map(|l| l.1).sum()
    }
}

/// Where a point lies relative to the stack.
#[derive(Clone, Debug, PartialEq)]
pub enum Place {
    /// On the side the stack's normal points away from, this far (m) from it.
    Below(f64),
    /// On the side the normal points to, this far (m) beyond the last face.
    Above(f64),
    /// Within the sheet with this id.
    Inside(String),
    /// In the air gap between two sheets (ids).
    Between(String, String),
}

impl Place {
    /// Which side (false: below, true: above), if the point is outside the stack.
    pub fn side(&self) -> Option<bool> {
        match self {
            Place::Below(_) => Some(false),
            Place::Above(_) => Some(true),
            _ => None,
        }
    }
}

/// Parallel sheets as one stack.
#[derive(Clone, Debug)]
pub struct Barrier {
    /// A point on the first face, m.
    pub origin: Vec3,
    /// Unit normal, from the first face to the last.
    pub normal: Vec3,
    /// Unit vector in the faces.
    pub x: Vec3,
    /// Unit vector in the faces, normal × x.
    pub y: Vec3,
    /// Layers from the first face, air gaps included.
    pub layers: Vec<Layer>,
    /// Each sheet's id and extent (from, to) along the normal, m from `origin`.
    pub sheets: Vec<(String, f64, f64)>,
}

/// A sheet placed along the normal: (index, from, to, layers in stack order).
type Placed = (usize, f64, f64, Vec<(Material, f64)>);

/// Why sheets cannot be combined: the index of the offending sheet and the reason.
pub type BarrierError = (usize, String);

impl Barrier {
    /// Combines `sheets` (at least one). They must be parallel and must not overlap.
    pub fn new(sheets: &[Sheet]) -> Result<Barrier, BarrierError> {
        let first = &sheets[0];
        let normal = first.normal;
        let mut placed: Vec<Placed> = Vec::new();
        for (i, s) in sheets.iter().enumerate() {
            let cross = s.normal.cross(&normal).norm();
            if cross > 1e-9 {
                return Err((
                    i,
                    format!(
                        "sheet \"{}\" is not parallel to sheet \"{}\": strayflux combines \
                         parallel sheets only",
                        s.id, first.id
                    ),
                ));
            }
            let along = (s.origin - first.origin).dot(&normal);
            let t = s.thickness();
            if s.normal.dot(&normal) > 0.0 {
                placed.push((i, along, along + t, s.layers.clone()));
            } else {
                let mut rev = s.layers.clone();
                rev.reverse();
                placed.push((i, along - t, along, rev));
            }
        }
        placed.sort_by(|a, b| a.1.total_cmp(&b.1));
        let base = placed[0].1;
        let mut layers = Vec::new();
        let mut extents = Vec::new();
        let mut end = base;
        for (n, (i, from, to, ls)) in placed.iter().enumerate() {
            if n > 0 {
                let gap = from - end;
                if gap < -1e-12 * (1.0 + end.abs()) {
                    return Err((
                        *i,
                        format!(
                            "sheet \"{}\" overlaps sheet \"{}\": sheets may touch but not overlap",
                            sheets[*i].id,
                            extents
                                .last()
                                .map_or("", |e: &(String, f64, f64)| e.0.as_str())
                        ),
                    ));
                }
                if gap > 0.0 {
                    layers.push(Layer::air(gap));
                }
            }
            for (m, t) in ls {
                layers.push(Layer {
                    conductivity: m.conductivity,
                    relative_permeability: m.relative_permeability,
                    thickness: *t,
                });
            }
            extents.push((sheets[*i].id.clone(), from - base, to - base));
            end = *to;
        }
        let origin = first.origin + normal * base;
        let x = crate::field::any_perpendicular(&normal);
        let y = normal.cross(&x);
        Ok(Barrier {
            origin,
            normal,
            x,
            y,
            layers,
            sheets: extents,
        })
    }

    /// Total thickness from the first face to the last, m.
    pub fn thickness(&self) -> f64 {
        self.sheets.last().map_or(0.0, |s| s.2)
    }

    /// Signed distance of `r` (m) along the normal from the first face, m.
    pub fn height(&self, r: &Vec3) -> f64 {
        (r - self.origin).dot(&self.normal)
    }

    /// Where `r` lies.
    pub fn place(&self, r: &Vec3) -> Place {
        let s = self.height(r);
        let d = self.thickness();
        if s < 0.0 {
            return Place::Below(-s);
        }
        if s > d {
            return Place::Above(s - d);
        }
        for (n, (id, from, to)) in self.sheets.iter().enumerate() {
            if s >= *from && s <= *to {
                return Place::Inside(id.clone());
            }
            if let Some(next) = self.sheets.get(n + 1)
                && s > *to
                && s < next.1
            {
                return Place::Between(id.clone(), next.0.clone());
            }
        }
        Place::Inside(self.sheets[0].0.clone())
    }

    /// The frame and layer order seen by a source on `side` (false: below).
    pub fn seen_from(&self, side: bool) -> (SideFrame, Vec<Layer>) {
        let d = self.thickness();
        if side {
            let mut layers = self.layers.clone();
            layers.reverse();
            (
                SideFrame {
                    origin: self.origin + self.normal * d,
                    x: self.x,
                    y: -self.y,
                    z: -self.normal,
                    thickness: d,
                },
                layers,
            )
        } else {
            (
                SideFrame {
                    origin: self.origin,
                    x: self.x,
                    y: self.y,
                    z: self.normal,
                    thickness: d,
                },
                self.layers.clone(),
            )
        }
    }

    /// The path from a source on `source_side` to a target on `target_side`.
    pub fn path(source_side: bool, target_side: bool) -> Path {
        if source_side == target_side {
            Path::Reflected
        } else {
            Path::Transmitted
        }
    }
}
