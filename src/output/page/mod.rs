//! The design-review page of `report`: one self-contained HTML file (styles and plots
//! inline, no script, no network) that prints on A4. The page comes from the askama
//! templates in `templates/` (checked when the crate compiles); every text from the
//! scene is escaped by askama, and only SVG that our own plot code drew is inserted
//! as markup. Each number shown carries its exact value (Rust's `{}` of the f64, which
//! reads back to the same bits) in a `data-value` attribute, in SI units (V, H, Hz, A,
//! m, rad, dB).

use crate::Scene;
use crate::run::couple::VictimReport;
use crate::run::sweep::SweepResult;
use askama::Template;

mod sweeps;
mod victims;

/// The plots the page shows, drawn by [`plot`](super::plot); `None` where a plot could
/// not be drawn (the reason is among the warnings).
pub struct Plots {
    /// The plan and side views of the scene (SVG).
    pub drawing: Option<String>,
    /// Each victim's EMF spectrum (SVG), in scene order.
    pub spectra: Vec<Option<String>>,
    /// Each sweep's plot (SVG), in the order of the results.
    pub sweeps: Vec<Option<String>>,
}

/// Everything one review page shows.
pub struct ReviewPage<'a> {
    /// The scene run.
    pub scene: &'a Scene,
    /// The scene file as named on the command line.
    pub scene_file: &'a str,
    /// The scene file's SHA-256, 64 hex digits.
    pub sha256: &'a str,
    /// When the report was made (shown in UTC).
    pub date: jiff::Timestamp,
    /// What `couple` found for each victim, in scene order.
    pub victims: &'a [VictimReport],
    /// The sweeps of the scene that ran, as `sweep` runs them, in scene order.
    pub sweeps: &'a [SweepResult],
    /// The sweeps that could not run: (id, why).
    pub not_run: &'a [(String, String)],
    /// The plots.
    pub plots: &'a Plots,
    /// Every warning of the run: the scene's, then `couple`'s, then the sweeps'.
    pub warnings: &'a [String],
}

impl ReviewPage<'_> {
    /// The HTML page; an error (exit 1) only if the template cannot be written out.
    pub fn render(&self) -> Result<String, String> {
        Page::new(self)
            .render()
            .map_err(|e| format!("cannot write the report page: {e}"))
    }
}

/// A number on the page: the text a reader sees and the exact value.
pub(crate) struct Num {
    /// As shown, with its unit ("2.203 µV", "+7.1 dB").
    text: String,
    /// Rust's `{}` of the value in SI units: it parses back to the same f64.
    value: String,
}

impl Num {
    /// `x` shown as `text`.
    fn new(x: f64, text: String) -> Num {
        Num {
            text,
            value: format!("{x}"),
        }
    }

    /// `x` in `unit` with an engineering prefix, four significant figures.
    fn si(x: f64, unit: &str) -> Num {
        Num::new(x, crate::units::format_si(x, unit, 4))
    }

    /// A level in dB with its sign and one decimal ("+7.1 dB").
    fn db(x: f64) -> Num {
        Num::new(x, format!("{} dB", super::text::signed(x, 1)))
    }

    /// A shielding in dB, one decimal, unsigned ("42.0 dB").
    fn shielding(x: f64) -> Num {
        Num::new(x, format!("{} dB", super::text::fixed(x, 1)))
    }
}

/// One row of a two-column table: what (with its unit), and the value.
pub(crate) struct Fact {
    /// The row header.
    label: String,
    /// The value as shown, with its exact value when it is one number.
    shown: Shown,
}

/// A table cell: a number, or words where there is no number.
pub(crate) enum Shown {
    /// A number.
    Num(Num),
    /// Words.
    Words(String),
}

impl Fact {
    fn num(label: &str, n: Num) -> Fact {
        Fact {
            label: label.to_string(),
            shown: Shown::Num(n),
        }
    }

    fn words(label: &str, text: impl Into<String>) -> Fact {
        Fact {
            label: label.to_string(),
            shown: Shown::Words(text.into()),
        }
    }
}

/// An entry of the contents list.
struct Entry {
    /// The target's id on the page.
    anchor: String,
    /// The section's name.
    label: String,
    /// Entries under it (victims, sweeps).
    children: Vec<Entry>,
}

/// The template's data: everything already formatted.
#[derive(Template)]
#[template(path = "report.html")]
struct Page<'a> {
    heading: String,
    scene_file: &'a str,
    sha256: &'a str,
    version: &'static str,
    date_text: String,
    date_iso: String,
    tolerance: Num,
    contents: Vec<Entry>,
    drawing: Option<String>,
    counts: String,
    summary: Vec<victims::SummaryRow>,
    victims: Vec<victims::VictimSection>,
    sweeps: Vec<sweeps::SweepSection>,
    not_run: &'a [(String, String)],
    options: Vec<sweeps::Options>,
    warnings: &'a [String],
    cautions: String,
}

/// More sections than this get a contents list.
const CONTENTS_FROM: usize = 4;

