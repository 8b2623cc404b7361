//! The scene drawing (`output::plot::scene_views_svg`) read back from its SVG: the plan
//! view's scale is reconstructed from its own mm tick labels, and the drawn loop, victim
//! and sheet are held to the sizes and distances written in the test scene.

use std::collections::BTreeMap;
use std::path::Path;
use strayflux::Scene;
use strayflux::output::plot::scene_views_svg;

/// A 10 mm radius loop at the origin in the xy plane, a 20 mm × 8 mm rectangle centred
/// at x = 40 mm in the same plane, a 1 mm sheet whose first face is the plane x = 20 mm.
const SCENE: &str = r#"
[scene]
title = "Scale check"

[[source]]
id = "ring"
kind = "loop"
radius = "10 mm"
current = { frequency = "100 kHz", peak = "1 A" }

[[victim]]
id = "pickup"
kind = "rectangle"
width = "20 mm"
height = "8 mm"
position = ["40 mm", "0 mm", "0 mm"]

[[shield]]
id = "plate"
material = "aluminium"
thickness = "1 mm"
position = ["20 mm", "0 mm", "0 mm"]
axis = [1, 0, 0]
"#;

/// Material Design "deep orange 800" and "blue 700": the source and victim strokes.
const SOURCE: &str = "#D84315";
const VICTIM: &str = "#1976D2";
/// "blue grey 500": the sheet bands.
const SHIELD: &str = "#607D8B";

fn points(s: &str) -> Vec<(f64, f64)> {
    s.split_whitespace()
        .filter_map(|p| {
            let (x, y) = p.split_once(',')?;
            Some((x.parse().ok()?, y.parse().ok()?))
        })
        .collect()
}

/// Bounding box (x0, y0, x1, y1) of points.
fn bbox(pts: &[(f64, f64)]) -> (f64, f64, f64, f64) {
    pts.iter()
        .fold((f64::MAX, f64::MAX, f64::MIN, f64::MIN), |b, p| {
            (b.0.min(p.0), b.1.min(p.1), b.2.max(p.0), b.3.max(p.1))
        })
}

struct Drawing {
    /// Plan-view polyline points by stroke colour.
    strokes: BTreeMap<String, Vec<(f64, f64)>>,
    /// Plan-view polygons filled with the sheet colour.
    bands: Vec<Vec<(f64, f64)>>,
    /// Pixels per mm from the plan's horizontal and vertical tick labels.
    px_per_mm: (f64, f64),
    texts: Vec<String>,
}

fn read(svg: &str) -> Drawing {
    let doc = roxmltree::Document::parse(svg).expect("the SVG is XML");
    let texts: Vec<_> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .collect();
    // The backend writes each text on a line of its own inside the element.
    let text = |n: &roxmltree::Node| n.text().map(str::trim).unwrap_or("").to_string();
    let side_top = texts
        .iter()
        .find(|t| text(t).starts_with("Side view"))
        .and_then(|t| t.attribute("y")?.parse::<f64>().ok())
        .expect("a side view heading");
    let num = |n: &roxmltree::Node, k: &str| n.attribute(k).and_then(|v| v.parse::<f64>().ok());
    let in_plan = |n: &roxmltree::Node| num(n, "y").is_some_and(|y| y < side_top);
    // Tick labels: numbers, centred under the frame (x axis) or right-aligned (y axis).
    let ticks = |anchor: &str| -> Vec<(f64, f64)> {
        texts
            .iter()
            .filter(|t| in_plan(t) && t.attribute("text-anchor") == Some(anchor))
            .filter_map(|t| {
                let v: f64 = text(t).parse().ok()?;
                let at = if anchor == "middle" {
                    num(t, "x")?
                } else {
                    num(t, "y")?
                };
                Some((v, at))
            })
            .collect()
    };
    // NaN when an axis shows fewer than two ticks.
    let slope = |t: Vec<(f64, f64)>| {
        let (Some(&a), Some(&b)) = (t.first(), t.last()) else {
            return f64::NAN;
        };
        ((b.1 - a.1) / (b.0 - a.0)).abs()
    };
    let px_per_mm = (slope(ticks("middle")), slope(ticks("end")));
    let mut strokes: BTreeMap<String, Vec<(f64, f64)>> = BTreeMap::new();
    let mut bands = Vec::new();
    for n in doc.descendants() {
        let Some(pts) = n.attribute("points").map(points) else {
            continue;
        };
        if pts.iter().any(|p| p.1 >= side_top) {
            continue;
        }
        if n.has_tag_name("polyline") {
            let stroke = n.attribute("stroke").unwrap_or("").to_uppercase();
            strokes.entry(stroke).or_default().extend(pts);
        } else if n.has_tag_name("polygon")
            && n.attribute("fill")
                .is_some_and(|f| f.eq_ignore_ascii_case(SHIELD))
        {
            bands.push(pts);
        }
    }
    let texts = texts.iter().map(text).collect();
    Drawing {
        strokes,
        bands,
        px_per_mm,
        texts,
    }
}

