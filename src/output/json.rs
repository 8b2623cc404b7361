//! Machine-readable output: one JSON document per command, snake_case keys with the
//! unit in the name (`total_emf_v_rms`, `mutual_inductance_h`).

use crate::Scene;
use crate::coupling::Total;
use crate::run::couple::VictimReport;
use crate::run::probe::ProbePoint;
use crate::run::sweep::{Alternative, SweepResult, SweepRow};
use serde::Serialize;

#[derive(Serialize)]
struct CheckDoc {
    sources: Vec<CheckSource>,
    victims: Vec<CheckVictim>,
    lines_hz: Vec<f64>,
    near_field_limit_m: f64,
}

#[derive(Serialize)]
struct CheckSource {
    id: String,
    kind: String,
    segments: usize,
    wire_length_m: f64,
    dipole_moment_a_m2_per_a: f64,
}

#[derive(Serialize)]
struct CheckVictim {
    id: String,
    area_m2: f64,
    self_inductance_h: f64,
}

/// `check --json`.
pub fn check(scene: &Scene, lines_hz: &[f64]) -> String {
    let doc = CheckDoc {
        sources: scene
            .sources
            .iter()
            .map(|s| CheckSource {
                id: s.id.clone(),
                kind: s.kind.name().to_string(),
                segments: s.conductors.segment_count(),
                wire_length_m: s.conductors.wire_length(),
                dipole_moment_a_m2_per_a: s.conductors.dipole_moment_per_amp().norm(),
            })
            .collect(),
        victims: scene
            .victims
            .iter()
            .map(|v| CheckVictim {
                id: v.id.clone(),
                area_m2: v.area,
                self_inductance_h: v.self_inductance,
            })
            .collect(),
        lines_hz: lines_hz.to_vec(),
        near_field_limit_m: scene.near_field_limit(),
    };
    to_string(&doc)
}

#[derive(Serialize)]
struct CoupleDoc {
    victims: Vec<CoupleVictim>,
}

#[derive(Serialize)]
struct CoupleVictim {
    id: String,
    limit_v_rms: Option<f64>,
    total_emf_v_rms: Option<f64>,
    margin_db: Option<f64>,
    pass: Option<bool>,
    total_converges: bool,
    listed_emf_v_rms: f64,
    omitted_emf_v_rms: Option<f64>,
    omitted_exact: Option<bool>,
    #[serde(skip_serializing_if = "Option::is_none")]
    load_v_rms: Option<Option<f64>>,
    sources: Vec<CoupleSource>,
}

#[derive(Serialize)]
struct CoupleSource {
    id: String,
    mutual_inductance_h: f64,
    lines: Vec<CoupleLine>,
}

#[derive(Serialize)]
struct CoupleLine {
    frequency_hz: f64,
    current_a_peak: f64,
    emf_v_peak: f64,
    emf_v_rms: f64,
    emf_phase_deg: f64,
    shielding_db: f64,
}

/// An angle in degrees with a rounding-noise zero (below 5e-13°, or −0) written as 0.
fn zero_if_tiny(deg: f64) -> f64 {
    if deg.abs() < 5e-13 { 0.0 } else { deg }
}

/// `couple --json`. A margin that is infinite (zero EMF) is written as null; a total
/// that does not converge (an ideal edge) is null, with `total_converges` false.
pub fn couple(reports: &[VictimReport]) -> String {
    let victims = reports
        .iter()
        .map(|r| CoupleVictim {
            id: r.id.clone(),
            limit_v_rms: r.limit,
            total_emf_v_rms: r.total_rms(),
            margin_db: r.margin_db().filter(|m| m.is_finite()),
            pass: r.pass(),
            total_converges: r.total_rms().is_some(),
            listed_emf_v_rms: crate::coupling::total_rms(&r.by_frequency),
            omitted_emf_v_rms: match r.total {
                Total::Converged { omitted, .. } => Some(omitted),
                Total::Diverges(_) => None,
            },
            omitted_exact: match r.total {
                Total::Converged { omitted_exact, .. } => Some(omitted_exact),
                Total::Diverges(_) => None,
            },
            load_v_rms: r.load.as_ref().map(Total::rms),
            sources: r
                .sources
                .iter()
                .map(|s| CoupleSource {
                    id: s.id.clone(),
                    mutual_inductance_h: s.mutual_inductance,
                    lines: s
                        .lines
                        .iter()
                        .map(|l| CoupleLine {
                            frequency_hz: l.frequency,
                            current_a_peak: l.current.norm(),
                            emf_v_peak: l.emf.norm(),
                            emf_v_rms: l.emf.norm() / std::f64::consts::SQRT_2,
                            emf_phase_deg: zero_if_tiny(l.emf.arg().to_degrees()),
                            shielding_db: l.shielding_db,
                        })
                        .collect(),
                })
                .collect(),
        })
        .collect();
    to_string(&CoupleDoc { victims })
}

#[derive(Serialize)]
struct ProbeDoc {
    points: Vec<ProbeJsonPoint>,
}

#[derive(Serialize)]
struct ProbeJsonPoint {
    position_m: [f64; 3],
    lines: Vec<ProbeJsonLine>,
}

#[derive(Serialize)]
struct ProbeJsonLine {
    frequency_hz: f64,
    b_t_peak: [[f64; 2]; 3],
    b_t_rms: f64,
}

/// `probe --json`.
pub fn probe(points: &[ProbePoint]) -> String {
    let points = points
        .iter()
        .map(|p| ProbeJsonPoint {
            position_m: [p.position.x, p.position.y, p.position.z],
            lines: p
                .lines
                .iter()
                .map(|l| ProbeJsonLine {
                    frequency_hz: l.frequency,
                    b_t_peak: l.b.map(|c| [c.re, c.im]),
                    b_t_rms: l.b_rms(),
                })
                .collect(),
        })
        .collect();
    to_string(&ProbeDoc { points })
}

