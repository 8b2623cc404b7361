//! The page's section per sweep (plot, range, safe value, null orientation as placed)
//! and its shield options at the placed position.

use super::{Fact, Num};
use crate::Scene;
use crate::model::Vary;
use crate::run::sweep::SweepResult;
use crate::run::warnings::IDEAL_SHIELDING_DB;

/// Turning into the null more than this (dB) is said as "a null", not as a figure.
const DEEP_NULL_DB: f64 = 100.0;

/// The section of one sweep.
pub(crate) struct SweepSection {
    pub(super) anchor: String,
    pub(super) id: String,
    pub(super) facts: Vec<Fact>,
    pub(super) plot: Option<String>,
}

/// One section per sweep result, with its plot from `plots`.
pub(crate) fn sections(
    scene: &Scene,
    results: &[SweepResult],
    plots: &[Option<String>],
) -> Vec<SweepSection> {
    results
        .iter()
        .enumerate()
        .map(|(i, r)| SweepSection {
            anchor: format!("sweep-{}", i + 1),
            id: r.spec.id.clone(),
            facts: facts(scene, r),
            plot: plots
                .get(i)
                .and_then(Option::as_deref)
                .map(super::inline_svg),
        })
        .collect()
}

/// A swept value with the exact value in SI units (m, rad, Hz).
fn swept(vary: Vary, x: f64) -> Num {
    Num::new(x, vary.format_value(x))
}

fn facts(scene: &Scene, r: &SweepResult) -> Vec<Fact> {
    let spec = &r.spec;
    let dir = super::super::text::fmt_dir;
    let what = match spec.vary {
        Vary::Distance(d) => format!("distance moved along {}", dir(&d)),
        Vary::Angle(a) => format!("angle turned about {}", dir(&a)),
        Vary::Frequency => "fundamental frequency (every line scales with it)".to_string(),
    };
    let unit = match spec.vary {
        Vary::Distance(_) => "m moved",
        Vary::Angle(_) => "°",
        Vary::Frequency => "Hz",
    };
    let mut f = vec![
        Fact::words("victim", scene.victims[spec.victim].id.clone()),
        Fact::words(
            "varies",
            format!(
                "{what}, {} steps on a {} scale{}",
                spec.steps,
                if spec.log { "log" } else { "linear" },
                if spec.worst {
                    ", the victim turned to its worst orientation at every step"
                } else {
                    ""
                }
            ),
        ),
        Fact::num(&format!("from ({unit})"), swept(spec.vary, spec.from)),
        Fact::num(&format!("to ({unit})"), swept(spec.vary, spec.to)),
    ];
    let (lo, hi) = r.rows.iter().fold((f64::INFINITY, 0.0f64), |(a, b), row| {
        (a.min(row.total_rms), b.max(row.total_rms))
    });
    f.push(Fact::num("lowest total EMF (V rms)", Num::si(lo, "V")));
    f.push(Fact::num("highest total EMF (V rms)", Num::si(hi, "V")));
    f.extend(verdict(r));
    let contact = r.rows.iter().filter(|row| !row.contact.is_empty()).count();
    if contact > 0 {
        f.push(Fact::words(
            "steps in contact with a source",
            format!(
                "{contact} of {}: their EMF is the contact's, not a coupling",
                r.rows.len()
            ),
        ));
    }
    f.push(Fact::num(
        "total EMF as placed (V rms)",
        Num::si(r.placed_total, "V"),
    ));
    f.extend(null(r));
    f
}

/// The limit and what the sweep says against it: the safe distance of a distance
/// sweep, the steps over the limit of the others.
fn verdict(r: &SweepResult) -> Vec<Fact> {
    let Some(limit) = r.limit else {
        return vec![Fact::words("limit (V rms)", "none set: no safe value")];
    };
    let mut f = vec![Fact::num("limit (V rms)", Num::si(limit, "V"))];
    let spec = &r.spec;
    if let Vary::Distance(_) = spec.vary {
        let label = "safe distance (m moved)";
        f.push(match r.safe_value {
            Some(s) if s == spec.from => Fact::num(
                label,
                Num::new(s, "under the limit over the whole range".to_string()),
            ),
            Some(s) => Fact::num(
                label,
                Num::new(
                    s,
                    format!(
                        "beyond {} (the total stays under the limit to the end of the range)",
                        spec.vary.format_value(s)
                    ),
                ),
            ),
            None => Fact::words(label, "never under the limit within the range"),
        });
    } else {
        let n = r.rows.iter().filter(|row| row.total_rms > limit).count();
        f.push(Fact::words(
            "steps over the limit",
            format!("{n} of {}", r.rows.len()),
        ));
    }
    f
}

