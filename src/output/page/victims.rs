//! The page's summary of margins and its section per victim: every source's mutual
//! inductance and lines, the lines above those listed, the spectrum plot.

use super::{Fact, Num};
use crate::Scene;
use crate::coupling::Total;
use crate::run::couple::VictimReport;
use crate::run::warnings::IDEAL_SHIELDING_DB;
use std::f64::consts::SQRT_2;

/// How a victim stands against its limit.
pub(crate) struct Verdict {
    /// CSS class of the row: `pass`, `over`, `none` (no verdict) or `free` (no limit).
    pub(super) class: &'static str,
    /// A marker that prints without colour: ✓, ✗, ? or –.
    pub(super) mark: &'static str,
    /// "within limit", "OVER LIMIT", "no verdict", "no limit set".
    pub(super) word: &'static str,
    /// Why there is no verdict; empty otherwise.
    pub(super) why: String,
}

impl Verdict {
    fn of(r: &VictimReport) -> Verdict {
        let v = |class, mark, word, why: String| Verdict {
            class,
            mark,
            word,
            why,
        };
        match (&r.total, r.limit, r.pass()) {
            (_, _, Some(true)) => v("pass", "✓", "within limit", String::new()),
            (_, _, Some(false)) => v("over", "✗", "OVER LIMIT", String::new()),
            (Total::Diverges(source), _, None) => v(
                "none",
                "?",
                "no verdict",
                format!(
                    "the total does not converge: source \"{source}\"'s waveform has an ideal \
                     edge (give the edge a duration; see the warnings)"
                ),
            ),
            _ => v("free", "–", "no limit set", String::new()),
        }
    }
}

/// One row of the summary table.
pub(crate) struct SummaryRow {
    pub(super) anchor: String,
    pub(super) id: String,
    pub(super) limit: Option<Num>,
    pub(super) total: Option<Num>,
    pub(super) margin: Option<Num>,
    /// A margin that is infinite (no EMF at all): said in words, no number.
    pub(super) margin_words: &'static str,
    pub(super) verdict: Verdict,
}

/// The summary table's rows, one per victim in scene order.
pub(crate) fn summary(reports: &[VictimReport]) -> Vec<SummaryRow> {
    reports
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let margin = r.margin_db();
            SummaryRow {
                anchor: anchor(i),
                id: r.id.clone(),
                limit: r.limit.map(|l| Num::si(l, "V")),
                total: r.total_rms().map(|t| Num::si(t, "V")),
                // As `couple --json`: an infinite margin (no EMF) has no number.
                margin: margin.filter(|m| m.is_finite()).map(Num::db),
                margin_words: match margin {
                    Some(m) if !m.is_finite() => "no EMF",
                    _ => "–",
                },
                verdict: Verdict::of(r),
            }
        })
        .collect()
}

/// The page id of victim `i`'s section (scene ids may hold any text; these do not).
fn anchor(i: usize) -> String {
    format!("victim-{}", i + 1)
}

/// One line of one source into a victim.
pub(crate) struct LineRow {
    pub(super) frequency: Num,
    pub(super) current: Num,
    pub(super) emf: Num,
    pub(super) shielding: Num,
    /// Shielding over [`IDEAL_SHIELDING_DB`]: marked, and explained under the table.
    pub(super) ideal: bool,
}

/// One source's coupling into a victim.
pub(crate) struct SourceBlock {
    pub(super) id: String,
    pub(super) mutual: Num,
    pub(super) lines: Vec<LineRow>,
}

/// The section of one victim.
pub(crate) struct VictimSection {
    pub(super) anchor: String,
    pub(super) id: String,
    pub(super) description: String,
    pub(super) shielded: bool,
    pub(super) any_ideal: bool,
    pub(super) sources: Vec<SourceBlock>,
    pub(super) facts: Vec<Fact>,
    pub(super) verdict: Verdict,
    pub(super) spectrum: Option<String>,
}

