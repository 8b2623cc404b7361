//! The design-review page in a real browser: Debian's `chromium`, headless, with the
//! network blocked, loads `report.html` from a file URL, takes a screenshot and prints
//! the page to PDF; `pdfinfo` and `pdftotext` (poppler-utils) read the PDF back.
//!
//! Kept out of `cargo test` (it needs those programs and takes several seconds);
//! `.ci/run` installs them and runs `cargo test --test report_browser -- --ignored`. A
//! missing program fails the test: it never passes for want of its tools.

mod cli_support;

use std::path::{Path, PathBuf};
use std::process::Command;

/// The demo scene the page is made from, and words its printed text must hold.
const SCENE: &str = "scenes/choke-thermocouple.toml";

fn scratch(name: &str) -> PathBuf {
    let d = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join("report-browser")
        .join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Writes the report of [`SCENE`] into `dir` and returns the page's path.
fn report(dir: &Path) -> PathBuf {
    let out = cli_support::bin()
        .args(["report", SCENE, "--out", dir.to_str().unwrap()])
        .env("SOURCE_DATE_EPOCH", "1764892800")
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("the binary runs");
    assert!(
        out.status.success(),
        "report failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let page = dir.join("report.html");
    assert!(page.is_file());
    page
}

/// Runs headless Chromium on `page` with `extra` arguments; the network is blocked
/// (every host name fails to resolve and any proxy use goes to a closed port), so a
/// page that needed it would log errors. Returns Chromium's stderr.
fn chromium(page: &Path, extra: &[String]) -> String {
    let url = format!("file://{}", page.canonicalize().unwrap().display());
    let out = Command::new("chromium")
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--no-first-run",
            "--disable-background-networking",
            "--host-resolver-rules=MAP * ~NOTFOUND",
            "--proxy-server=127.0.0.1:9",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .args(extra)
        .arg(&url)
        .output()
        .expect("chromium is installed (.ci/run installs Debian's chromium)");
    assert!(
        out.status.success(),
        "chromium failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// Console messages and failed loads in Chromium's log: a self-contained page without
/// scripts has none.
fn page_errors(log: &str) -> Vec<&str> {
    log.lines()
        .filter(|l| {
            l.contains("CONSOLE")
                || l.contains("Failed to load")
                || l.contains("net::ERR")
                || l.contains("Uncaught")
        })
        .collect()
}

fn tool(program: &str, args: &[&str]) -> String {
    let out = Command::new(program)
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("{program} is installed (poppler-utils): {e}"));
    assert!(out.status.success(), "{program} {args:?} failed");
    String::from_utf8_lossy(&out.stdout).into_owned()
}

#[test]
#[ignore = "needs chromium and poppler-utils; .ci/run installs them and runs it"]
fn the_report_renders_and_prints_in_a_real_browser() {
    let dir = scratch("page");
    let page = report(&dir);

    // Screenshot: the page paints, with no console error and no failed load.
    let shot = dir.join("screenshot.png");
    let log = chromium(
        &page,
        &[
            format!("--screenshot={}", shot.display()),
            "--window-size=1200,1600".to_string(),
        ],
    );
    let errors = page_errors(&log);
    assert!(errors.is_empty(), "console or load errors: {errors:#?}");
    let (width, height, pixels) = decode(&shot);
    assert_eq!((width, height), (1200, 1600));
    // Not blank: a real page has text, tables and plots, so many pixels differ from the
    // background and there are many distinct colours (antialiased text and lines).
    let background = pixels[0];
    let inked = pixels.iter().filter(|p| **p != background).count();
    let share = inked as f64 / pixels.len() as f64;
    let mut colours: Vec<[u8; 3]> = pixels.clone();
    colours.sort_unstable();
    colours.dedup();
    assert!(
        share > 0.02,
        "only {:.3} % of the screenshot is inked",
        100.0 * share
    );
    assert!(colours.len() > 50, "only {} colours", colours.len());

    // Print to PDF: A4 pages, more than one, with the page's words as text.
    let pdf = dir.join("report.pdf");
    let log = chromium(
        &page,
        &[
            format!("--print-to-pdf={}", pdf.display()),
            "--no-pdf-header-footer".to_string(),
        ],
    );
    assert!(page_errors(&log).is_empty(), "{log}");
    let info = tool("pdfinfo", &[pdf.to_str().unwrap()]);
    let pages: usize = field(&info, "Pages:").parse().unwrap();
    assert!((2..=40).contains(&pages), "{pages} pages");
    // A4 is 210 × 297 mm: 595.28 × 841.89 pt (ISO 216); Chromium rounds to its own
    // units, so allow half a point.
    let size = field(&info, "Page size:");
    let dims: Vec<f64> = size
        .split_whitespace()
        .filter_map(|w| w.parse().ok())
        .collect();
    assert!(
        dims.len() >= 2 && (dims[0] - 595.28).abs() < 0.5 && (dims[1] - 841.89).abs() < 0.5,
        "page size {size}"
    );
    let text = tool("pdftotext", &["-layout", pdf.to_str().unwrap(), "-"]);
    for words in [
        "Buck choke beside a thermocouple amplifier input",
        "tc-input",
        "OVER LIMIT",
        "mutual inductance",
    ] {
        assert!(
            text.contains(words),
            "the PDF's text lacks {words:?}:\n{text}"
        );
    }
}

/// The value after `name` on its line of `pdfinfo` output.
fn field<'a>(info: &'a str, name: &str) -> &'a str {
    info.lines()
        .find_map(|l| l.strip_prefix(name))
        .unwrap_or_else(|| panic!("no {name} in {info}"))
        .trim()
}

/// Width, height and RGB pixels of a PNG.
fn decode(path: &Path) -> (u32, u32, Vec<[u8; 3]>) {
    let decoder = png::Decoder::new(std::io::BufReader::new(
        std::fs::File::open(path).expect("the screenshot was written"),
    ));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let frame = reader.next_frame(&mut buf).unwrap();
    let bytes = &buf[..frame.buffer_size()];
    let step = match frame.color_type {
        png::ColorType::Rgb => 3,
        png::ColorType::Rgba => 4,
        other => panic!("unexpected PNG colour type {other:?}"),
    };
    let pixels = bytes
        .chunks_exact(step)
        .map(|c| [c[0], c[1], c[2]])
        .collect();
    (frame.width, frame.height, pixels)
}
