//! Periodic drive waveforms and their Fourier series (spectral lines).
//!
//! Every waveform is one period of a piecewise-linear function: a list of [`Vertex`]es
//! joined by straight pieces, where two vertices at the same time make a jump. Its
//! complex Fourier coefficients follow in closed form from the breakpoints. With time
//! in fractions τ = t/T of the period, a jump J_k at τ_k and a slope change Δs_k (per
//! period) at τ_k give
//!
//! c_n = Σ J_k e^{−j2πnτ_k}/(j2πn) + Σ Δs_k e^{−j2πnτ_k}/(j2πn)²,
//!
//! and the peak phasor of harmonic n is I_n = 2c_n (i(t) = Re Σ I_n e^{jnωt}). The code
//! evaluates the same sum regrouped by piece: the two slope changes that bound a piece of
//! rise Δx over Δτ combine into Δx e^{−j2πnτ_mid} sinc(πnΔτ)/(j2πn), and a jump is a piece
//! of zero width. The regrouping is exact and stays accurate for very short edges, where
//! the slope changes ±Δx/Δτ would cancel.
//!
//! # Conventions
//!
//! * **Zero mean.** The constant (DC) part of a waveform induces no EMF and is dropped:
//!   the lines describe the waveform minus its mean, and `peak`, `rms` and
//!   `peak_to_peak` measure that zero-mean waveform.
//! * **Phase.** Time is shifted so that the fundamental's phasor has the requested
//!   argument; the harmonics keep their relation to it (the same time shift). At phase 0
//!   the fundamental is a cosine: a square or triangle wave is at its positive level or
//!   peak at t = 0, and a trapezoid with equal edges has its high level centred on
//!   t = 0.

use crate::spectrum::Line;
use num_complex::Complex64;
use std::f64::consts::{PI, TAU};

/// Lines with |I_n| below this fraction of the largest line are zero (by symmetry).
pub const ZERO_LINE: f64 = 1e-14;

/// The most lines the default (tolerance) rule keeps before it stops with a warning.
pub const MAX_DEFAULT_LINES: usize = 1000;

/// The most lines a `harmonics` count may ask for.
pub const MAX_HARMONICS: u64 = 100_000;

/// The highest harmonic order ever examined (a guard; the rules stop far earlier).
const SCAN_LIMIT: u64 = 2_000_000;

/// A corner of a piecewise-linear period.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Vertex {
    /// Time as a fraction of the period (unitless).
    pub at: f64,
    /// Value, unitless (scaled to amperes later).
    pub value: f64,
}

/// One period of a piecewise-linear periodic function, unitless.
#[derive(Clone, Debug, PartialEq)]
pub struct Shape {
    vertices: Vec<Vertex>,
}

/// One straight piece of a [`Shape`] (zero `width` for a jump).
#[derive(Clone, Copy, Debug)]
struct Piece {
    start: f64,
    width: f64,
    from: f64,
    to: f64,
}

/// The named waveforms, with edge times as fractions of the period.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Waveform {
    /// Two levels, half a period each, ideal edges.
    Square,
    /// Linear rise over half a period, linear fall over the other half.
    Triangle,
    /// Linear rise, then a linear drop (the flyback) over `fall` of the period; an
    /// ideal (instant) drop when `fall` is 0.
    Sawtooth {
        /// Duration of the drop, fraction of the period (0 ≤ fall < 1).
        fall: f64,
    },
    /// Two levels joined by linear edges.
    Trapezoid {
        /// Rising edge, full 0–100 % duration, fraction of the period (≥ 0).
        rise: f64,
        /// Falling edge, full 0–100 % duration, fraction of the period (≥ 0).
        fall: f64,
        /// Fraction of the period from the rising edge's 50 % point to the falling
        /// edge's; (rise + fall)/2 ≤ duty ≤ 1 − (rise + fall)/2.
        duty: f64,
    },
}

