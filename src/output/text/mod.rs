//! Human-readable reports for the terminal.

use crate::Scene;
use crate::coupling::Total;
use crate::field::Vec3;
use crate::run::couple::VictimReport;
use crate::run::probe::ProbePoint;
use crate::run::warnings::{IDEAL_SHIELDING_DB, IDEAL_SHIELDING_NOTE};
use crate::units::{format_area, format_si};
use std::fmt::Write;

mod check;
mod sweep;

pub use check::check;
pub use sweep::sweeps;

/// A value with its SI unit, four significant digits.
fn si(x: f64, unit: &str) -> String {
    format_si(x, unit, 4)
}

/// The report's first line: the command and the scene title.
fn title(out: &mut String, command: &str, scene: &Scene) {
    if scene.title.is_empty() {
        let _ = writeln!(out, "{command}");
    } else {
        let _ = writeln!(out, "{command}: {}", scene.title);
    }
}

/// `couple`: per victim, per source, per line, then the total and the verdict.
pub fn couple(scene: &Scene, reports: &[VictimReport]) -> String {
    let mut out = String::new();
    title(&mut out, "coupling", scene);
    for (r, v) in reports.iter().zip(&scene.victims) {
        let _ = writeln!(
            out,
            "\nvictim {}  ({}, {} turn{}, {} per turn)",
            r.id,
            v.kind,
            v.turns,
            plural(v.turns),
            format_area(v.area, 4)
        );
        let shielded = crate::shield::scene_is_shielded(scene);
        let mut ideal = false;
        for s in &r.sources {
            let _ = writeln!(
                out,
                "  from {}: mutual inductance M = {}{}",
                s.id,
                si(s.mutual_inductance, "H"),
                if shielded { " without shields" } else { "" }
            );
            let _ = write!(
                out,
                "    {:>12}  {:>12}  {:>12}  {:>12}  {:>8}",
                "frequency", "current pk", "EMF pk", "EMF rms", "phase"
            );
            let _ = writeln!(out, "{}", if shielded { "  shielding" } else { "" });
            for l in &s.lines {
                let phase = if l.emf.norm() > 0.0 {
                    format!("{:>7}°", fixed(l.emf.arg().to_degrees(), 2))
                } else {
                    format!("{:>8}", "-")
                };
                let _ = write!(
                    out,
                    "    {:>12}  {:>12}  {:>12}  {:>12}  {phase}",
                    si(l.frequency, "Hz"),
                    si(l.current.norm(), "A"),
                    si(l.emf.norm(), "V"),
                    si(l.emf.norm() / std::f64::consts::SQRT_2, "V"),
                );
                if shielded {
                    let _ = write!(out, "  {:>7.1} dB", l.shielding_db);
                    if l.shielding_db > IDEAL_SHIELDING_DB {
                        ideal = true;
                        out.push_str(" *");
                    }
                }
                let _ = writeln!(out);
            }
        }
        if ideal {
            let _ = writeln!(out, "  * over 100 dB: {IDEAL_SHIELDING_NOTE}");
        }
        total_lines(&mut out, r);
        if let (Some(load), Some(r_load)) = (&r.load, v.load) {
            let value = match load.rms() {
                Some(vl) => format!("{} rms", si(vl, "V")),
                None => "no converging total".to_string(),
            };
            let _ = writeln!(
                out,
                "  across the {} load (through the loop's {} self-inductance): {value}",
                si(r_load, "Ω"),
                si(v.self_inductance, "H"),
            );
        }
    }
    if reports.is_empty() {
        let _ = writeln!(out, "\nthe scene has no [[victim]]: nothing to couple");
    }
    out
}

/// The lines above those listed, the total and the verdict of one victim.
fn total_lines(out: &mut String, r: &VictimReport) {
    let (rms, listed, omitted, exact) = match &r.total {
        Total::Converged {
            rms,
            listed,
            omitted,
            omitted_exact,
        } => (*rms, *listed, *omitted, *omitted_exact),
        Total::Diverges(source) => {
            let _ = writeln!(
                out,
                "  total EMF: does not converge: source {source}'s waveform has an ideal edge \
                 (see the warning)"
            );
            let _ = match r.limit {
                Some(l) => writeln!(out, "  limit {} rms: no verdict", si(l, "V")),
                None => writeln!(out, "  no limit set"),
            };
            return;
        }
    };
    if omitted > 0.0 && 20.0 * (rms / listed).log10() >= 0.005 {
        let how = if exact {
            "closed form"
        } else {
            "estimate, see the docs"
        };
        let _ = writeln!(
            out,
            "  lines above those listed: {} rms ({how}); they add {} dB to the listed {} rms",
            si(omitted, "V"),
            fixed(20.0 * (rms / listed).log10(), 2),
            si(listed, "V"),
        );
    }
    let _ = write!(out, "  total EMF {} rms", si(rms, "V"));
    match (r.limit, r.margin_db(), r.pass()) {
        (Some(l), Some(m), Some(p)) => {
            let verdict = if p { "within limit" } else { "OVER LIMIT" };
            let margin = if m.is_finite() {
                format!("margin {} dB", signed(m, 1))
            } else {
                "no EMF".to_string()
            };
            let _ = writeln!(out, "; limit {} rms; {margin}: {verdict}", si(l, "V"));
        }
        _ => {
            let _ = writeln!(out, "; no limit set");
        }
    }
}

