//! Response of a stack of infinite flat layers to one transverse spatial harmonic of a
//! quasi-static magnetic field.
//!
//! In the air on either side the field is the gradient of a scalar potential and every
//! harmonic e^{i k·ρ} varies across the stack as e^{±kz}. In a layer of conductivity σ
//! and permeability μ = μ0μr the normal flux density obeys (∇² − jωμσ)B_z = 0, so it
//! varies as e^{±γz} with γ = √(k² + jωμσ) (Maxwell's equations without displacement
//! current). B_z and H_tangential, i.e. B_z and (1/μ)∂B_z/∂z, are continuous at every
//! face. Writing the state as (B_z, (μ0/μ)(1/k)∂B_z/∂z), a layer of thickness d maps it
//! by the transfer matrix
//!
//! ```text
//! [ cosh γd        sinh γd / p ]        p = γ / (μr k)
//! [ p sinh γd      cosh γd     ]
//! ```
//!
//! (unit determinant). With an incident harmonic of amplitude 1 arriving from the
//! source side, reflected amplitude R and transmitted amplitude T (both for B_z at the
//! faces), matching the decaying air solutions at both ends gives, for the product
//! M of the layers' matrices,
//!
//! ```text
//! T = 2 / (m11 + m12 + m21 + m22),   R = (m22 + m12 − m21 − m11) / (m11 + m12 + m21 + m22).
//! ```
//!
//! Checks (tests): one thin non-magnetic layer gives T = 1/(1 + jωμ0σd/(2k)) (the
//! thin-sheet formula); σ → ∞ gives R = −1 (the image method: B_z = 0 on the face);
//! a thick permeable layer at ω = 0 gives R = (μr − 1)/(μr + 1) (the magnetostatic
//! image, Jackson, "Classical Electrodynamics", 3rd ed., §5.13 and problem 5.17).
//! Each layer's matrix is kept as e^{γd} times a bounded matrix, so thick, lossy stacks
//! underflow T gracefully to zero instead of overflowing.

use crate::field::MU0;
use crate::model::Layer;
use num_complex::Complex64;

/// Reflection and transmission of one harmonic (dimensionless complex ratios of B_z).
#[derive(Clone, Copy, Debug)]
pub struct Response {
    /// Reflected over incident B_z, both at the source-side face.
    pub reflected: Complex64,
    /// Transmitted B_z at the far face over incident B_z at the source-side face.
    pub transmitted: Complex64,
}

/// Response of `layers` (listed from the source side) to the harmonic of transverse
/// wavenumber `k` (rad/m, > 0) at angular frequency `omega` (rad/s).
pub fn response(layers: &[Layer], k: f64, omega: f64) -> Response {
    // M = Π e^{γd} · M̃ with M̃ bounded; `log_scale` accumulates Σ γd − L ln 2.
    let one = Complex64::new(1.0, 0.0);
    let mut m = [
        [one, Complex64::new(0.0, 0.0)],
        [Complex64::new(0.0, 0.0), one],
    ];
    let mut log_scale = Complex64::new(0.0, 0.0);
    for layer in layers {
        let mu_r = layer.relative_permeability;
        let gamma = Complex64::new(k * k, omega * MU0 * mu_r * layer.conductivity).sqrt();
        let p = gamma / (mu_r * k);
        let gd = gamma * layer.thickness;
        let e = (-2.0 * gd).exp();
        // cosh γd = e^{γd}(1 + e)/2, sinh γd = e^{γd}(1 − e)/2.
        let c = one + e;
        let s = one - e;
        let step = [[c, s / p], [p * s, c]];
        m = [
            [
                step[0][0] * m[0][0] + step[0][1] * m[1][0],
                step[0][0] * m[0][1] + step[0][1] * m[1][1],
            ],
            [
                step[1][0] * m[0][0] + step[1][1] * m[1][0],
                step[1][0] * m[0][1] + step[1][1] * m[1][1],
            ],
        ];
        log_scale += gd - std::f64::consts::LN_2;
        // Keep M̃ near unit size so long stacks do not overflow.
        let size = m.iter().flatten().map(|z| z.norm()).fold(0.0, f64::max);
        if size > 1e100 || (size < 1e-100 && size > 0.0) {
            m.iter_mut().flatten().for_each(|z| *z /= size);
            log_scale += size.ln();
        }
    }
    let sum = m[0][0] + m[0][1] + m[1][0] + m[1][1];
    let reflected = (m[1][1] + m[0][1] - m[1][0] - m[0][0]) / sum;
    let transmitted = 2.0 / sum * (-log_scale).exp();
    Response {
        reflected,
        transmitted,
    }
}