impl Waveform {
    /// The waveform's shape, levels −1/+1 (0/1 for the trapezoid; the mean is dropped).
    /// Trapezoid parameters are expected in range (the scene reader checks them); edges
    /// that would overlap are pushed apart only by the rounding they may carry.
    pub fn shape(&self) -> Shape {
        let v = |at, value| Vertex { at, value };
        match *self {
            Waveform::Square => {
                Shape::new(vec![v(0.0, -1.0), v(0.0, 1.0), v(0.5, 1.0), v(0.5, -1.0)])
            }
            Waveform::Triangle => Shape::new(vec![v(0.0, -1.0), v(0.5, 1.0)]),
            Waveform::Sawtooth { fall } => {
                Shape::new(vec![v(0.0, -1.0), v(1.0 - fall.clamp(0.0, 1.0), 1.0)])
            }
            Waveform::Trapezoid { rise, fall, duty } => {
                let mut times = [
                    -rise / 2.0,
                    rise / 2.0,
                    duty - fall / 2.0,
                    duty + fall / 2.0,
                ];
                // Edges that just touch may cross by rounding; keep time non-decreasing.
                for k in 1..times.len() {
                    times[k] = times[k].max(times[k - 1]).min(times[0] + 1.0);
                }
                let values = [0.0, 1.0, 1.0, 0.0];
                Shape::new(times.iter().zip(values).map(|(&t, x)| v(t, x)).collect())
            }
        }
    }
}

impl Shape {
    /// A shape from vertices in time order spanning at most one period; the last vertex
    /// joins the first one period later.
    ///
    /// # Panics
    /// If there are no vertices, times decrease, or they span more than a period.
    pub fn new(vertices: Vec<Vertex>) -> Shape {
        assert!(!vertices.is_empty(), "a shape needs vertices");
        assert!(
            vertices.windows(2).all(|w| w[1].at >= w[0].at),
            "vertex times must not decrease"
        );
        let span = vertices[vertices.len() - 1].at - vertices[0].at;
        assert!(span <= 1.0, "vertices span more than one period");
        Shape { vertices }
    }

    /// The straight pieces, including the one closing the period.
    fn pieces(&self) -> impl Iterator<Item = Piece> + '_ {
        let n = self.vertices.len();
        (0..n).map(move |k| {
            let a = self.vertices[k];
            let (b_at, b) = if k + 1 < n {
                (self.vertices[k + 1].at, self.vertices[k + 1])
            } else {
                (self.vertices[0].at + 1.0, self.vertices[0])
            };
            Piece {
                start: a.at,
                width: b_at - a.at,
                from: a.value,
                to: b.value,
            }
        })
    }

    /// The mean value over a period.
    pub fn mean(&self) -> f64 {
        self.pieces().map(|p| p.width * (p.from + p.to) / 2.0).sum()
    }

    /// The rms of the zero-mean shape, by exact integration of each linear piece
    /// (∫ x² over a piece from u to v of width w is w (u² + uv + v²)/3).
    pub fn rms(&self) -> f64 {
        let m = self.mean();
        let square: f64 = self
            .pieces()
            .map(|p| {
                let (u, v) = (p.from - m, p.to - m);
                p.width * (u * u + u * v + v * v) / 3.0
            })
            .sum();
        square.max(0.0).sqrt()
    }

    /// The largest |x − mean| (a linear piece's extremes are at its ends).
    pub fn peak(&self) -> f64 {
        let m = self.mean();
        self.vertices
            .iter()
            .map(|v| (v.value - m).abs())
            .fold(0.0, f64::max)
    }

    /// Maximum minus minimum.
    pub fn peak_to_peak(&self) -> f64 {
        let values = self.vertices.iter().map(|v| v.value);
        values.clone().fold(f64::MIN, f64::max) - values.fold(f64::MAX, f64::min)
    }

    /// The mean square over a period of the shape's derivative d/dτ (τ = t/T), in shape
    /// units squared: a piece of rise Δx over width w has slope Δx/w for a share w of
    /// the period, so the mean is Σ Δx²/w; infinite when the shape jumps. By Parseval's
    /// theorem this equals Σ_n (2πn)²·|2c_n|²/2 over every harmonic.
    pub fn slope_mean_square(&self) -> f64 {
        self.pieces()
            .filter(|p| p.to != p.from)
            .map(|p| {
                if p.width > 0.0 {
                    (p.to - p.from).powi(2) / p.width
                } else {
                    f64::INFINITY
                }
            })
            .sum()
    }

    /// Whether the shape jumps somewhere (an ideal edge).
    pub fn has_jump(&self) -> bool {
        self.pieces().any(|p| p.width == 0.0 && p.to != p.from)
    }

    /// The complex Fourier coefficient c_n (n ≥ 1) of the shape, in the shape's units.
    pub fn coefficient(&self, n: u64) -> Complex64 {
        let nf = n as f64;
        let sum: Complex64 = self
            .pieces()
            .map(|p| {
                let mid = p.start + p.width / 2.0;
                let turns = (nf * mid).rem_euclid(1.0);
                Complex64::from_polar((p.to - p.from) * sinc(PI * nf * p.width), -TAU * turns)
            })
            .sum();
        sum / Complex64::new(0.0, TAU * nf)
    }

    /// An upper bound on |c_m| for every m ≥ n, from |sinc x| ≤ min(1, 1/|x|); it falls
    /// as 1/n past a jump and as 1/n² for a continuous shape.
    pub fn envelope(&self, n: u64) -> f64 {
        let nf = n as f64;
        let sum: f64 = self
            .pieces()
            .map(|p| (p.to - p.from).abs() * (1.0 / (PI * nf * p.width)).min(1.0))
            .sum();
        sum / (TAU * nf)
    }

    /// The value at time `at` (fraction of the period), the mean not removed; at a jump,
    /// the value after it.
    pub fn value_at(&self, at: f64) -> f64 {
        let t0 = self.vertices[0].at;
        let t = t0 + (at - t0).rem_euclid(1.0);
        let p = self
            .pieces()
            .filter(|p| p.start <= t && p.width > 0.0)
            .last()
            .expect("the first piece starts at the first vertex");
        p.from + (p.to - p.from) * ((t - p.start) / p.width).min(1.0)
    }
}

