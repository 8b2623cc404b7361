//! Point magnetic dipole.
//!
//! Outside: B = μ0/4π · (3(m·r̂)r̂ − m)/r³ and A = μ0/4π · m × r / r³ (Jackson,
//! "Classical Electrodynamics", 3rd ed., eqs. 5.55 and 5.56). Within `radius` of the
//! centre the values of a uniformly magnetised sphere of that radius are used,
//! B = μ0/4π · 2m/a³ (Jackson eq. 5.104 with M = m/(4πa³/3)), so the field stays finite.

use super::{FieldSource, MU0_OVER_4PI, Vec3};

/// A point dipole whose moment is `moment_per_amp` times the source current.
#[derive(Clone, Debug)]
pub struct Dipole {
    /// Centre, metres.
    pub position: Vec3,
    /// Moment per ampere of source current, A·m² per A (the effective area N·A in m²).
    pub moment_per_amp: Vec3,
    /// Radius in metres of the small sphere inside which the field is held finite.
    pub radius: f64,
}

impl FieldSource for Dipole {
    fn b_per_amp(&self, r: &Vec3) -> Vec3 {
        let d = r - self.position;
        let m = &self.moment_per_amp;
        let dist = d.norm();
        if dist < self.radius {
            return m * (2.0 * MU0_OVER_4PI / self.radius.powi(3));
        }
        let u = d / dist;
        (u * (3.0 * m.dot(&u)) - m) * (MU0_OVER_4PI / dist.powi(3))
    }

    fn a_per_amp(&self, r: &Vec3) -> Vec3 {
        let d = r - self.position;
        let dist = d.norm().max(self.radius);
        self.moment_per_amp.cross(&d) * (MU0_OVER_4PI / dist.powi(3))
    }
}
