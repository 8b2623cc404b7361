//! Frames and the shapes of sources and victims.
//!
//! Every element is built in its own local frame (metres) and placed by a [`Frame`].
//! Sources become [`Conductors`](crate::field::Conductors) (filament polylines and
//! dipoles); victims become closed chains of [`Edge`]s, straight or exact circular arcs,
//! along which the flux integral runs.

mod edge;
mod frame;
mod shapes;
mod windings;

pub use edge::{Edge, vector_area};
pub use frame::Frame;
pub use shapes::{
    circle_segments, circle_source, dipole_source, polygon_source, polyline_source,
    rectangle_corners,
};
pub use windings::{
    chord_factor, helix, pair, round_spiral, saddle, square_spiral, square_spiral_corners, toroid,
};
