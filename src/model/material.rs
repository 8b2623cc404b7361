//! Shield materials: conductivity (S/m) and relative permeability.
//!
//! The built-in values are typical handbook figures for annealed or as-rolled stock.
//! Each carries its source; values marked "from memory" were written down from the
//! usual tables without a book open and should be checked against the supplier's data
//! sheet for a real design. The permeability of steels and nickel–iron alloys depends
//! strongly on the field level, the frequency and the heat treatment: the figure here is
//! a low-field, low-frequency value, and at high flux density or after bending or
//! machining the real value can be several times lower.

use crate::field::MU0;
use std::f64::consts::PI;

/// A homogeneous, linear, isotropic shield material.
#[derive(Clone, Debug, PartialEq)]
pub struct Material {
    /// Name as written in a scene (`copper`, ...), or `custom`.
    pub name: String,
    /// Electrical conductivity σ, S/m.
    pub conductivity: f64,
    /// Relative permeability μr (dimensionless, ≥ 1 for the materials modelled).
    pub relative_permeability: f64,
    /// Where the values come from.
    pub source: &'static str,
    /// Whether μr is a rough, treatment-dependent figure (steels, nickel–iron alloys).
    pub permeability_varies: bool,
}

/// Conductivity of the International Annealed Copper Standard, S/m (100 % IACS =
/// 58.0 MS/m, defined by the IEC in 1913 as 1/58 Ω·mm²/m).
pub const IACS: f64 = 5.80e7;

/// The built-in materials: (name, σ in S/m, μr, source, μr varies).
const BUILT_IN: &[(&str, f64, f64, &str, bool)] = &[
    (
        "copper",
        IACS,
        1.0,
        "100 % IACS, the International Annealed Copper Standard (IEC, 1913)",
        false,
    ),
    (
        "aluminium",
        3.5e7,
        1.0,
        "about 60 % IACS, electrical-conductor grade aluminium (from memory); alloys such as \
         6061 are nearer 2.5e7 S/m",
        false,
    ),
    (
        "brass",
        1.6e7,
        1.0,
        "about 28 % IACS, cartridge brass CuZn30 (from memory)",
        false,
    ),
    (
        "steel",
        5.8e6,
        1000.0,
        "low-carbon cold-rolled steel, relative conductivity 0.10 of copper and μr 1000 as \
         commonly tabulated for shielding estimates (from memory)",
        true,
    ),
    (
        "stainless",
        1.4e6,
        1.0,
        "austenitic stainless steel 304, resistivity about 72 µΩ·cm, essentially \
         non-magnetic when annealed (from memory); cold work raises μr",
        false,
    ),
    (
        "mu-metal",
        1.7e6,
        20000.0,
        "nickel–iron alloy about 77 % Ni, relative conductivity 0.03 of copper and μr \
         20 000 at low field and low frequency after hydrogen annealing, as commonly \
         tabulated (from memory)",
        true,
    ),
];

/// Names of the built-in materials, in table order.
pub fn names() -> Vec<&'static str> {
    BUILT_IN.iter().map(|m| m.0).collect()
}

/// The built-in material called `name`, if there is one.
pub fn built_in(name: &str) -> Option<Material> {
    BUILT_IN
        .iter()
        .find(|m| m.0 == name)
        .map(|&(name, conductivity, mu_r, source, varies)| Material {
            name: name.to_string(),
            conductivity,
            relative_permeability: mu_r,
            source,
            permeability_varies: varies,
        })
}

/// Every built-in material, in table order.
pub fn all() -> Vec<Material> {
    names().into_iter().filter_map(built_in).collect()
}

impl Material {
    /// A material from its conductivity (S/m) and relative permeability.
    pub fn custom(conductivity: f64, relative_permeability: f64) -> Self {
        Material {
            name: "custom".to_string(),
            conductivity,
            relative_permeability,
            source: "given in the scene",
            permeability_varies: false,
        }
    }

    /// Skin depth δ = 1/√(π f μ0 μr σ) at `frequency` (Hz), m; infinite at DC or for an
    /// insulator.
    pub fn skin_depth(&self, frequency: f64) -> f64 {
        let x = PI * frequency * MU0 * self.relative_permeability * self.conductivity;
        if x > 0.0 {
            1.0 / x.sqrt()
        } else {
            f64::INFINITY
        }
    }
}
