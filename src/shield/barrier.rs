//! The stack's response geometry: the frame and layer order each side sees.

use super::spectral::{Path, SideFrame};
use crate::model::{Barrier, Layer, Side};

impl Barrier {
    /// The frame and layer order seen by a source on `side`.
    pub fn seen_from(&self, side: Side) -> (SideFrame, Vec<Layer>) {
        let d = self.thickness();
        if side == Side::Above {
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
    pub fn path(source_side: Side, target_side: Side) -> Path {
        if source_side == target_side {
            Path::Reflected
        } else {
            Path::Transmitted
        }
    }
}
