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

// Layers, lowest first; a module imports only from layers below its own (see
// DEVELOPERS.md for the graph):
//   error, units, quadrature, spectrum, waveform   foundations
//   field, inductance                              Biot–Savart kernels, far-field series
//   geometry                                       frames, edges, shapes -> conductors
//   model                                          the validated scene (SI), solver options
//   scene                                          TOML -> model, located input errors
//   shield, coupling                               shield physics, flux, M, EMF
//   run                                            couple, probe, sweep, orientation, map
//   output                                         text, JSON, CSV, SVG, VTK
//   app                                            one file per command
pub mod app;
pub mod coupling;
pub mod error;
pub mod field;
pub mod geometry;
pub mod inductance;
pub mod model;
pub mod output;
pub mod quadrature;
pub mod run;
pub mod scene;
pub mod shield;
pub mod spectrum;
pub mod units;
pub mod waveform;

pub use error::{Error, InputError, SolveError};
pub use model::Scene;
