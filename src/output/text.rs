//! Human-readable reports for the terminal.

use crate::Scene;
use crate::field::Vec3;
use crate::run::couple::VictimReport;
use crate::run::probe::ProbePoint;
use crate::units::{format_area, format_si};
use std::fmt::Write;

fn si(x: f64, unit: &str) -> String {
    format_si(x, unit, 4)
}

fn title(out: &mut String, command: &str, scene: &Scene) {
    if scene.title.is_empty() {
        let _ = writeln!(out, "{command}");
    } else {
        let _ = writeln!(out, "{command}: {}", scene.title);
    }
}

/// `check`: one block per element and the spectrum.
pub fn check(scene: &Scene, lines_hz: &[f64]) -> String {
    let mut out = String::new();
    title(&mut out, "scene check", scene);
    let _ = writeln!(
        out,
        "solver: tolerance {:e}, default wire radius {}",
        scene.tolerance,
        si(scene.wire_radius, "m")
    );
    for s in &scene.sources {
        let c = &s.conductors;
        let _ = writeln!(out, "\nsource {} ({})", s.id, s.kind);
        if c.dipoles.is_empty() {
            let _ = writeln!(
                out,
                "  {} straight segments, {} of wire",
                c.segment_count(),
                si(c.wire_length(), "m")
            );
        } else {
            let _ = writeln!(out, "  point dipole at {}", fmt_point(&s.frame.origin));
        }
        let m = c.dipole_moment_per_amp();
        let _ = writeln!(
            out,
            "  dipole moment {} per A ({:.3e} A·m²/A along {})",
            si(m.norm(), "A·m²"),
            m.norm(),
            fmt_dir(&Vec3::new(
                safe_unit(m.x, m.norm()),
                safe_unit(m.y, m.norm()),
                safe_unit(m.z, m.norm())
            ))
        );
        if let Some((at, field)) = s.calibration {
            let i_rms = (s.lines.iter().map(|l| l.current.norm_sqr()).sum::<f64>() / 2.0).sqrt();
            let _ = writeln!(
                out,
                "  current set by calibrate: {} rms in all lines gives |B| = {} rms at {}",
                si(i_rms, "A"),
                si(field, "T"),
                fmt_point(&at)
            );
        }
        for l in &s.lines {
            let _ = writeln!(
                out,
                "  line {:>12}  {:>12} peak  phase {:7.2}°",
                si(l.frequency, "Hz"),
                si(l.current.norm(), "A"),
                l.current.arg().to_degrees()
            );
        }
    }
    for v in &scene.victims {
        let _ = writeln!(
            out,
            "\nvictim {} ({}, {} turn{})",
            v.id,
            v.kind,
            v.turns,
            plural(v.turns)
        );
        let _ = writeln!(
            out,
            "  area {} per turn, self-inductance {} (wire radius {})",
            format_area(v.area, 4),
            si(v.self_inductance, "H"),
            si(v.wire_radius, "m")
        );
        match v.limit {
            Some(l) => {
                let _ = writeln!(out, "  limit {} rms", si(l, "V"));
            }
            None => {
                let _ = writeln!(out, "  no limit set");
            }
        }
    }
    for sh in &scene.shields {
        let _ = writeln!(
            out,
            "\nshield {} (flat sheet, normal {})",
            sh.id,
            fmt_dir(&sh.normal)
        );
        for (m, t) in &sh.layers {
            let _ = writeln!(
                out,
                "  {} {}: σ = {}, μr = {}",
                si(*t, "m"),
                m.name,
                si(m.conductivity, "S/m"),
                m.relative_permeability
            );
        }
    }
    for e in &scene.enclosures {
        let _ = writeln!(
            out,
            "\nenclosure {} ({} × {} × {}, {} {}), around {}",
            e.id,
            si(e.size.x, "m"),
            si(e.size.y, "m"),
            si(e.size.z, "m"),
            si(e.thickness, "m"),
            e.material.name,
            e.contains.join(", ")
        );
        let _ = writeln!(
            out,
            "  treated as a spherical shell of radius {} (an estimate; seams and holes do worse)",
            si(e.equivalent_radius(), "m")
        );
    }
    let _ = writeln!(
        out,
        "\n{} spectral line{}; near-field limit λ/2π at {}: {}",
        lines_hz.len(),
        plural(lines_hz.len() as f64),
        si(scene.highest_frequency(), "Hz"),
        si(scene.near_field_limit(), "m")
    );
    out
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
                    format!("{:>7.2}°", l.emf.arg().to_degrees())
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
                }
                let _ = writeln!(out);
            }
        }
        let _ = write!(out, "  total EMF {} rms", si(r.total_rms, "V"));
        match (r.limit, r.margin_db(), r.pass()) {
            (Some(l), Some(m), Some(p)) => {
                let verdict = if p { "within limit" } else { "OVER LIMIT" };
                let _ = writeln!(
                    out,
                    "; limit {} rms; margin {:+.1} dB: {verdict}",
                    si(l, "V"),
                    m
                );
            }
            _ => {
                let _ = writeln!(out, "; no limit set");
            }
        }
        if let (Some(vl), Some(r_load)) = (r.load_rms, v.load) {
            let _ = writeln!(
                out,
                "  across the {} load (through the loop's {} self-inductance): {} rms",
                si(r_load, "Ω"),
                si(v.self_inductance, "H"),
                si(vl, "V")
            );
        }
    }
    if reports.is_empty() {
        let _ = writeln!(out, "\nthe scene has no [[victim]]: nothing to couple");
    }
    out
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

fn fmt_point(p: &crate::field::Vec3) -> String {
    format!("({:.6}, {:.6}, {:.6}) m", p.x, p.y, p.z)
}

/// A unit direction as `[x, y, z]` to three decimals, without "-0.000".
fn fmt_dir(d: &Vec3) -> String {
    let c = |x: f64| if x.abs() < 5e-4 { 0.0 } else { x };
    format!("[{:.3}, {:.3}, {:.3}]", c(d.x), c(d.y), c(d.z))
}

fn safe_unit(c: f64, n: f64) -> f64 {
    if n > 0.0 { c / n } else { 0.0 }
}

fn plural(n: f64) -> &'static str {
    if n == 1.0 { "" } else { "s" }
}

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
            Vary::Angle(_) => format!("{:.2}°", x.to_degrees()),
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
    if !written.is_empty() {
        let _ = writeln!(out, "\nwrote {}", written.join(", "));
    }
    out
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