/// One section per victim, in scene order, with its spectrum plot from `spectra`.
pub(crate) fn sections(
    scene: &Scene,
    reports: &[VictimReport],
    spectra: &[Option<String>],
) -> Vec<VictimSection> {
    let shielded = crate::shield::scene_is_shielded(scene);
    reports
        .iter()
        .zip(&scene.victims)
        .enumerate()
        .map(|(i, (r, v))| {
            let sources: Vec<SourceBlock> = r.sources.iter().map(source_block).collect();
            VictimSection {
                anchor: anchor(i),
                id: r.id.clone(),
                description: format!(
                    "{}, {} turn{}, {} per turn",
                    v.kind,
                    v.turns,
                    if v.turns == 1.0 { "" } else { "s" },
                    crate::units::format_area(v.area, 4)
                ),
                shielded,
                any_ideal: sources.iter().flat_map(|s| &s.lines).any(|l| l.ideal),
                sources,
                facts: totals(r, v.load, v.self_inductance),
                verdict: Verdict::of(r),
                spectrum: spectra
                    .get(i)
                    .and_then(Option::as_deref)
                    .map(super::inline_svg),
            }
        })
        .collect()
}

fn source_block(s: &crate::coupling::SourceCoupling) -> SourceBlock {
    SourceBlock {
        id: s.id.clone(),
        mutual: Num::si(s.mutual_inductance, "H"),
        lines: s
            .lines
            .iter()
            .map(|l| LineRow {
                frequency: Num::si(l.frequency, "Hz"),
                current: Num::si(l.current.norm(), "A"),
                emf: Num::si(l.emf.norm() / SQRT_2, "V"),
                shielding: Num::shielding(l.shielding_db),
                ideal: l.shielding_db > IDEAL_SHIELDING_DB,
            })
            .collect(),
    }
}

/// The victim's totals: the listed lines, those above them when they add anything,
/// the total, the limit and the margin, and the voltage across a load.
fn totals(r: &VictimReport, load: Option<f64>, self_inductance: f64) -> Vec<Fact> {
    let mut facts = Vec::new();
    match &r.total {
        Total::Converged {
            rms,
            listed,
            omitted,
            omitted_exact,
        } => {
            if *omitted > 0.0 {
                facts.push(Fact::num("listed lines (V rms)", Num::si(*listed, "V")));
                let how = if *omitted_exact {
                    "lines above those listed (V rms, in closed form)"
                } else {
                    "lines above those listed (V rms, an estimate: see docs/model.md)"
                };
                facts.push(Fact::num(how, Num::si(*omitted, "V")));
                if let Some(share) = r.total.omitted_share_db().filter(|s| s.is_finite()) {
                    facts.push(Fact::num(
                        "share of the lines above those listed (dB added)",
                        Num::db(share),
                    ));
                }
            }
            facts.push(Fact::num("total EMF (V rms)", Num::si(*rms, "V")));
        }
        Total::Diverges(source) => facts.push(Fact::words(
            "total EMF (V rms)",
            format!("does not converge (source \"{source}\" has an ideal edge)"),
        )),
    }
    match r.limit {
        Some(l) => facts.push(Fact::num("limit (V rms)", Num::si(l, "V"))),
        None => facts.push(Fact::words("limit (V rms)", "none set")),
    }
    if let Some(m) = r.margin_db().filter(|m| m.is_finite()) {
        facts.push(Fact::num("margin (dB)", Num::db(m)));
    }
    if let (Some(total), Some(ohms)) = (&r.load, load) {
        let label = format!(
            "across the {} load, through the loop's {} (V rms)",
            crate::units::format_si(ohms, "Ω", 4),
            crate::units::format_si(self_inductance, "H", 4)
        );
        facts.push(match total.rms() {
            Some(v) => Fact::num(&label, Num::si(v, "V")),
            None => Fact::words(&label, "no converging total"),
        });
    }
    facts
}