/// `x` with `decimals` after the point, never "-0.00": a value that rounds to zero
/// prints as zero.
pub(crate) fn fixed(x: f64, decimals: usize) -> String {
    let text = format!("{x:.decimals$}");
    if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.') {
        text[1..].to_string()
    } else {
        text
    }
}

/// As [`fixed`] with an explicit sign ("+0.0" for a value that rounds to zero).
pub(crate) fn signed(x: f64, decimals: usize) -> String {
    let text = fixed(x, decimals);
    if text.starts_with('-') {
        text
    } else {
        format!("+{text}")
    }
}

/// `probe`: one block per point.
pub fn probe(points: &[ProbePoint]) -> String {
    let mut out = String::new();
    for p in points {
        let _ = writeln!(out, "point {}", fmt_point(&p.position));
        let _ = writeln!(
            out,
            "  {:>12}  {:>12}  {:>24}  {:>24}  {:>24}",
            "frequency", "|B| rms", "Bx pk (re, im)", "By pk (re, im)", "Bz pk (re, im)"
        );
        for l in &p.lines {
            let comp = |k: usize| format!("{:+.4e}, {:+.4e}", l.b[k].re, l.b[k].im);
            let _ = writeln!(
                out,
                "  {:>12}  {:>12}  {:>24}  {:>24}  {:>24}",
                si(l.frequency, "Hz"),
                si(l.b_rms(), "T"),
                comp(0),
                comp(1),
                comp(2)
            );
        }
    }
    out
}

/// A point (m) as `(x, y, z) m`, six decimals.
fn fmt_point(p: &crate::field::Vec3) -> String {
    format!("({:.6}, {:.6}, {:.6}) m", p.x, p.y, p.z)
}

/// A unit direction as `[x, y, z]` to three decimals, without "-0.000".
pub(crate) fn fmt_dir(d: &Vec3) -> String {
    format!("[{}, {}, {}]", fixed(d.x, 3), fixed(d.y, 3), fixed(d.z, 3))
}

/// c/n, or 0 when n is 0.
fn safe_unit(c: f64, n: f64) -> f64 {
    if n > 0.0 { c / n } else { 0.0 }
}

/// "s" unless `n` is 1.
fn plural(n: f64) -> &'static str {
    if n == 1.0 { "" } else { "s" }
}

/// `materials`: one row per material with its skin depth at each of `freqs` (Hz),
/// then where each value comes from and the permeability caution.
pub fn materials(list: &[crate::model::material::Material], freqs: &[f64]) -> String {
    use crate::model::material::IACS;
    let mut out = String::new();
    let _ = write!(
        out,
        "{:<10}  {:>12}  {:>7}  {:>7}",
        "material", "σ", "% IACS", "μr"
    );
    for f in freqs {
        let _ = write!(out, "  {:>12}", format!("δ @ {}", format_si(*f, "Hz", 3)));
    }
    let _ = writeln!(out);
    for m in list {
        let _ = write!(
            out,
            "{:<10}  {:>12}  {:>7.1}  {:>7}",
            m.name,
            si(m.conductivity, "S/m"),
            100.0 * m.conductivity / IACS,
            m.relative_permeability
        );
        for f in freqs {
            let _ = write!(out, "  {:>12}", si(m.skin_depth(*f), "m"));
        }
        let _ = writeln!(out);
    }
    let _ = writeln!(out, "\nskin depth δ = 1/√(π f μ0 μr σ)\nsources:");
    for m in list {
        let _ = writeln!(out, "  {}: {}", m.name, m.source);
    }
    let varies: Vec<&str> = list
        .iter()
        .filter(|m| m.permeability_varies)
        .map(|m| m.name.as_str())
        .collect();
    if !varies.is_empty() {
        let _ = writeln!(
            out,
            "\ncaution: the permeability of {} depends strongly on the field level, the \
             frequency and the heat treatment (bending and machining lower it); the figure \
             above is a low-field, low-frequency value. Use the supplier's data, or \
             {{ conductivity, relative_permeability }} in the scene, for a real design.",
            varies.join(" and ")
        );
    }
    out
}

#[cfg(test)]
mod tests {
    use super::{fixed, signed};

    #[test]
    fn a_value_that_rounds_to_zero_has_no_sign() {
        assert_eq!(fixed(-1e-15, 2), "0.00");
        assert_eq!(fixed(-0.0, 2), "0.00");
        assert_eq!(fixed(-0.004, 2), "0.00");
        assert_eq!(fixed(-0.005_1, 2), "-0.01");
        assert_eq!(fixed(-90.0, 2), "-90.00");
        assert_eq!(signed(-0.04, 1), "+0.0");
        assert_eq!(signed(-20.44, 1), "-20.4");
        assert_eq!(signed(3.0, 1), "+3.0");
    }
}