/// The null (best) orientation at the placed position, when the sweep found one.
fn null(r: &SweepResult) -> Vec<Fact> {
    let Some(b) = r.best_at_placed else {
        return vec![Fact::words(
            "null orientation as placed",
            "none found (no tilt of the victim could be solved)",
        )];
    };
    let gain = crate::coupling::margin_db(r.placed_total, b.total_rms);
    let reduction = if gain > DEEP_NULL_DB {
        Num::new(
            gain,
            "more than 100 dB: a null, in practice limited by how exactly the victim can be \
             placed"
                .to_string(),
        )
    } else {
        Num::new(gain, format!("{} dB", super::super::text::fixed(gain, 1)))
    };
    vec![
        Fact::words(
            "null orientation as placed (victim axis)",
            super::super::text::fmt_dir(&b.normal),
        ),
        Fact::num(
            "total EMF in that orientation (V rms)",
            Num::si(b.total_rms, "V"),
        ),
        Fact::num("reduction by turning (dB)", reduction),
    ]
}

/// One shield option at the placed position.
pub(crate) struct OptionRow {
    pub(super) label: String,
    /// `None`: the option cannot be solved at the placed position.
    pub(super) total: Option<Num>,
    pub(super) margin: Option<Num>,
    pub(super) over: bool,
}

/// One line's shielding under every option.
pub(crate) struct OptionLine {
    pub(super) frequency: Num,
    /// Per option, in the order of the rows; `None` where it cannot be solved.
    pub(super) cells: Vec<Option<(Num, bool)>>,
}

/// The shield options of one sweep with `compare`, at the placed position with the
/// scene's own lines.
pub(crate) struct Options {
    pub(super) anchor: String,
    pub(super) id: String,
    pub(super) victim: String,
    pub(super) limit: Option<Num>,
    pub(super) rows: Vec<OptionRow>,
    pub(super) lines: Vec<OptionLine>,
    pub(super) any_ideal: bool,
}

/// The shield options of every sweep that compares them.
pub(crate) fn options(scene: &Scene, results: &[SweepResult]) -> Vec<Options> {
    results
        .iter()
        .enumerate()
        .filter_map(|(i, r)| {
            let freqs = r
                .compare
                .iter()
                .find_map(|a| a.placed.as_ref().map(|p| &p.lines))?;
            let rows = r
                .compare
                .iter()
                .map(|a| {
                    let total = a.placed.as_ref().map(|p| p.total_rms);
                    let margin = total
                        .zip(r.limit)
                        .map(|(t, l)| crate::coupling::margin_db(l, t))
                        .filter(|m| m.is_finite());
                    OptionRow {
                        label: a.label(),
                        total: total.map(|t| Num::si(t, "V")),
                        margin: margin.map(Num::db),
                        over: total.zip(r.limit).is_some_and(|(t, l)| t > l),
                    }
                })
                .collect();
            let lines: Vec<OptionLine> = freqs
                .iter()
                .enumerate()
                .map(|(k, (f, _))| OptionLine {
                    frequency: Num::si(*f, "Hz"),
                    cells: r
                        .compare
                        .iter()
                        .map(|a| {
                            let p = a.placed.as_ref()?;
                            let db = p.shielding_db.get(k).copied().unwrap_or(0.0);
                            Some((Num::shielding(db), db > IDEAL_SHIELDING_DB))
                        })
                        .collect(),
                })
                .collect();
            Some(Options {
                anchor: format!("options-{}", i + 1),
                id: r.spec.id.clone(),
                victim: scene.victims[r.spec.victim].id.clone(),
                limit: r.limit.map(|l| Num::si(l, "V")),
                rows,
                any_ideal: lines.iter().flat_map(|l| &l.cells).flatten().any(|c| c.1),
                lines,
            })
        })
        .collect()
}
