//! Closed enclosures: a box around victims, treated as the spherical shell of equal
//! volume.
//!
//! Shielding factor of a spherical shell of radius R, wall thickness t, conductivity σ
//! and permeability μ0μr in a uniform quasi-static field (Kaden, "Wirbelströme und
//! Schirmung in der Nachrichtentechnik", 1959; as usually quoted, from memory):
//!
//! ```text
//! S = H_outside / H_inside = cosh(γt) + (1/3)(K + 2/K) sinh(γt),   γ = √(jωμ0μrσ),  K = γR/μr
//! ```
//!
//! whose limits are the two classical thin-shell results: at ω = 0,
//! S = 1 + (2/3)μr t/R (magnetostatic; the thin-wall limit of the permeable spherical
//! shell in Jackson, "Classical Electrodynamics", 3rd ed., §5.12); for μr = 1 and t ≪ δ,
//! S = 1 + jωμ0σtR/3 (eddy currents; Hoburg, "Principles of quasistatic magnetic
//! shielding with cylindrical and spherical shields", IEEE Trans. EMC 37, 1995, from
//! memory). Both limits are tested. A real box does worse than the sphere: its
//! corners, seams, lids, holes and cable entries let field in, and a box much longer
//! than it is wide is closer to an open cylinder. This is an estimate.

use crate::field::MU0;
use crate::model::{Enclosure, Material};
use num_complex::Complex64;
use std::f64::consts::PI;

impl Enclosure {
    /// Natural logarithm of the shielding factor S at `frequency` (Hz): the field
    /// inside is the field outside times e^{−ln S}. A logarithm so thick walls at high
    /// frequency do not overflow.
    pub fn ln_factor(&self, frequency: f64) -> Complex64 {
        ln_shell_factor(
            &self.material,
            self.thickness,
            self.equivalent_radius(),
            frequency,
        )
    }
}

/// ln S of a spherical shell of `material`, wall `thickness` (m) and radius `radius`
/// (m) at `frequency` (Hz), by the formula in the module documentation.
pub fn ln_shell_factor(
    material: &Material,
    thickness: f64,
    radius: f64,
    frequency: f64,
) -> Complex64 {
    let mu_r = material.relative_permeability;
    let gamma = Complex64::new(
        0.0,
        2.0 * PI * frequency * MU0 * mu_r * material.conductivity,
    )
    .sqrt();
    let x = gamma * thickness;
    // sinh(x)/x without 0/0 at DC.
    let sinhc = |x: Complex64| {
        if x.norm() < 1e-4 {
            1.0 + x * x / 6.0
        } else {
            x.sinh() / x
        }
    };
    // (1/3)(K + 2/K) sinh x = (1/3)[(γR/μr) sinh x + (2μr t/R) sinh(x)/x].
    if x.re < 300.0 {
        let s = x.cosh()
            + (gamma * (radius / mu_r) * x.sinh() + sinhc(x) * (2.0 * mu_r * thickness / radius))
                / 3.0;
        s.ln()
    } else {
        // cosh x ≈ sinh x ≈ e^x / 2.
        let tail = 1.0 + (gamma * (radius / mu_r) + (2.0 * mu_r * thickness / radius) / x) / 3.0;
        x - std::f64::consts::LN_2 + tail.ln()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mat(sigma: f64, mu_r: f64) -> Material {
        Material::custom(sigma, mu_r)
    }

    #[test]
    fn magnetostatic_limit_is_one_plus_two_thirds_mu_t_over_r() {
        // Thin spherical shell at DC, S ≈ 1 + (2/3) μr t / R: the thin-wall limit of
        // Jackson, Classical Electrodynamics, 3rd ed., §5.12 (1 − a³/b³ ≈ 3t/R).
        let s = ln_shell_factor(&mat(5.8e6, 1000.0), 1e-4, 0.05, 0.0).exp();
        let expected = 1.0 + 2.0 / 3.0 * 1000.0 * 1e-4 / 0.05;
        assert!((s.re - expected).abs() < 1e-12 && s.im.abs() < 1e-12, "{s}");
    }

    #[test]
    fn eddy_current_limit_is_one_plus_j_omega_mu_sigma_t_r_over_3() {
        // Non-magnetic thin shell, t ≪ δ: S ≈ 1 + jωμ0σtR/3 (Hoburg, IEEE Trans. EMC 37,
        // 1995, thin-shell limit; from memory). Copper 10 µm
        // at 1 kHz (δ = 2.1 mm) on a 0.5 m sphere: the neglected terms are 2t/(3R) ≈
        // 1.3e-5 and (t/δ)² ≈ 2e-5 of the leading ones.
        let (sigma, t, r, f) = (5.8e7, 1e-5, 0.5, 1e3);
        let s = ln_shell_factor(&mat(sigma, 1.0), t, r, f).exp();
        let expected = Complex64::new(1.0, 2.0 * PI * f * MU0 * sigma * t * r / 3.0);
        assert!(
            (s - expected).norm() < 1e-4 * expected.norm(),
            "{s} vs {expected}"
        );
    }

    #[test]
    fn thick_wall_branch_joins_the_direct_formula() {
        // Re(γt) = t/δ. Evaluate just below and above the switch at t/δ = 300: the two
        // branches must join (ln S grows by 0.2 for 0.2 δ more wall).
        let m = mat(5.8e7, 1.0);
        let delta = m.skin_depth(1e6);
        let below = ln_shell_factor(&m, 299.9 * delta, 0.05, 1e6);
        let above = ln_shell_factor(&m, 300.1 * delta, 0.05, 1e6);
        assert!((above.re - below.re - 0.2).abs() < 1e-3, "{below} {above}");
    }
}