/// sin(x)/x, 1 at 0.
fn sinc(x: f64) -> f64 {
    if x == 0.0 { 1.0 } else { x.sin() / x }
}

/// How a waveform's size is given, amperes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Amplitude {
    /// Largest |i(t)| of the zero-mean waveform, A.
    Peak(f64),
    /// Rms of the zero-mean waveform, A.
    Rms(f64),
    /// Maximum minus minimum, A.
    PeakToPeak(f64),
}

impl Amplitude {
    /// The factor (A per shape unit) that gives `shape` this amplitude.
    pub fn scale(&self, shape: &Shape) -> f64 {
        match *self {
            Amplitude::Peak(a) => a / shape.peak(),
            Amplitude::Rms(a) => a / shape.rms(),
            Amplitude::PeakToPeak(a) => a / shape.peak_to_peak(),
        }
    }

    /// The peak value, A, of a sine of this amplitude.
    pub fn sine_peak(&self) -> f64 {
        match *self {
            Amplitude::Peak(a) => a,
            Amplitude::Rms(a) => a * std::f64::consts::SQRT_2,
            Amplitude::PeakToPeak(a) => a / 2.0,
        }
    }
}

/// Which lines of a series to keep.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LineCount {
    /// The first this many non-zero lines.
    Exactly(u64),
    /// Every line down to this fraction of the largest, at most [`MAX_DEFAULT_LINES`].
    Tolerance(f64),
}

/// A waveform's spectral lines.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// The kept lines (peak phasors, A), ascending frequency.
    pub lines: Vec<Line>,
    /// True when the tolerance rule stopped at [`MAX_DEFAULT_LINES`] with lines above
    /// the tolerance possibly left beyond.
    pub capped: bool,
    /// The mean square over a period of the current's time derivative, A²/s² (every
    /// line, listed or not); infinite when the shape has a jump.
    pub slope_mean_square: f64,
    /// The rms of the whole waveform (every line, listed or not), A.
    pub rms: f64,
}

/// The spectral lines of `shape` repeating at `frequency` Hz, scaled to `amplitude`,
/// time-shifted so that the fundamental has argument `phase` (radians), kept by `count`.
pub fn series(
    shape: &Shape,
    frequency: f64,
    amplitude: Amplitude,
    phase: f64,
    count: LineCount,
) -> Series {
    let scale = amplitude.scale(shape);
    let shift = phase - shape.coefficient(1).arg();
    let (kept, capped) = select(shape, count);
    let lines = kept
        .into_iter()
        .map(|(n, c)| Line {
            frequency: n as f64 * frequency,
            current: 2.0 * scale * c * Complex64::from_polar(1.0, n as f64 * shift),
        })
        .collect();
    Series {
        lines,
        capped,
        slope_mean_square: (scale * frequency).powi(2) * shape.slope_mean_square(),
        rms: scale * shape.rms(),
    }
}

