//! Warnings about results that hold only in the model: a sweep step or orientation in
//! which the victim touches a source, and shielding beyond what real shields reach.

use super::couple::VictimReport;
use super::sweep::{SweepResult, SweepRow};
use crate::model::Scene;

/// Shielding above which a figure is the ideal model's, not a real shield's, dB (100):
/// an infinite, seamless sheet keeps attenuating with thickness and frequency, while
/// real sheets leak at seams, holes and edges and rarely do better than this (common
/// practice).
pub const IDEAL_SHIELDING_DB: f64 = 100.0;

/// The closing words of every warning or note about shielding over
/// [`IDEAL_SHIELDING_DB`].
pub const IDEAL_SHIELDING_NOTE: &str = "beyond about 100 dB the figure is an ideal, \
     infinite and seamless sheet's; real shields leak at seams, holes and edges";

/// `couple`: a warning when a line's shielding into the victim of `report` exceeds
/// [`IDEAL_SHIELDING_DB`], naming the largest (dB; the first line that reaches it), its
/// line (Hz) and its source.
pub fn couple_shielding_warning(report: &VictimReport) -> Option<String> {
    let (db, f, source) = report
        .sources
        .iter()
        .flat_map(|s| {
            s.lines
                .iter()
                .map(move |l| (l.shielding_db, l.frequency, &s.id))
        })
        .filter(|l| l.0 > IDEAL_SHIELDING_DB)
        .min_by(|a, b| b.0.total_cmp(&a.0))?;
    Some(format!(
        "victim \"{}\": the shielding of the {} line of source \"{source}\" reaches {}; \
         {IDEAL_SHIELDING_NOTE}",
        report.id,
        crate::units::format_si(f, "Hz", 4),
        shown_db(db)
    ))
}

/// A shielding (dB) for a warning; at the report's cap, said so.
fn shown_db(db: f64) -> String {
    if db >= crate::shield::SHIELDING_CAP_DB {
        format!("{db:.0} dB or more, the report's cap")
    } else {
        format!("{db:.1} dB")
    }
}

/// `sweep`: the warnings of one finished sweep: contact (one warning naming every
/// source touched and the range of swept values where it is), then shielding over
/// [`IDEAL_SHIELDING_DB`] (one warning naming the largest value and the first step that
/// reaches it, with every compared alternative included).
pub fn sweep_warnings(scene: &Scene, result: &SweepResult) -> Vec<String> {
    let mut out = Vec::new();
    out.extend(contact_warning(scene, result));
    out.extend(shielding_warning(scene, result));
    out
}

/// One warning for every step where the victim touches or crosses a source: per source
/// the runs of consecutive steps in contact, as ranges of swept values.
fn contact_warning(scene: &Scene, result: &SweepResult) -> Option<String> {
    let spec = &result.spec;
    let touched = result.rows.iter().filter(|r| !r.contact.is_empty()).count();
    if touched == 0 {
        return None;
    }
    let per_source: Vec<String> = (0..scene.sources.len())
        .filter_map(|i| {
            let runs = contact_runs(&result.rows, i);
            let ranges: Vec<String> = runs
                .iter()
                .map(|&(lo, hi)| {
                    if lo == hi {
                        format!("at {}", spec.vary.format_value(lo))
                    } else {
                        format!(
                            "from {} to {}",
                            spec.vary.format_value(lo),
                            spec.vary.format_value(hi)
                        )
                    }
                })
                .collect();
            (!ranges.is_empty()).then(|| {
                format!(
                    "source \"{}\" {}",
                    scene.sources[i].id,
                    ranges.join(" and ")
                )
            })
        })
        .collect();
    Some(format!(
        "sweep \"{}\": victim \"{}\" touches or crosses {} ({} of {} steps, marked contact in \
         the CSV and JSON): the EMF there is dominated by the contact and depends on the wire \
         radii",
        spec.id,
        scene.victims[spec.victim].id,
        per_source.join("; "),
        touched,
        result.rows.len()
    ))
}

/// The runs of consecutive `rows` in contact with source `i`: (first, last) swept value
/// of each, in row order.
fn contact_runs(rows: &[SweepRow], i: usize) -> Vec<(f64, f64)> {
    let mut runs: Vec<(f64, f64)> = Vec::new();
    let mut open = false;
    for r in rows {
        let touching = r.contact.contains(&i);
        match (touching, open, runs.last_mut()) {
            (true, true, Some(last)) => last.1 = r.value,
            (true, _, _) => runs.push((r.value, r.value)),
            _ => {}
        }
        open = touching;
    }
    runs
}

/// One warning if any row (the sweep's own or a compared alternative's) has a line
/// shielded by more than [`IDEAL_SHIELDING_DB`].
fn shielding_warning(scene: &Scene, result: &SweepResult) -> Option<String> {
    let own = result.rows.iter().map(|r| (r, None));
    let alts = result
        .compare
        .iter()
        .flat_map(|a| a.rows.iter().map(move |r| (r, a.shield.as_deref())));
    let (db, row, option) = own
        .chain(alts)
        .flat_map(|(r, o)| r.shielding_db.iter().map(move |&db| (db, r, o)))
        .filter(|x| x.0 > IDEAL_SHIELDING_DB)
        .min_by(|a, b| b.0.total_cmp(&a.0))?;
    let spec = &result.spec;
    Some(format!(
        "sweep \"{}\": the shielding of victim \"{}\"{} at {} = {} reaches {}; \
         {IDEAL_SHIELDING_NOTE}",
        spec.id,
        scene.victims[spec.victim].id,
        option.map_or(String::new(), |o| format!(" with {o}")),
        spec.vary.name(),
        spec.vary.format_value(row.value),
        shown_db(db)
    ))
}
