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

/// What a source's listed lines leave out of its current: the rest of the waveform's
/// series above the last listed line. The EMF of line n is ω_n M I_n, so by Parseval's
/// theorem the rms EMF of every line together is |M| times the rms of di/dt; the part
/// the list omits follows from the derivative's mean square minus the listed lines'
/// share, in closed form, without summing the lines themselves.
#[derive(Clone, Debug, PartialEq)]
pub enum Tail {
    /// Nothing is left out: the lines are the whole current (a sine, or lines listed
    /// one by one).
    None,
    /// The lines are the start of a series whose current has this mean square of di/dt
    /// over a period, A²/s² (finite: every edge takes time).
    Slope(f64),
    /// The waveform has an ideal edge (a jump): di/dt is a delta, so the EMF lines do
    /// not fall off and their sum does not converge. The text says where the edge is
    /// given and how to give its duration (a located, one-line message).
    IdealEdge(String),
}

impl Tail {
    /// The rms of the omitted part of di/dt (A/s) for these listed `lines`:
    /// √(mean square − Σ ω_n²|I_n|²/2), zero when nothing is omitted, `None` for an
    /// ideal edge. Rounding can make the difference slightly negative; it is then zero.
    pub fn slope_rms(&self, lines: &[Line]) -> Option<f64> {
        match self {
            Tail::None => Some(0.0),
            Tail::Slope(mean_square) => {
                let listed: f64 = lines
                    .iter()
                    .map(|l| (std::f64::consts::TAU * l.frequency).powi(2) * l.current.norm_sqr())
                    .sum::<f64>()
                    / 2.0;
                Some((mean_square - listed).max(0.0).sqrt())
            }
            Tail::IdealEdge(_) => None,
        }
    }

    /// The tail of the same waveform with every current multiplied by `k` and every
    /// frequency by `r` (di/dt scales by k·r).
    pub fn scaled(&self, k: f64, r: f64) -> Tail {
        match self {
            Tail::Slope(ms) => Tail::Slope(ms * (k * r).powi(2)),
            other => other.clone(),
        }
    }
}