#[test]
fn the_plan_view_is_to_scale_with_equal_axes() {
    let scene = Scene::parse("scale.toml", SCENE).unwrap();
    let d = read(&scene_views_svg(&scene).unwrap());
    let (sx, sy) = d.px_per_mm;
    // Equal scales on both axes of the plan, read from its own tick labels.
    assert!((sx / sy - 1.0).abs() < 0.01, "x {sx} px/mm, y {sy} px/mm");
    let ten_mm = 10.0 * sx;
    // The loop: 20 mm across, as wide as it is tall.
    let ring = bbox(&d.strokes[SOURCE]);
    let (w, h) = (ring.2 - ring.0, ring.3 - ring.1);
    assert!(
        (w / ten_mm - 2.0).abs() < 0.04,
        "loop {w} px wide, 10 mm = {ten_mm} px"
    );
    assert!(
        (h / ten_mm - 2.0).abs() < 0.04,
        "loop {h} px tall, 10 mm = {ten_mm} px"
    );
    assert!((w / h - 1.0).abs() < 0.02, "loop {w} × {h} px");
    // The victim: 20 mm × 8 mm, its centre 40 mm to the right of the loop's, level.
    let v = bbox(&d.strokes[VICTIM]);
    let ((vw, vh), vc) = (
        (v.2 - v.0, v.3 - v.1),
        (0.5 * (v.0 + v.2), 0.5 * (v.1 + v.3)),
    );
    assert!((vw / ten_mm - 2.0).abs() < 0.04 && (vh / ten_mm - 0.8).abs() < 0.04);
    let rc = (0.5 * (ring.0 + ring.2), 0.5 * (ring.1 + ring.3));
    assert!(
        ((vc.0 - rc.0) / ten_mm - 4.0).abs() < 0.08,
        "centres {rc:?} {vc:?}"
    );
    assert!((vc.1 - rc.1).abs() < 0.05 * ten_mm, "centres {rc:?} {vc:?}");
    // The sheet: one band 1 mm thick, its first face 20 mm right of the loop's centre,
    // spanning the view's height.
    assert_eq!(d.bands.len(), 1, "{:?}", d.bands);
    let b = bbox(&d.bands[0]);
    assert!(((b.2 - b.0) / ten_mm - 0.1).abs() < 0.02, "band {b:?}");
    assert!(((b.0 - rc.0) / ten_mm - 2.0).abs() < 0.04, "band {b:?}");
    assert!(b.3 - b.1 > 3.0 * ten_mm, "band {b:?}");
    for id in ["ring", "pickup", "plate (infinite sheet)"] {
        assert!(
            d.texts.iter().any(|t| t == id),
            "no text {id}: {:?}",
            d.texts
        );
    }
}

#[test]
fn design_options_are_labelled_and_an_empty_scene_is_refused() {
    let text = format!("{SCENE}fitted = false\n");
    let scene = Scene::parse("option.toml", &text).unwrap();
    let d = read(&scene_views_svg(&scene).unwrap());
    assert!(
        d.texts
            .iter()
            .any(|t| t == "plate (infinite sheet) (option)")
    );
    let mut empty = scene.clone();
    empty.sources.clear();
    empty.victims.clear();
    let e = scene_views_svg(&empty).unwrap_err();
    assert!(e.starts_with("nothing to draw") && !e.contains('\n'), "{e}");
    // Without victims the source still draws.
    let mut alone = scene;
    alone.victims.clear();
    assert!(
        read(&scene_views_svg(&alone).unwrap())
            .strokes
            .contains_key(SOURCE)
    );
}

/// The 10 mm coil and the 5 mm pickup 20 mm above it (tests/fixtures), the pickup in a
/// 14 mm steel can with 0.5 mm walls.
fn canned() -> Scene {
    let base = include_str!("fixtures/coil-over-pickup.toml");
    let text = format!(
        "{base}\n[[enclosure]]\nid = \"can\"\nsize = [\"14 mm\", \"14 mm\", \"14 mm\"]\n\
         position = [0, 0, \"20 mm\"]\nmaterial = \"steel\"\nthickness = \"0.5 mm\"\n\
         contains = [\"pickup\"]\n"
    );
    Scene::parse("can.toml", &text).unwrap()
}

/// The can's outer walls are a 14 mm square round the coil's axis in the plan view.
#[test]
fn an_enclosure_is_drawn_to_scale_and_labelled() {
    let d = read(&scene_views_svg(&canned()).unwrap());
    let mm = d.px_per_mm.0;
    let (coil, can) = (bbox(&d.strokes[SOURCE]), bbox(&d.strokes[SHIELD]));
    assert!(
        ((can.2 - can.0) / mm - 14.0).abs() < 0.3,
        "{can:?}, {mm} px/mm"
    );
    assert!(
        ((can.3 - can.1) / mm - 14.0).abs() < 0.3,
        "{can:?}, {mm} px/mm"
    );
    let dx = 0.5 * (can.0 + can.2 - coil.0 - coil.2);
    let dy = 0.5 * (can.1 + can.3 - coil.1 - coil.3);
    assert!(dx.hypot(dy) < 0.2 * mm, "centres {coil:?} {can:?}");
    assert!(
        d.texts.iter().any(|t| t == "can (enclosure)"),
        "{:?}",
        d.texts
    );
}