impl<'a> Page<'a> {
    fn new(p: &ReviewPage<'a>) -> Page<'a> {
        let scene = p.scene;
        let victims = victims::sections(scene, p.victims, &p.plots.spectra);
        let sweeps = sweeps::sections(scene, p.sweeps, &p.plots.sweeps);
        let options = sweeps::options(scene, p.sweeps);
        let heading = if scene.title.is_empty() {
            p.scene_file.to_string()
        } else {
            scene.title.clone()
        };
        let mut page = Page {
            heading,
            scene_file: p.scene_file,
            sha256: p.sha256,
            version: env!("CARGO_PKG_VERSION"),
            date_text: p.date.strftime("%Y-%m-%d %H:%M:%S UTC").to_string(),
            date_iso: p.date.strftime("%Y-%m-%dT%H:%M:%SZ").to_string(),
            tolerance: Num::new(scene.tolerance, format!("{:e}", scene.tolerance)),
            contents: Vec::new(),
            drawing: p.plots.drawing.as_deref().map(inline_svg),
            counts: counts(scene),
            summary: victims::summary(p.victims),
            victims,
            sweeps,
            not_run: p.not_run,
            options,
            warnings: p.warnings,
            cautions: cautions(),
        };
        page.contents = page.contents_list();
        page
    }

    /// The contents list, empty when the page has no more than [`CONTENTS_FROM`]
    /// sections.
    fn contents_list(&self) -> Vec<Entry> {
        let entry = |anchor: &str, label: &str, children: Vec<Entry>| Entry {
            anchor: anchor.to_string(),
            label: label.to_string(),
            children,
        };
        let mut list = vec![
            entry("scene-drawn", "The scene drawn", Vec::new()),
            entry("summary", "Summary of margins", Vec::new()),
        ];
        let sub = |items: Vec<(String, String)>| {
            items
                .into_iter()
                .map(|(anchor, label)| entry(&anchor, &label, Vec::new()))
                .collect()
        };
        if !self.victims.is_empty() {
            let items = self
                .victims
                .iter()
                .map(|v| (v.anchor.clone(), format!("victim {}", v.id)));
            list.push(entry("victims", "Victims in detail", sub(items.collect())));
        }
        let items = self
            .sweeps
            .iter()
            .map(|s| (s.anchor.clone(), format!("sweep {}", s.id)));
        list.push(entry("sweeps", "Sweeps", sub(items.collect())));
        if !self.options.is_empty() {
            list.push(entry("shield-options", "Shield options", Vec::new()));
        }
        list.push(entry("warnings", "Warnings and cautions", Vec::new()));
        list.push(entry("limits", "The model's limits", Vec::new()));
        if list.len() > CONTENTS_FROM {
            list
        } else {
            Vec::new()
        }
    }
}

/// Our own SVG document made ready to sit inside the page: without an XML declaration
/// and without namespace declarations on its root element (the HTML parser gives an
/// inline `<svg>` its namespace), so that the page names no URL at all. Empty when
/// `svg` has no `<svg` element.
pub(crate) fn inline_svg(svg: &str) -> String {
    let Some(start) = svg.find("<svg") else {
        return String::new();
    };
    let body = &svg[start..];
    let Some(end) = body.find('>') else {
        return String::new();
    };
    let mut tag = body[..end].to_string();
    while let Some(at) = tag.find(" xmlns") {
        // ` xmlns="…"` or ` xmlns:prefix="…"`: up to the closing quote.
        let value = tag[at..].find('"').map(|q| at + q + 1);
        let close = value.and_then(|v| tag[v..].find('"').map(|q| v + q + 1));
        match close {
            Some(c) => tag.replace_range(at..c, ""),
            None => break,
        }
    }
    format!("{tag}{}", &body[end..])
}

/// The cautions of every `--help`, as one sentence-case paragraph (the heading says
/// "Cautions").
fn cautions() -> String {
    let text = super::CAUTIONS;
    let text = text.strip_prefix("Cautions: ").unwrap_or(text);
    let mut chars = text.chars();
    chars.next().map_or(String::new(), |first| {
        first.to_uppercase().chain(chars).collect()
    })
}

/// "2 sources, 1 victim, 1 shield, 3 sweeps".
fn counts(scene: &Scene) -> String {
    let n = |k: usize, one: &str, many: &str| format!("{k} {}", if k == 1 { one } else { many });
    let mut parts = vec![
        n(scene.sources.len(), "source", "sources"),
        n(scene.victims.len(), "victim", "victims"),
    ];
    let shields = scene.shields.len() + scene.enclosures.len();
    if shields > 0 {
        parts.push(n(shields, "shield", "shields"));
    }
    parts.push(n(scene.sweeps.len(), "sweep", "sweeps"));
    parts.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inline_svg_drops_the_declaration_and_namespaces_only() {
        let doc = "<?xml version=\"1.0\"?>\n<svg width=\"9\" xmlns=\"http://www.w3.org/2000/svg\" \
                   xmlns:xlink=\"http://www.w3.org/1999/xlink\" viewBox=\"0 0 9 9\"><text \
                   xmlns=\"x\">a</text></svg>";
        assert_eq!(
            inline_svg(doc),
            "<svg width=\"9\" viewBox=\"0 0 9 9\"><text xmlns=\"x\">a</text></svg>"
        );
        assert_eq!(inline_svg("not a drawing"), "");
    }
}
