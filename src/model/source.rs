//! Sources: placed conductors and the spectral lines of their current.

use crate::field::{Conductors, Vec3};
use crate::geometry::Frame;
use crate::spectrum::{Line, Tail};

/// The kinds of source a scene can name (`kind = "..."`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SourceKind {
    /// A circle of wire.
    Loop,
    /// A rectangle of wire.
    Rectangle,
    /// A closed polygon of wire.
    Polygon,
    /// An open polyline (its return path is not modelled).
    Polyline,
    /// A point magnetic dipole.
    Dipole,
    /// A helical winding.
    Helix,
    /// A toroidal winding.
    Toroid,
    /// A flat spiral (a planar PCB inductor).
    Spiral,
    /// A pair of saddle coils (deflection-coil shape).
    Saddle,
    /// A go-and-return cable pair.
    Pair,
    /// A path read from a CSV file.
    File,
}

impl SourceKind {
    /// Every kind, in the order the scene reference lists them.
    pub const ALL: [SourceKind; 11] = [
        SourceKind::Loop,
        SourceKind::Rectangle,
        SourceKind::Polygon,
        SourceKind::Polyline,
        SourceKind::Dipole,
        SourceKind::Helix,
        SourceKind::Toroid,
        SourceKind::Spiral,
        SourceKind::Saddle,
        SourceKind::Pair,
        SourceKind::File,
    ];

    /// The keyword as written in scenes and output.
    pub fn name(self) -> &'static str {
        match self {
            SourceKind::Loop => "loop",
            SourceKind::Rectangle => "rectangle",
            SourceKind::Polygon => "polygon",
            SourceKind::Polyline => "polyline",
            SourceKind::Dipole => "dipole",
            SourceKind::Helix => "helix",
            SourceKind::Toroid => "toroid",
            SourceKind::Spiral => "spiral",
            SourceKind::Saddle => "saddle",
            SourceKind::Pair => "pair",
            SourceKind::File => "file",
        }
    }

    /// The kind a keyword names, if any.
    pub fn from_name(name: &str) -> Option<SourceKind> {
        SourceKind::ALL.into_iter().find(|k| k.name() == name)
    }

    /// Whether the kind is a multi-turn winding: a victim within its extent sits among
    /// the turns.
    pub fn is_winding(self) -> bool {
        matches!(
            self,
            SourceKind::Helix | SourceKind::Toroid | SourceKind::Spiral | SourceKind::Saddle
        )
    }
}

impl std::fmt::Display for SourceKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// A source: conductors placed in the scene and the spectral lines of their current.
#[derive(Clone, Debug)]
pub struct Source {
    /// Unique id.
    pub id: String,
    /// Which kind of source the geometry was built from.
    pub kind: SourceKind,
    /// Placement.
    pub frame: Frame,
    /// Filaments and dipoles, per ampere of the source current.
    pub conductors: Conductors,
    /// Current spectrum, peak phasors, ascending frequency.
    pub lines: Vec<Line>,
    /// What `lines` leave out of the waveform's series, in closed form.
    pub tail: Tail,
    /// The rms of the whole current (every line, listed or not), A.
    pub current_rms: f64,
    /// With `calibrate`: the point (m) and the rms |B| (T) the current was scaled to.
    pub calibration: Option<(Vec3, f64)>,
}