/// The harmonic orders and coefficients kept under `count`, and whether the cap cut it.
fn select(shape: &Shape, count: LineCount) -> (Vec<(u64, Complex64)>, bool) {
    let relative = match count {
        LineCount::Exactly(_) => ZERO_LINE,
        LineCount::Tolerance(t) => t.max(ZERO_LINE),
    };
    let mut largest = 0.0_f64;
    let mut kept = Vec::new();
    for n in 1..=SCAN_LIMIT {
        let c = shape.coefficient(n);
        largest = largest.max(c.norm());
        if c.norm() >= relative * largest {
            kept.push((n, c));
        }
        let beyond = shape.envelope(n + 1) >= relative * largest;
        match count {
            LineCount::Exactly(k) if kept.len() as u64 >= k => return (kept, false),
            LineCount::Tolerance(_) if !beyond => break,
            LineCount::Tolerance(_) if kept.len() >= MAX_DEFAULT_LINES => return (kept, true),
            _ => {}
        }
    }
    kept.retain(|(_, c)| c.norm() >= relative * largest);
    (kept, false)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The breakpoint formula as written in the module doc, evaluated directly: jumps
    /// J_k and slope changes Δs_k found from the vertices. A slow, plain oracle for the
    /// regrouped sum in `Shape::coefficient`.
    fn breakpoint_coefficient(shape: &Shape, n: u64) -> Complex64 {
        let pieces: Vec<Piece> = shape.pieces().collect();
        let jw = Complex64::new(0.0, TAU * n as f64);
        let slope = |p: &Piece| {
            if p.width > 0.0 {
                (p.to - p.from) / p.width
            } else {
                0.0
            }
        };
        let phase = |t: f64| Complex64::from_polar(1.0, -TAU * n as f64 * t);
        let mut c = Complex64::new(0.0, 0.0);
        for (k, p) in pieces.iter().enumerate() {
            if p.width == 0.0 {
                c += (p.to - p.from) * phase(p.start) / jw;
            }
            // Slope change where this piece starts: its slope minus the last sloped one.
            let before = (1..=pieces.len())
                .map(|d| &pieces[(k + pieces.len() - d) % pieces.len()])
                .find(|q| q.width > 0.0)
                .map_or(0.0, slope);
            if p.width > 0.0 {
                c += (slope(p) - before) * phase(p.start) / (jw * jw);
            }
        }
        c
    }

    #[test]
    fn regrouped_sum_equals_the_breakpoint_formula() {
        let shapes = [
            Waveform::Square.shape(),
            Waveform::Triangle.shape(),
            Waveform::Sawtooth { fall: 0.0 }.shape(),
            Waveform::Trapezoid {
                rise: 0.1,
                fall: 0.03,
                duty: 0.3,
            }
            .shape(),
            Waveform::Trapezoid {
                rise: 0.0,
                fall: 0.2,
                duty: 0.7,
            }
            .shape(),
        ];
        for s in &shapes {
            for n in [1, 2, 3, 7, 50, 333] {
                let (a, b) = (s.coefficient(n), breakpoint_coefficient(s, n));
                assert!(
                    (a - b).norm() <= 1e-13 * s.coefficient(1).norm(),
                    "{s:?} n={n}: {a} {b}"
                );
            }
        }
    }

    #[test]
    fn envelope_bounds_every_later_coefficient() {
        let s = Waveform::Trapezoid {
            rise: 0.02,
            fall: 0.05,
            duty: 0.4,
        }
        .shape();
        for n in 1..400 {
            let worst = (n..n + 200)
                .map(|m| s.coefficient(m).norm())
                .fold(0.0, f64::max);
            assert!(worst <= s.envelope(n) * (1.0 + 1e-12), "n={n}");
        }
    }

    #[test]
    fn a_short_edge_does_not_lose_accuracy() {
        // A 1e-12-period edge is a jump to within (πn·1e-12)²/6 (sinc's series): the
        // trapezoid's fundamental equals the ideal pulse's to 1e-15.
        let soft = Waveform::Trapezoid {
            rise: 1e-12,
            fall: 1e-12,
            duty: 0.5,
        }
        .shape();
        let hard = Waveform::Trapezoid {
            rise: 0.0,
            fall: 0.0,
            duty: 0.5,
        }
        .shape();
        assert!((soft.coefficient(1) - hard.coefficient(1)).norm() < 1e-15);
    }
}
