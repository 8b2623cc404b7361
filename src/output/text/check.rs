//! `check`: one block per element of the scene and the spectrum.

use super::{fmt_dir, fmt_point, plural, safe_unit, si, title};
use crate::Scene;
use crate::field::Vec3;
use crate::units::format_area;
use std::fmt::Write;

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
        check_source(&mut out, s);
    }
    for v in &scene.victims {
        check_victim(&mut out, v);
    }
    for sh in &scene.shields {
        check_shield(&mut out, sh);
    }
    for e in &scene.enclosures {
        check_enclosure(&mut out, e);
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

/// `check`: One source: its conductors, dipole moment, calibration and lines.
fn check_source(out: &mut String, s: &crate::model::Source) {
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
    // A winding's moment that cancels (a go-and-return pair, say) comes out as rounding
    // noise: compare it with the largest moment its wire could make, a circle of that
    // circumference, L²/(4π) per ampere.
    let scale = c.wire_length().powi(2) / (4.0 * std::f64::consts::PI);
    if c.dipoles.is_empty() && m.norm() <= 1e-9 * scale {
        let _ = writeln!(
            out,
            "  dipole moment: none (zero to rounding; far away its field falls faster than \
             a dipole's)"
        );
    } else {
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
    }
    if let Some((at, field)) = s.calibration {
        let i_rms = s.current_rms;
        let _ = writeln!(
            out,
            "  current set by calibrate: {} rms (the whole waveform) gives |B| = {} rms at {}",
            si(i_rms, "A"),
            si(field, "T"),
            fmt_point(&at)
        );
    }
    for l in &s.lines {
        let _ = writeln!(
            out,
            "  line {:>12}  {:>12} peak  phase {:>7}°",
            si(l.frequency, "Hz"),
            si(l.current.norm(), "A"),
            super::fixed(l.current.arg().to_degrees(), 2)
        );
    }
    match &s.tail {
        crate::spectrum::Tail::Slope(_) => {
            let _ = writeln!(
                out,
                "  lines above these: counted in every EMF total, summed in closed form"
            );
        }
        crate::spectrum::Tail::IdealEdge(_) => {
            let _ = writeln!(
                out,
                "  ideal edge: the EMF lines do not fall off, so no EMF total (see the warning)"
            );
        }
        crate::spectrum::Tail::None => {}
    }
}

/// `check`: One victim: turns, area, self-inductance and limit.
fn check_victim(out: &mut String, v: &crate::model::Victim) {
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

/// `check`: One sheet: its normal and layers.
fn check_shield(out: &mut String, sh: &crate::model::Sheet) {
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

/// `check`: One enclosure and the sphere it is treated as.
fn check_enclosure(out: &mut String, e: &crate::model::Enclosure) {
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
