//! Spectral lines of source currents.
//!
//! A line is one sinusoid: its frequency in Hz and its current phasor, peak amplitude
//! in amperes with the phase as argument (i(t) = Re(I e^{jωt})).

use num_complex::Complex64;

/// One sinusoidal component of a source current.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Line {
    /// Frequency, Hz (> 0).
    pub frequency: f64,
    /// Peak current phasor, A.
    pub current: Complex64,
}

impl Line {
    /// A line of `peak` amperes at `frequency` Hz and `phase` radians.
    pub fn new(frequency: f64, peak: f64, phase: f64) -> Self {
        Line {
            frequency,
            current: Complex64::from_polar(peak, phase),
        }
    }
}

/// Whether two frequencies (Hz) are the same line, to 1e-9 relative.
pub fn same_frequency(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs())
}

/// The speed of light in vacuum, m/s (exact by the SI definition of the metre).
pub const SPEED_OF_LIGHT: f64 = 299_792_458.0;

/// The near-field boundary λ/2π = c/(2πf), in metres, at `frequency` Hz.
pub fn near_field_limit(frequency: f64) -> f64 {
    SPEED_OF_LIGHT / (std::f64::consts::TAU * frequency)
}
