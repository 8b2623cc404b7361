//! Victims: closed loops whose flux linkage gives the induced EMF.

use crate::field::Vec3;
use crate::geometry::{Edge, Frame};

/// The kinds of victim a scene can name (`kind = "..."`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum VictimKind {
    /// A circle.
    Loop,
    /// A rectangle.
    Rectangle,
    /// A closed polygon.
    Polygon,
    /// A trace over its return plane (a thin rectangle).
    Trace,
    /// A closed path read from a CSV file of points.
    File,
}

impl VictimKind {
    /// Every kind, in the order the scene reference lists them.
    pub const ALL: [VictimKind; 5] = [
        VictimKind::Loop,
        VictimKind::Rectangle,
        VictimKind::Polygon,
        VictimKind::Trace,
        VictimKind::File,
    ];

    /// The keyword as written in scenes and output.
    pub fn name(self) -> &'static str {
        match self {
            VictimKind::Loop => "loop",
            VictimKind::Rectangle => "rectangle",
            VictimKind::Polygon => "polygon",
            VictimKind::Trace => "trace",
            VictimKind::File => "file",
        }
    }

    /// The kind a keyword names, if any.
    pub fn from_name(name: &str) -> Option<VictimKind> {
        VictimKind::ALL.into_iter().find(|k| k.name() == name)
    }
}

impl std::fmt::Display for VictimKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl Victim {
    /// For a flat victim of one simple closed path (a `loop` or `rectangle`): the
    /// centre (m) and radius (m) of a disc in its plane holding it, and its area (m²).
    pub fn flat_face(&self) -> Option<(Vec3, f64, f64)> {
        if !matches!(self.kind, VictimKind::Loop | VictimKind::Rectangle) {
            return None;
        }
        let c = self.frame.origin;
        let r = self
            .edges
            .iter()
            .map(|e| {
                let (ec, er) = e.bounding_sphere();
                (ec - c).norm() + er
            })
            .fold(0.0, f64::max);
        Some((c, r, self.area))
    }
}

/// A victim loop: a closed path whose flux linkage gives the induced EMF.
#[derive(Clone, Debug)]
pub struct Victim {
    /// Unique id.
    pub id: String,
    /// Which kind of victim the path was built from.
    pub kind: VictimKind,
    /// Placement; `frame.z` is the loop normal (positive EMF is right-handed about it).
    pub frame: Frame,
    /// The closed path, in the direction of positive EMF.
    pub edges: Vec<Edge>,
    /// Number of coincident turns.
    pub turns: f64,
    /// Allowed rms of the total EMF, V.
    pub limit: Option<f64>,
    /// Conductor radius, m.
    pub wire_radius: f64,
    /// Area of one turn, m².
    pub area: f64,
    /// Low-frequency self-inductance of all turns, H.
    pub self_inductance: f64,
    /// Load resistance across the victim's terminals, ohm (`load = { resistance }`).
    pub load: Option<f64>,
    /// Set while an orientation search turns the victim about its centre: the radius
    /// (m) of the sphere every orientation stays within. Shield solves then plan for
    /// that whole sphere, so that every trial orientation shares one source solve.
    pub turning_reach: Option<f64>,
}

impl Victim {
    /// The victim turned by `rotation` about its centre and moved by `offset` (m).
    pub fn moved(&self, rotation: &nalgebra::Rotation3<f64>, offset: &Vec3) -> Victim {
        let pivot = self.frame.origin;
        let edges = self
            .edges
            .iter()
            .map(|e| e.moved(rotation, &pivot, offset))
            .collect();
        let frame = Frame {
            origin: pivot + offset,
            x: rotation * self.frame.x,
            y: rotation * self.frame.y,
            z: rotation * self.frame.z,
        };
        Victim {
            edges,
            frame,
            ..self.clone()
        }
    }

    /// The victim marked for an orientation search: [`Victim::turning_reach`] set to
    /// the largest distance (m) of its path from its centre.
    pub fn turning(&self) -> Victim {
        let centre = self.frame.origin;
        let reach = super::shield::victim_points(&self.edges)
            .iter()
            .map(|p| (p - centre).norm())
            .fold(0.0, f64::max);
        Victim {
            turning_reach: Some(reach),
            ..self.clone()
        }
    }

    /// The victim tilted by the smallest rotation that takes its axis to `normal`
    /// (a unit vector), about its centre.
    pub fn facing(&self, normal: &Vec3) -> Victim {
        let rotation =
            nalgebra::Rotation3::rotation_between(&self.frame.z, normal).unwrap_or_else(|| {
                // Antiparallel: half a turn about the victim's own x axis.
                nalgebra::Rotation3::from_axis_angle(
                    &nalgebra::Unit::new_normalize(self.frame.x),
                    std::f64::consts::PI,
                )
            });
        self.moved(&rotation, &Vec3::zeros())
    }
}