/// Thin-sheet transmission 1/(1 + jωμ0σd/(2k)) of a non-magnetic sheet of thickness d
/// (m) and conductivity σ (S/m) much thinner than its skin depth, for wavenumber `k`
/// (rad/m) at `omega` (rad/s). The standard thin-sheet result (e.g. Moreau, Hoburg);
/// used as a check.
pub fn thin_sheet_transmission(conductivity: f64, thickness: f64, k: f64, omega: f64) -> Complex64 {
    1.0 / Complex64::new(1.0, omega * MU0 * conductivity * thickness / (2.0 * k))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn air_layer_passes_every_harmonic_with_its_decay() {
        // Free space: a harmonic decays as e^{-kd} across a gap and nothing reflects.
        let r = response(&[Layer::air(2e-3)], 500.0, 1e5);
        assert!(r.reflected.norm() < 1e-15);
        assert!((r.transmitted - Complex64::new((-1.0f64).exp(), 0.0)).norm() < 1e-15);
    }

    #[test]
    fn thin_copper_matches_the_thin_sheet_formula() {
        // 35 µm copper at 10 kHz: δ = 0.66 mm, so t/δ = 0.053; the thin-sheet formula
        // holds to O((t/δ)²) ≈ 3e-3 and O(kt).
        let layer = Layer {
            conductivity: 5.8e7,
            relative_permeability: 1.0,
            thickness: 35e-6,
        };
        for k in [10.0, 100.0, 1000.0] {
            let w = std::f64::consts::TAU * 1e4;
            let exact = response(&[layer], k, w).transmitted;
            // The thin-sheet formula leaves out the free-space decay e^{-kd} across d.
            let thin = thin_sheet_transmission(5.8e7, 35e-6, k, w) * (-k * 35e-6f64).exp();
            assert!(
                (exact - thin).norm() < 6e-3 * thin.norm(),
                "k {k}: {exact} vs {thin}"
            );
        }
    }

    #[test]
    fn perfect_conductor_is_an_image_plane() {
        // R = −1 + O(k/γ); here k/γ ≈ 1e-7.
        let layer = Layer {
            conductivity: 1e20,
            relative_permeability: 1.0,
            thickness: 1e-3,
        };
        let r = response(&[layer], 100.0, 1e4);
        assert!((r.reflected + 1.0).norm() < 1e-6, "{}", r.reflected);
        assert!(r.transmitted.norm() < 1e-12);
    }

    #[test]
    fn thick_permeable_block_at_dc_is_the_magnetostatic_image() {
        let mu_r = 1000.0;
        let layer = Layer {
            conductivity: 1e7,
            relative_permeability: mu_r,
            thickness: 1.0,
        };
        let r = response(&[layer], 100.0, 0.0);
        let image = (mu_r - 1.0) / (mu_r + 1.0);
        assert!((r.reflected - image).norm() < 1e-12, "{}", r.reflected);
    }

    #[test]
    fn very_thick_lossy_stack_underflows_without_nan() {
        let steel = Layer {
            conductivity: 5.8e6,
            relative_permeability: 1000.0,
            thickness: 0.05,
        };
        let r = response(&[steel, Layer::air(1e-3), steel], 10.0, 2.0 * 3.14159e6);
        assert!(r.transmitted.norm() == 0.0 || r.transmitted.norm() < 1e-300);
        assert!(r.reflected.re.is_finite() && r.reflected.im.is_finite());
    }
}
