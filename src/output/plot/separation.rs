//! Distance sweeps: the separation between the victim's centre and the centre of the
//! nearest source (its frame origin), shown beside the distance moved.

use super::{Axis, Chart, PlotError, err, three_figures};
use crate::field::Vec3;
use crate::model::{Scene, SweepSpec};
use plotters::prelude::*;

/// The victim's centre relative to one source's centre as the victim moves.
pub(super) struct Separation {
    /// The source's id.
    pub source: String,
    /// The victim's centre as placed minus the source's centre, m.
    offset: Vec3,
    /// The unit direction of motion.
    along: Vec3,
}

impl Separation {
    /// The separation from the source whose centre is nearest the victim's centre at
    /// the start of the sweep; `None` in a scene without sources.
    pub fn new(scene: &Scene, spec: &SweepSpec, along: Vec3) -> Option<Self> {
        let centre = scene.victims[spec.victim].frame.origin;
        let start = centre + along * spec.from;
        let gap = |o: Vec3| (start - o).norm();
        let source = scene
            .sources
            .iter()
            .min_by(|a, b| gap(a.frame.origin).total_cmp(&gap(b.frame.origin)))?;
        Some(Separation {
            source: source.id.clone(),
            offset: centre - source.frame.origin,
            along,
        })
    }

    /// The separation after moving `moved` (m), m.
    pub fn at(&self, moved: f64) -> f64 {
        (self.offset + self.along * moved).norm()
    }

    /// The distance moved (m) at which the separation is `s` (m) while receding from
    /// the source: the larger root of |offset + along·m| = s.
    pub fn moved_for(&self, s: f64) -> Option<f64> {
        let b = self.offset.dot(&self.along);
        let disc = b * b - self.offset.norm_squared() + s * s;
        (disc >= 0.0).then(|| -b + disc.sqrt())
    }

    /// Whether the separation grows over the whole range from `from` to `to` (m), so
    /// that each distance moved has one separation and the reverse.
    pub fn receding(&self, from: f64, to: f64) -> bool {
        from.min(to) >= -self.offset.dot(&self.along)
    }

    /// When the separation does not grow over the whole range from `from` to `to` (m),
    /// so that no second axis can show it: a legend note with the separation at the
    /// start, at the closest approach when it lies inside the range, and at the end.
    pub fn passing_note(&self, from: f64, to: f64) -> Option<String> {
        if self.receding(from, to) {
            return None;
        }
        // `+ 0.0` turns a negative zero into "0".
        let mm = |m: f64| three_figures(m * 1e3 + 0.0);
        let closest = -self.offset.dot(&self.along);
        let mut parts = vec![format!("{} mm at {} mm moved", mm(self.at(from)), mm(from))];
        if closest > from.min(to) && closest < from.max(to) {
            parts.push(format!(
                "{} mm (closest) at {} mm",
                mm(self.at(closest)),
                mm(closest)
            ));
        }
        parts.push(format!("{} mm at {} mm", mm(self.at(to)), mm(to)));
        Some(format!(
            "centre-to-centre separation from \"{}\": {}",
            self.source,
            parts.join(", ")
        ))
    }
}

impl Separation {
    /// A second x axis along the top of the plot: the separation between the victim's
    /// centre and the nearest source's centre, in mm, at round values.
    pub fn draw_axis(
        &self,
        chart: &mut Chart<'_, '_>,
        x_axis: &Axis,
        (x0, x1): (f64, f64),
        top: f64,
    ) -> Result<(), PlotError> {
        let mm = |x: f64| {
            let moved = if x_axis.log { 10f64.powf(x) } else { x } * x_axis.scale;
            self.at(moved) * 1e3
        };
        let (s0, s1) = (mm(x0).min(mm(x1)), mm(x0).max(mm(x1)));
        let ticks = separation_ticks(s0, s1, x_axis.log);
        let style = ("sans-serif", 15).into_font().color(&BLACK).pos(
            plotters::style::text_anchor::Pos::new(
                plotters::style::text_anchor::HPos::Center,
                plotters::style::text_anchor::VPos::Bottom,
            ),
        );
        let mut last = f64::NEG_INFINITY;
        for s in ticks {
            let Some(moved) = self.moved_for(s * 1e-3) else {
                continue;
            };
            if x_axis.log && moved <= 0.0 {
                continue;
            }
            let x = x_axis.to_plot(moved);
            // Skip ticks outside the axis and labels closer than about 40 px to the last.
            if x < x0 || x > x1 || (x - last) < 0.05 * (x1 - x0) {
                continue;
            }
            last = x;
            chart
                .draw_series(std::iter::once(
                    EmptyElement::at((x, top))
                        + PathElement::new(vec![(0, 0), (0, -5)], BLACK.stroke_width(1))
                        + Text::new(three_figures(s), (0, -7), style.clone()),
                ))
                .map_err(err)?;
        }
        let title = format!(
            "separation between the centres of the victim and \"{}\" (mm)",
            self.source
        );
        chart
            .draw_series(std::iter::once(
                EmptyElement::at(((x0 + x1) / 2.0, top))
                    + Text::new(title, (0, -27), style.clone()),
            ))
            .map_err(err)?;
        chart
            .draw_series(LineSeries::new(
                vec![(x0, top), (x1, top)],
                BLACK.stroke_width(1),
            ))
            .map_err(err)?;
        Ok(())
    }
}

/// Round separations (mm) from `s0` to `s1` for the top axis: 1-2-5 steps, or on a log
/// axis 1, 1.5, 2, 3, 5 and 7 of each decade when 1-2-5 would give fewer than four.
fn separation_ticks(s0: f64, s1: f64, log: bool) -> Vec<f64> {
    if !log {
        return super::linear_ticks(s0, s1);
    }
    let ticks: Vec<f64> = super::log_ticks(s0.log10(), s1.log10())
        .into_iter()
        .map(|t| 10f64.powf(t))
        .collect();
    if ticks.len() >= 4 {
        return ticks;
    }
    let mut out = Vec::new();
    for k in (s0.log10().floor() as i32)..=(s1.log10().ceil() as i32) {
        for m in [1.0, 1.5, 2.0, 3.0, 5.0, 7.0] {
            let t = m * 10f64.powi(k);
            if t >= s0 && t <= s1 {
                out.push(t);
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separation_and_its_inverse_agree_with_pythagoras() {
        // Victim 40 mm along x and 3 mm under the source's centre, moving along x: the
        // separation is √((40 + m)² + 3²) (Pythagoras); 3-4-5 at m = −36 mm.
        let s = Separation {
            source: "s".into(),
            offset: Vec3::new(0.040, 0.0, -0.003),
            along: Vec3::new(1.0, 0.0, 0.0),
        };
        assert!((s.at(-0.036) - 0.005).abs() < 1e-15);
        assert!((s.at(0.010) - (0.05f64.powi(2) + 0.003f64.powi(2)).sqrt()).abs() < 1e-15);
        let m = s.moved_for(0.1).unwrap();
        assert!((s.at(m) - 0.1).abs() < 1e-12, "{m}");
        assert!(s.moved_for(0.002).is_none());
        assert!(s.receding(0.001, 0.3) && !s.receding(-0.05, 0.3));
        // Passing by: 5 mm apart at the closest approach, m = −40 mm.
        let note = s.passing_note(-0.044, 0.0).unwrap();
        assert!(
            note.ends_with("5 mm at -44 mm moved, 3 mm (closest) at -40 mm, 40.1 mm at 0 mm"),
            "{note}"
        );
        assert!(s.passing_note(0.0, 0.1).is_none());
    }
}
