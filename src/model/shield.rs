//! Shields as placed: flat sheets, the stack they form, and enclosure boxes.
//!
//! These are data and geometry only; what a shield does to a field is in
//! [`crate::shield`].

use super::{Material, Source};
use crate::field::Vec3;
use crate::geometry::{Edge, Frame};
use std::f64::consts::PI;

/// One homogeneous layer of a stack.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Layer {
    /// Conductivity σ, S/m (0 for air).
    pub conductivity: f64,
    /// Relative permeability μr.
    pub relative_permeability: f64,
    /// Thickness, m.
    pub thickness: f64,
}

impl Layer {
    /// A gap of air (σ = 0, μr = 1) of `thickness` m.
    pub fn air(thickness: f64) -> Self {
        Layer {
            conductivity: 0.0,
            relative_permeability: 1.0,
            thickness,
        }
    }
}

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
    /// Which side, if the point is outside the stack.
    pub fn side(&self) -> Option<Side> {
        match self {
            Place::Below(_) => Some(Side::Below),
            Place::Above(_) => Some(Side::Above),
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

/// The side of the stack of sheets a point lies on: below the first sheet or above
/// the last, along the sheets' normal.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Side {
    /// Before the first sheet along the normal.
    Below,
    /// Beyond the last sheet along the normal.
    Above,
}

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
}

/// A closed box of one material around some victims.
#[derive(Clone, Debug)]
pub struct Enclosure {
    /// Unique id.
    pub id: String,
    /// Centre and orientation (local x, y, z along the box's edges); origin in m.
    pub frame: Frame,
    /// Outside edge lengths along local x, y, z, m.
    pub size: Vec3,
    /// Wall material.
    pub material: Material,
    /// Wall thickness, m.
    pub thickness: f64,
    /// Ids of the victims inside.
    pub contains: Vec<String>,
}

impl Enclosure {
    /// Radius of the sphere of equal volume, m.
    pub fn equivalent_radius(&self) -> f64 {
        (3.0 * self.size.x * self.size.y * self.size.z / (4.0 * PI)).cbrt()
    }

    /// Whether scene point `r` (m) lies inside the box's outer surface.
    pub fn holds(&self, r: &Vec3) -> bool {
        let d = r - self.frame.origin;
        d.dot(&self.frame.x).abs() < 0.5 * self.size.x
            && d.dot(&self.frame.y).abs() < 0.5 * self.size.y
            && d.dot(&self.frame.z).abs() < 0.5 * self.size.z
    }
}

/// Scene points of a victim's path (every edge sampled, arcs finely).
pub fn victim_points(edges: &[Edge]) -> Vec<Vec3> {
    edges
        .iter()
        .flat_map(|e| {
            let n = match e {
                Edge::Line { .. } => 1,
                Edge::Arc { .. } => 256,
            };
            (0..=n).map(move |k| e.point(k as f64 / n as f64))
        })
        .collect()
}

/// Scene points of a source's conductors (vertices and dipole centres).
pub fn source_points(s: &Source) -> Vec<Vec3> {
    let c = &s.conductors;
    c.wires
        .iter()
        .flat_map(|w| w.vertices.iter().copied())
        .chain(c.dipoles.iter().map(|d| d.position))
        .collect()
}

impl Barrier {
    /// The side of the stack all `points` are on, or a reason naming `what`.
    pub fn side_of(&self, points: &[Vec3], what: &str) -> Result<Side, String> {
        let mut side = None;
        for p in points {
            let s = match self.place(p) {
                Place::Below(d) | Place::Above(d) if d <= 0.0 => {
                    return Err(format!("{what} touches a shield face"));
                }
                Place::Below(_) => Side::Below,
                Place::Above(_) => Side::Above,
                Place::Inside(id) => {
                    return Err(format!("{what} reaches into shield \"{id}\""));
                }
                Place::Between(a, b) => {
                    return Err(format!(
                        "{what} lies between shields \"{a}\" and \"{b}\"; strayflux places \
                         sources and victims outside the stack of sheets only"
                    ));
                }
            };
            match side {
                None => side = Some(s),
                Some(prev) if prev != s => {
                    return Err(format!("{what} crosses the plane of the shields"));
                }
                _ => {}
            }
        }
        Ok(side.unwrap_or(Side::Below))
    }
}
