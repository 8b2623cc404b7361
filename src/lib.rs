//! strayflux: magnetic near-field coupling between a source and a victim loop.
//!
//! # Model
//!
//! Magnetic quasi-statics: each spectral line's field is the Biot–Savart field of the
//! source's filament currents scaled by that line's current phasor; displacement
//! current is neglected, so results hold well inside λ/2π of every source. Conductors
//! are thin filaments with uniform current (no skin or proximity effect in the
//! windings); ferromagnetic cores are not modelled.
//!
//! # Conventions
//!
//! * Units: SI throughout the library (m, A, Hz, T, V, H); names carry the unit where
//!   it is not obvious. Scene files may write units; see [`units`].
//! * Phasors are **peak** values: i(t) = Re(I e^{jωt}); rms = |phasor| / √2.
//! * Fields are computed **per ampere** of source current and scaled by the phasor.
//! * EMF sign: E = −jωΦ, positive when it drives current right-handedly about the
//!   victim's axis (its local z; for polygons, in vertex order).
//! * Mutual inductance M = N Φ / I includes the victim's turns and the source's turns.
//! * Frames: each element's local z is its `axis`, local x its `reference` made
//!   orthogonal; local y = z × x.

#![deny(missing_docs)]

pub mod app;
pub mod coupling;
pub mod error;
pub mod field;
pub mod fieldmap;
pub mod geometry;
pub mod inductance;
pub mod orientation;
pub mod output;
pub mod points_csv;
pub mod probe;
pub mod quadrature;
pub mod scene;
pub mod shield;
pub mod spectrum;
pub mod sweep;
pub mod units;
pub mod waveform;

pub use error::{Error, InputError};
pub use scene::Scene;
