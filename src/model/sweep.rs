//! Sweeps: what varies, over which range, and where the victim is at each value.

use super::Victim;
use crate::field::Vec3;
use nalgebra::{Rotation3, Unit};

/// What a sweep varies.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Vary {
    /// The victim moves along a unit direction from its placed position; values in m.
    Distance(Vec3),
    /// The victim turns about a unit axis through its centre; values in rad.
    Angle(Vec3),
    /// The fundamental of every source; its lines scale with it; values in Hz.
    Frequency,
}

impl Vary {
    /// The keyword as written in scenes and JSON.
    pub fn name(&self) -> &'static str {
        match self {
            Vary::Distance(_) => "distance",
            Vary::Angle(_) => "angle",
            Vary::Frequency => "frequency",
        }
    }

    /// A swept value for messages: a length, an angle in degrees or a frequency.
    pub fn format_value(&self, x: f64) -> String {
        match self {
            Vary::Distance(_) => crate::units::format_si(x, "m", 4),
            Vary::Angle(_) => format!("{:.2}°", x.to_degrees()),
            Vary::Frequency => crate::units::format_si(x, "Hz", 4),
        }
    }
}

/// A validated sweep.
#[derive(Clone, Debug)]
pub struct SweepSpec {
    /// Unique id (names the output files).
    pub id: String,
    /// Index of the victim in `Scene::victims`.
    pub victim: usize,
    /// What varies.
    pub vary: Vary,
    /// First value (m, rad or Hz).
    pub from: f64,
    /// Last value (m, rad or Hz).
    pub to: f64,
    /// Number of samples, at least 2; `from` and `to` are sampled exactly.
    pub steps: usize,
    /// Logarithmic spacing (else linear).
    pub log: bool,
    /// Turn the victim to its worst-case orientation at every step.
    pub worst: bool,
    /// Shield alternatives to compare (`compare`): each a shield id, or `None` for no
    /// sheet at all; each gives one more curve with only that sheet fitted.
    pub compare: Vec<Option<String>>,
}

impl SweepSpec {
    /// The swept values: `steps` samples from `from` to `to`, endpoints exact. Sample k
    /// of n − 1 intervals is from + (to − from)·k/(n − 1) (linear) or
    /// from·10^(log10(to/from)·k/(n − 1)) (log), the product taken before the quotient
    /// so that evenly divisible ranges give round values (5, 10, 15, 20 mm; 10 Hz,
    /// 100 Hz, 1 kHz).
    pub fn values(&self) -> Vec<f64> {
        let n = self.steps;
        let last = (n.max(2) - 1) as f64;
        (0..n)
            .map(|k| {
                if k == 0 {
                    return self.from;
                }
                if k == n - 1 {
                    return self.to;
                }
                if self.log {
                    let decades = (self.to / self.from).log10();
                    self.from * 10f64.powf(decades * k as f64 / last)
                } else {
                    self.from + (self.to - self.from) * k as f64 / last
                }
            })
            .collect()
    }
}

/// The victim `base` at swept value `x` of `spec` (moved, turned, or as placed).
pub fn victim_at(base: &Victim, spec: &SweepSpec, x: f64) -> Victim {
    match spec.vary {
        Vary::Distance(dir) => base.moved(&Rotation3::identity(), &(dir * x)),
        Vary::Angle(axis) => base.moved(
            &Rotation3::from_axis_angle(&Unit::new_normalize(axis), x),
            &Vec3::zeros(),
        ),
        Vary::Frequency => base.clone(),
    }
}