fn to_string<T: Serialize>(doc: &T) -> String {
    // Serialising plain structs of numbers and strings cannot fail; non-finite floats
    // become null.
    let mut s =
        serde_json::to_string_pretty(doc).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    s.push('\n');
    s
}

#[derive(Serialize)]
struct SweepDoc {
    sweeps: Vec<SweepJson>,
}

#[derive(Serialize)]
struct SweepJson {
    id: String,
    vary: &'static str,
    unit: &'static str,
    safe_value: Option<f64>,
    rows: Vec<SweepJsonRow>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    compare: Vec<CompareJson>,
}

#[derive(Serialize)]
struct CompareJson {
    shield: Option<String>,
    total_emf_v_rms: Vec<f64>,
    rows: Vec<CompareRow>,
    placed: Option<CompareRow>,
}

/// One step of a compared alternative, or the alternative at the placed position
/// (`value` null).
#[derive(Serialize)]
struct CompareRow {
    #[serde(skip_serializing_if = "Option::is_none")]
    value: Option<f64>,
    total_emf_v_rms: f64,
    lines: Vec<RowLine>,
}

#[derive(Serialize)]
struct SweepJsonRow {
    value: f64,
    total_emf_v_rms: f64,
    margin_db: Option<f64>,
    lines: Vec<RowLine>,
    #[serde(skip_serializing_if = "Option::is_none")]
    worst_axis: Option<[f64; 3]>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    shielding_db: Vec<f64>,
    contact: bool,
}

#[derive(Serialize)]
struct RowLine {
    frequency_hz: f64,
    emf_v_rms: f64,
    shielding_db: f64,
}

/// Per-line EMF (V rms) and shielding (dB, 0 without shields) of `lines` (Hz, V peak).
fn row_lines(lines: &[(f64, num_complex::Complex64)], shielding_db: &[f64]) -> Vec<RowLine> {
    lines
        .iter()
        .enumerate()
        .map(|(k, (f, e))| RowLine {
            frequency_hz: *f,
            emf_v_rms: e.norm() / std::f64::consts::SQRT_2,
            shielding_db: shielding_db.get(k).copied().unwrap_or(0.0),
        })
        .collect()
}

/// One sweep row: the value in the sweep's unit, the total, the margin against `limit`
/// (V rms; null without one or for a zero total), the lines and the contact mark.
fn sweep_row(vary: &crate::model::Vary, limit: Option<f64>, row: &SweepRow) -> SweepJsonRow {
    SweepJsonRow {
        value: crate::output::csv::value_in_unit(vary, row.value),
        total_emf_v_rms: row.total_rms,
        margin_db: limit
            .map(|l| crate::coupling::margin_db(l, row.total_rms))
            .filter(|m| m.is_finite()),
        lines: row_lines(&row.lines, &row.shielding_db),
        worst_axis: row.worst_axis.map(|a| [a.x, a.y, a.z]),
        shielding_db: row.shielding_db.clone(),
        contact: !row.contact.is_empty(),
    }
}

/// A compared alternative: its totals, every step's lines and the placed position.
fn compare_json(vary: &crate::model::Vary, a: &Alternative) -> CompareJson {
    CompareJson {
        shield: a.shield.clone(),
        total_emf_v_rms: a.totals.clone(),
        rows: a
            .rows
            .iter()
            .map(|r| CompareRow {
                value: Some(crate::output::csv::value_in_unit(vary, r.value)),
                total_emf_v_rms: r.total_rms,
                lines: row_lines(&r.lines, &r.shielding_db),
            })
            .collect(),
        placed: a.placed.as_ref().map(|p| CompareRow {
            value: None,
            total_emf_v_rms: p.total_rms,
            lines: row_lines(&p.lines, &p.shielding_db),
        }),
    }
}

/// `sweep --json`: values in `unit` (m for distance, deg for angle, Hz for frequency).
pub fn sweeps(results: &[SweepResult]) -> String {
    use crate::model::Vary;
    let sweeps = results
        .iter()
        .map(|r| {
            let vary = &r.spec.vary;
            SweepJson {
                id: r.spec.id.clone(),
                vary: vary.name(),
                unit: match vary {
                    Vary::Distance(_) => "m",
                    Vary::Angle(_) => "deg",
                    Vary::Frequency => "Hz",
                },
                safe_value: r.safe_value,
                rows: r
                    .rows
                    .iter()
                    .map(|row| sweep_row(vary, r.limit, row))
                    .collect(),
                compare: r.compare.iter().map(|a| compare_json(vary, a)).collect(),
            }
        })
        .collect();
    to_string(&SweepDoc { sweeps })
}

#[derive(Serialize)]
struct MaterialsDoc {
    frequency_hz: Option<f64>,
    materials: Vec<MaterialJson>,
}

#[derive(Serialize)]
struct MaterialJson {
    name: String,
    conductivity_s_per_m: f64,
    relative_permeability: f64,
    skin_depth_m: Option<f64>,
    source: &'static str,
}

/// `materials --json`: each material's σ (S/m), μr, source and skin depth (m) at
/// `frequency` (Hz; the depth is null without one).
pub fn materials(list: &[crate::model::Material], frequency: Option<f64>) -> String {
    let materials = list
        .iter()
        .map(|m| MaterialJson {
            name: m.name.clone(),
            conductivity_s_per_m: m.conductivity,
            relative_permeability: m.relative_permeability,
            skin_depth_m: frequency.map(|f| m.skin_depth(f)),
            source: m.source,
        })
        .collect();
    to_string(&MaterialsDoc {
        frequency_hz: frequency,
        materials,
    })
}
