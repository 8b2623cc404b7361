//! `sweep`: per sweep its range, the verdict against the limit and the placed null.

use super::{fmt_dir, si, title};
use crate::Scene;
use std::fmt::Write;

/// `sweep`: per sweep the range, the safe value and the orientation advice.
pub fn sweeps(
    scene: &Scene,
    results: &[crate::run::sweep::SweepResult],
    written: &[String],
) -> String {
    use crate::model::Vary;
    let mut out = String::new();
    title(&mut out, "sweeps", scene);
    for r in results {
        let v = &scene.victims[r.spec.victim];
        let fmt_value = |x: f64| match r.spec.vary {
            Vary::Distance(_) => si(x, "m"),
            Vary::Angle(_) => format!("{}°", super::fixed(x.to_degrees(), 2)),
            Vary::Frequency => si(x, "Hz"),
        };
        let _ = writeln!(
            out,
            "\nsweep {}: victim {}, {} from {} to {} in {} steps ({}){}",
            r.spec.id,
            v.id,
            r.spec.vary.name(),
            fmt_value(r.spec.from),
            fmt_value(r.spec.to),
            r.spec.steps,
            if r.spec.log { "log" } else { "linear" },
            if r.spec.worst {
                ", worst-case orientation at every step"
            } else {
                ""
            }
        );
        sweep_verdict(&mut out, r);
        contact_note(&mut out, r);
        placed_null(&mut out, r);
        shield_options(&mut out, r);
    }
    if !written.is_empty() {
        let _ = writeln!(out, "\nwrote {}", written.join(", "));
    }
    out
}

/// `sweep`: the range of the total EMF and what it says against the victim's limit (the
/// safe distance for a distance sweep).
fn sweep_verdict(out: &mut String, r: &crate::run::sweep::SweepResult) {
    use crate::model::Vary;
    let (lo, hi) = r.rows.iter().fold((f64::INFINITY, 0.0f64), |(a, b), row| {
        (a.min(row.total_rms), b.max(row.total_rms))
    });
    let _ = writeln!(
        out,
        "  total EMF between {} and {} rms",
        si(lo, "V"),
        si(hi, "V")
    );
    match (r.limit, r.spec.vary) {
        (Some(l), Vary::Distance(_)) => match r.safe_value {
            Some(s) if s == r.spec.from => {
                let _ = writeln!(out, "  under the {} limit over the whole range", si(l, "V"));
            }
            Some(s) => {
                let _ = writeln!(
                    out,
                    "  SAFE DISTANCE: beyond {} moved (total under {} rms to the end of the range)",
                    si(s, "m"),
                    si(l, "V")
                );
            }
            None => {
                let _ = writeln!(
                    out,
                    "  never under the {} limit within the range",
                    si(l, "V")
                );
            }
        },
        (Some(l), _) => {
            let n = r.rows.iter().filter(|row| row.total_rms > l).count();
            let _ = writeln!(
                out,
                "  {n} of {} steps over the {} limit",
                r.rows.len(),
                si(l, "V")
            );
        }
        (None, _) => {
            let _ = writeln!(out, "  victim has no limit: no safe value");
        }
    }
}

/// `sweep`: the orientation at the placed position that gives the least EMF, if the
/// sweep searched for it.
fn placed_null(out: &mut String, r: &crate::run::sweep::SweepResult) {
    if let Some(b) = r.best_at_placed {
        let gain = crate::coupling::margin_db(r.placed_total, b.total_rms);
        let axis = fmt_dir(&b.normal);
        let _ = if gain > 100.0 {
            writeln!(
                out,
                "  at its placed position, turning the victim's axis to {axis} puts it in a \
                 null (more than 100 dB under the {} as placed; in practice limited by how \
                 exactly it can be placed)",
                si(r.placed_total, "V")
            )
        } else {
            writeln!(
                out,
                "  at its placed position, turning the victim's axis to {axis} gives {} rms \
                 ({} as placed, {gain:.1} dB less)",
                si(b.total_rms, "V"),
                si(r.placed_total, "V"),
            )
        };
    }
}

/// `sweep`: how many steps the victim touches or crosses a source in (none: nothing).
fn contact_note(out: &mut String, r: &crate::run::sweep::SweepResult) {
    let n = r.rows.iter().filter(|row| !row.contact.is_empty()).count();
    if n > 0 {
        let _ = writeln!(
            out,
            "  {n} of {} steps put the victim in contact with a source (contact = 1 in the \
             CSV): their EMF is the contact's, not a coupling",
            r.rows.len()
        );
    }
}

/// Most line columns the shield-options table prints; `sweep --json` has every line.
const OPTION_LINES: usize = 6;

/// `sweep` with `compare`: per option at the placed position with the scene's own
/// lines, the total and each line's shielding against nothing fitted; values over
/// [`IDEAL_SHIELDING_DB`](crate::run::warnings::IDEAL_SHIELDING_DB) are marked `*`
/// and explained once.
fn shield_options(out: &mut String, r: &crate::run::sweep::SweepResult) {
    use crate::run::warnings::{IDEAL_SHIELDING_DB, IDEAL_SHIELDING_NOTE};
    let Some(lines) = r
        .compare
        .iter()
        .find_map(|a| a.placed.as_ref().map(|p| &p.lines))
    else {
        return;
    };
    let shown = lines.len().min(OPTION_LINES);
    let _ = writeln!(
        out,
        "  shield options at the placed position (the scene's own lines; shielding against \
         nothing fitted{}):",
        if lines.len() > shown {
            format!(
                "; the first {shown} of {} lines, all in sweep --json",
                lines.len()
            )
        } else {
            String::new()
        }
    );
    let width = r
        .compare
        .iter()
        .map(|a| a.label().len())
        .fold(9, usize::max);
    let _ = write!(out, "    {:<width$}  {:>12}", "option", "total rms");
    for (f, _) in &lines[..shown] {
        let _ = write!(out, "  {:>13}", si(*f, "Hz"));
    }
    let _ = writeln!(out);
    let mut ideal = false;
    for a in &r.compare {
        let Some(placed) = &a.placed else {
            let _ = writeln!(
                out,
                "    {:<width$}  cannot be solved at the placed position",
                a.label()
            );
            continue;
        };
        let mut row = format!(
            "    {:<width$}  {:>12}",
            a.label(),
            si(placed.total_rms, "V")
        );
        for k in 0..shown {
            let db = placed.shielding_db.get(k).copied().unwrap_or(0.0);
            let mark = if db > IDEAL_SHIELDING_DB { "*" } else { " " };
            ideal |= db > IDEAL_SHIELDING_DB;
            let _ = write!(row, "  {db:>10.1} dB{mark}");
        }
        let _ = writeln!(out, "{}", row.trim_end());
    }
    if ideal {
        let _ = writeln!(out, "    * over 100 dB: {IDEAL_SHIELDING_NOTE}");
    }
}