/// A 2 mm loop 1.5 m from a 1 m loop is about half a pixel across: it is ringed in
/// both views and a note gives its size.
#[test]
fn a_victim_too_small_to_see_is_ringed_and_noted() {
    let text = r#"
[[source]]
id = "big"
kind = "loop"
radius = "1 m"
current = { frequency = "50 Hz", peak = "1 A" }

[[victim]]
id = "speck"
kind = "loop"
radius = "1 mm"
position = ["1.5 m", "0 m", "0 m"]
"#;
    let scene = Scene::parse("tiny.toml", text).unwrap();
    let svg = scene_views_svg(&scene).unwrap();
    let d = read(&svg);
    let note = "victim \"speck\" is 2 mm across";
    assert!(d.texts.iter().any(|t| t.starts_with(note)), "{:?}", d.texts);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let rings = doc
        .descendants()
        .filter(|n| n.has_tag_name("circle"))
        .filter(|n| {
            n.attribute("stroke")
                .is_some_and(|c| c.eq_ignore_ascii_case(VICTIM))
        })
        .count();
    assert_eq!(rings, 2, "one ring per view");
}

/// The sense loop beside a 4400-segment helix: the helix is thinned, the loop keeps its
/// four corners (20 mm × 8 mm centred on the axis, from scenes/shield-options.toml).
#[test]
fn a_small_victim_beside_a_long_helix_keeps_its_corners() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenes/shield-options.toml");
    let scene = Scene::load(&path).unwrap();
    let d = read(&scene_views_svg(&scene).unwrap());
    let mm = d.px_per_mm.0;
    let ring = bbox(&d.strokes[SOURCE]);
    let centre = (0.5 * (ring.0 + ring.2), 0.5 * (ring.1 + ring.3));
    let pts = &d.strokes[VICTIM];
    for (x, y) in [(-10.0, -4.0), (10.0, -4.0), (10.0, 4.0), (-10.0, 4.0)] {
        // Plan view: y up on the page is −y in pixels.
        let c = (centre.0 + x * mm, centre.1 - y * mm);
        let near = pts.iter().any(|p| (p.0 - c.0).hypot(p.1 - c.1) < 2.0);
        assert!(near, "no corner at ({x}, {y}) mm = {c:?} px");
    }
    // The helix's plan view is a circle of 4 mm radius (a little more with the leads).
    assert!(((ring.2 - ring.0) / mm - 8.0).abs() < 0.2, "{ring:?}");
}

/// Every demo scene draws, each id appears as text, and the largest helix draws quickly.
#[test]
fn every_demo_scene_draws() {
    for path in demo_scenes() {
        let scene = Scene::load(&path).unwrap();
        let t = std::time::Instant::now();
        let svg = scene_views_svg(&scene).unwrap_or_else(|e| panic!("{path:?}: {e}"));
        let took = t.elapsed();
        let d = read(&svg);
        let ids = scene
            .sources
            .iter()
            .map(|s| &s.id)
            .chain(scene.victims.iter().map(|v| &v.id));
        for id in ids {
            assert!(d.texts.iter().any(|t| t == id), "{path:?}: no text {id}");
        }
        for s in &scene.shields {
            assert!(
                d.texts.iter().any(|t| t.starts_with(&s.id)),
                "{path:?}: {}",
                s.id
            );
        }
        let points = svg.matches(',').count();
        assert!(points < 20_000, "{path:?}: {points} points");
        eprintln!("{path:?}: {took:?}, {} bytes", svg.len());
    }
}

fn demo_scenes() -> Vec<std::path::PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenes");
    let mut v: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    v.sort();
    v
}

/// Writes target/scene-views/<scene>.svg for every demo scene, to look at:
/// `cargo test --release --test scene_view -- --ignored`, then `rsvg-convert`.
#[test]
#[ignore]
fn write_demo_scene_views() {
    let out = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/scene-views");
    std::fs::create_dir_all(&out).unwrap();
    let mut all = demo_scenes();
    all.push(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/coil-over-pickup.toml"));
    for path in all {
        let scene = Scene::load(&path).unwrap();
        let t = std::time::Instant::now();
        let svg = scene_views_svg(&scene).unwrap();
        eprintln!("{path:?}: {:?}", t.elapsed());
        let name = path.file_stem().unwrap().to_string_lossy().to_string();
        std::fs::write(out.join(format!("{name}.svg")), svg).unwrap();
    }
    std::fs::write(out.join("can.svg"), scene_views_svg(&canned()).unwrap()).unwrap();
    let scene = Scene::parse("scale.toml", SCENE).unwrap();
    std::fs::write(
        out.join("scale-check.svg"),
        scene_views_svg(&scene).unwrap(),
    )
    .unwrap();
}
