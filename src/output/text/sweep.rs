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
        placed_null(&mut out, r);
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
