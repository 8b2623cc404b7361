//! Physics invariants over random geometries: linearity and superposition of the
//! Biot–Savart field, reciprocity of mutual inductance (free space and through a
//! conducting sheet), invariance under rigid motions, ∇·B = 0 and Ampère's circuital
//! law, finite values at every singular point, and passive eddy-current shielding.
//!
//! Every case is drawn from the deterministic `Lcg` with a fixed seed, so a failure
//! reproduces exactly; the failing case is printed with the assertion. Expected values
//! come from the invariants themselves (and from the test's own quadratures), never from
//! a second call into the same library routine with the same input.
//!
//! Run with `cargo test --release --test invariants -- --nocapture` to see the worst
//! errors measured.

mod common;

use common::{Lcg, MU0, basis, rotate};
use num_complex::Complex64;
use std::f64::consts::{PI, TAU};
use strayflux::Scene;
use strayflux::coupling::flux_per_amp;
use strayflux::field::{Conductors, FieldSource, Vec3};
use strayflux::run::Solver;
use strayflux::run::couple::{VictimReport, couple_victim};
use strayflux::run::probe::probe;

/// The scene's default relative tolerance (`[solver]` in docs/scene-reference.md;
/// `DEFAULT_TOLERANCE`).
const TOL: f64 = 1e-6;
/// The scene's default wire radius, m.
const WIRE: f64 = 1e-4;

// ---------------------------------------------------------------------------------
// Random geometry.
// ---------------------------------------------------------------------------------

/// TOML array of three SI numbers (`{:e}` prints the shortest round-trip form).
fn v3(v: &Vec3) -> String {
    format!("[{:e}, {:e}, {:e}]", v.x, v.y, v.z)
}

/// A uniformly distributed random unit vector (rejection from the cube).
fn unit(rng: &mut Lcg) -> Vec3 {
    loop {
        let v = Vec3::new(
            rng.range(-1.0, 1.0),
            rng.range(-1.0, 1.0),
            rng.range(-1.0, 1.0),
        );
        let n = v.norm();
        if n > 0.1 && n <= 1.0 {
            return v / n;
        }
    }
}

/// Log-uniform in [lo, hi).
fn log_range(rng: &mut Lcg, lo: f64, hi: f64) -> f64 {
    (rng.range(lo.ln(), hi.ln())).exp()
}

/// A closed planar or slightly non-planar loop shape in its local frame (m).
#[derive(Clone, Debug)]
enum Shape {
    /// Circle of this radius (a polygon of `circle_segments` chords as a source, the
    /// exact circle as a victim).
    Loop(f64),
    /// Width along local x, height along local y.
    Rect(f64, f64),
    /// Corners, counter-clockwise about local z seen from +z.
    Poly(Vec<Vec3>),
}

impl Shape {
    /// A random loop, rectangle or star-shaped polygon of a random size in [lo, hi) (m); polygons
    /// lift their corners off the plane by up to ±`warp`·size.
    fn random(rng: &mut Lcg, lo: f64, hi: f64, warp: f64) -> Shape {
        let size = rng.range(lo, hi);
        match (rng.next_f64() * 3.0) as usize {
            0 => Shape::Loop(size * rng.range(0.5, 1.0)),
            1 => Shape::Rect(size * rng.range(0.6, 2.0), size * rng.range(0.6, 2.0)),
            _ => Shape::random_polygon(rng, size, warp),
        }
    }

    /// Star-shaped about the origin (angles in order, one per sector), so it is simple.
    fn random_polygon(rng: &mut Lcg, size: f64, warp: f64) -> Shape {
        let n = 3 + (rng.next_f64() * 4.0) as usize;
        let corners = (0..n)
            .map(|i| {
                let th = TAU * (i as f64 + rng.range(0.2, 0.8)) / n as f64;
                let r = size * rng.range(0.5, 1.0);
                Vec3::new(r * th.cos(), r * th.sin(), size * rng.range(-warp, warp))
            })
            .collect();
        Shape::Poly(corners)
    }

    fn body(&self) -> String {
        match self {
            Shape::Loop(r) => format!("kind = \"loop\"\nradius = {r:e}\n"),
            Shape::Rect(w, h) => format!("kind = \"rectangle\"\nwidth = {w:e}\nheight = {h:e}\n"),
            Shape::Poly(c) => {
                let v: Vec<String> = c.iter().map(v3).collect();
                format!("kind = \"polygon\"\nvertices = [{}]\n", v.join(", "))
            }
        }
    }

    /// The closed path (first point not repeated), local m; circles as 256-gons.
    fn local_path(&self) -> Vec<Vec3> {
        match self {
            Shape::Loop(r) => (0..256)
                .map(|k| {
                    let th = TAU * k as f64 / 256.0;
                    Vec3::new(r * th.cos(), r * th.sin(), 0.0)
                })
                .collect(),
            Shape::Rect(w, h) => {
                let (x, y) = (w / 2.0, h / 2.0);
                vec![
                    Vec3::new(-x, -y, 0.0),
                    Vec3::new(x, -y, 0.0),
                    Vec3::new(x, y, 0.0),
                    Vec3::new(-x, y, 0.0),
                ]
            }
            Shape::Poly(c) => c.clone(),
        }
    }

    /// Largest distance of the path from the local origin, m.
    fn extent(&self) -> f64 {
        self.local_path()
            .iter()
            .map(|p| p.norm())
            .fold(0.0, f64::max)
    }
}

/// Placement of an element: `position`, `axis`, `reference` (always written, so the
/// frame never depends on the scene's own x axis).
#[derive(Clone, Copy, Debug)]
struct Place {
    at: Vec3,
    axis: Vec3,
    reference: Vec3,
}

impl Place {
    fn random(rng: &mut Lcg, at: Vec3) -> Place {
        let axis = unit(rng);
        let reference = loop {
            let r = unit(rng);
            if r.cross(&axis).norm() > 0.3 {
                break r;
            }
        };
        Place {
            at,
            axis,
            reference,
        }
    }

    /// Random axes, centred a random distance in [lo, hi) (m) from the origin.
    fn random_around(rng: &mut Lcg, lo: f64, hi: f64) -> Place {
        let at = unit(rng) * rng.range(lo, hi);
        Place::random(rng, at)
    }

    fn toml(&self) -> String {
        format!(
            "position = {}\naxis = {}\nreference = {}\n",
            v3(&self.at),
            v3(&self.axis),
            v3(&self.reference)
        )
    }

    /// Scene point of a local point (the tests' own frame, `common::basis`).
    fn world(&self, local: &Vec3) -> Vec3 {
        let (x, y, z) = basis(&self.axis, &self.reference);
        self.at + x * local.x + y * local.y + z * local.z
    }

    fn moved(&self, m: &Motion) -> Place {
        Place {
            at: m.point(&self.at),
            axis: m.rot(&self.axis),
            reference: m.rot(&self.reference),
        }
    }
}

/// A rigid motion: rotation by `angle` about the unit `axis`, then a shift (m).
#[derive(Clone, Copy, Debug)]
struct Motion {
    axis: Vec3,
    angle: f64,
    shift: Vec3,
}

impl Motion {
    fn random(rng: &mut Lcg) -> Motion {
        Motion {
            axis: unit(rng),
            angle: rng.range(0.2, PI),
            shift: unit(rng) * rng.range(0.01, 0.5),
        }
    }
    fn rot(&self, v: &Vec3) -> Vec3 {
        rotate(&self.axis, self.angle, v)
    }
    fn point(&self, p: &Vec3) -> Vec3 {
        self.rot(p) + self.shift
    }
}

/// A shape placed in the scene.
#[derive(Clone, Debug)]
struct Element {
    shape: Shape,
    place: Place,
}

impl Element {
    /// The closed path in scene coordinates (m).
    fn path(&self) -> Vec<Vec3> {
        self.shape
            .local_path()
            .iter()
            .map(|p| self.place.world(p))
            .collect()
    }

    fn source(&self, id: &str, current: &str) -> String {
        format!(
            "[[source]]\nid = \"{id}\"\n{}{}current = {current}\n",
            self.shape.body(),
            self.place.toml()
        )
    }

    fn victim(&self, id: &str) -> String {
        format!(
            "[[victim]]\nid = \"{id}\"\n{}{}",
            self.shape.body(),
            self.place.toml()
        )
    }

    fn moved(&self, m: &Motion) -> Element {
        Element {
            shape: self.shape.clone(),
            place: self.place.moved(m),
        }
    }
}

/// Distance (m) between the closed segments p1–q1 and p2–q2 (Ericson, "Real-Time
/// Collision Detection" (2005), §5.1.9, closest points of two segments).
fn segment_distance(p1: &Vec3, q1: &Vec3, p2: &Vec3, q2: &Vec3) -> f64 {
    let (d1, d2, r) = (q1 - p1, q2 - p2, p1 - p2);
    let (a, e, f) = (d1.dot(&d1), d2.dot(&d2), d2.dot(&r));
    let (b, c) = (d1.dot(&d2), d1.dot(&r));
    let denom = a * e - b * b;
    let mut s = if denom > 1e-30 * a * e {
        ((b * f - c * e) / denom).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let mut t = (b * s + f) / e;
    if t < 0.0 {
        t = 0.0;
        s = (-c / a).clamp(0.0, 1.0);
    } else if t > 1.0 {
        t = 1.0;
        s = ((b - c) / a).clamp(0.0, 1.0);
    }
    ((p1 + d1 * s) - (p2 + d2 * t)).norm()
}

/// Smallest distance (m) between two closed paths.
fn path_gap(a: &[Vec3], b: &[Vec3]) -> f64 {
    let mut best = f64::INFINITY;
    for i in 0..a.len() {
        let (p1, q1) = (a[i], a[(i + 1) % a.len()]);
        for j in 0..b.len() {
            best = best.min(segment_distance(&p1, &q1, &b[j], &b[(j + 1) % b.len()]));
        }
    }
    best
}

/// A flat sheet: a point on its first face, its normal, material (TOML value),
/// thickness (m).
#[derive(Clone, Debug)]
struct Sheet {
    at: Vec3,
    normal: Vec3,
    material: String,
    thickness: f64,
}

impl Sheet {
    fn toml(&self) -> String {
        format!(
            "[[shield]]\nid = \"sheet\"\nmaterial = {}\nthickness = {:e}\nposition = {}\naxis = {}\n",
            self.material,
            self.thickness,
            v3(&self.at),
            v3(&self.normal)
        )
    }

    fn moved(&self, m: &Motion) -> Sheet {
        Sheet {
            at: m.point(&self.at),
            normal: m.rot(&self.normal),
            ..self.clone()
        }
    }

    /// Signed distance (m) of `p` from the sheet: negative before the first face,
    /// positive beyond the last, zero inside.
    fn side_distance(&self, p: &Vec3) -> f64 {
        let z = (p - self.at).dot(&self.normal);
        if z < 0.0 {
            z
        } else {
            (z - self.thickness).max(0.0)
        }
    }
}

/// A random sheet material: built-in or custom, non-magnetic unless `magnetic`.
fn random_material(rng: &mut Lcg, magnetic: bool) -> String {
    let names: &[&str] = if magnetic {
        &["\"steel\"", "\"mu-metal\"", "custom"]
    } else {
        &[
            "\"copper\"",
            "\"aluminium\"",
            "\"brass\"",
            "\"stainless\"",
            "custom",
        ]
    };
    let pick = names[(rng.next_f64() * names.len() as f64) as usize];
    if pick != "custom" {
        return pick.to_string();
    }
    let sigma = log_range(rng, 1e5, 1e8);
    let mu_r = if magnetic {
        log_range(rng, 2.0, 5e3)
    } else {
        1.0
    };
    format!("{{ conductivity = {sigma:e}, relative_permeability = {mu_r:e} }}")
}

/// Spectral lines (Hz, A peak, rad) of one source.
#[derive(Clone, Debug)]
struct Lines(Vec<(f64, f64, f64)>);

impl Lines {
    /// 1–3 lines from a fixed set of frequencies (so sources share some), random
    /// amplitudes and phases.
    fn random(rng: &mut Lcg) -> Lines {
        let pool = [1e3, 2.5e4, 1.5e5, 1e6];
        let n = 1 + (rng.next_f64() * 3.0) as usize;
        let start = (rng.next_f64() * (pool.len() - n + 1) as f64) as usize;
        Lines(
            pool[start..start + n]
                .iter()
                .map(|&f| (f, rng.range(0.05, 3.0), rng.range(-PI, PI)))
                .collect(),
        )
    }

    /// Every phasor multiplied by `s` (peak by |s|, phase advanced by arg s).
    fn scaled(&self, s: Complex64) -> Lines {
        Lines(
            self.0
                .iter()
                .map(|&(f, p, ph)| (f, p * s.norm(), ph + s.arg()))
                .collect(),
        )
    }

    fn toml(&self) -> String {
        let items: Vec<String> = self
            .0
            .iter()
            .map(|(f, p, ph)| format!("{{ frequency = {f:e}, peak = {p:e}, phase = {ph:e} }}"))
            .collect();
        format!("{{ lines = [{}] }}", items.join(", "))
    }
}

/// Sources, victims and an optional sheet.
#[derive(Clone, Debug)]
struct Layout {
    sources: Vec<Element>,
    victims: Vec<Element>,
    sheet: Option<Sheet>,
}

impl Layout {
    /// `ns` sources and `nv` victims of about `size` (m), every victim at least
    /// `min_gap` (m) from every source. With `sheet`, the sources sit before a random
    /// sheet and each victim on a random side of it (both paths, transmitted and
    /// reflected, occur), at least 1 mm from its faces.
    fn random(rng: &mut Lcg, ns: usize, nv: usize, sheet: bool, min_gap: f64) -> Layout {
        'retry: loop {
            let sheet = sheet.then(|| Sheet {
                at: Vec3::new(
                    rng.range(-0.01, 0.01),
                    rng.range(-0.01, 0.01),
                    rng.range(-0.01, 0.01),
                ),
                normal: unit(rng),
                material: {
                    let magnetic = rng.next_f64() < 0.3;
                    random_material(rng, magnetic)
                },
                thickness: log_range(rng, 2e-5, 2e-3),
            });
            let place = |rng: &mut Lcg, beyond: Option<bool>| {
                let shape = Shape::random(rng, 0.004, 0.02, 0.15);
                let e = shape.extent();
                let at = match (&sheet, beyond) {
                    (Some(s), Some(b)) => {
                        let (u, v, n) = basis(&s.normal, &unit(rng));
                        let lateral = u * rng.range(-0.02, 0.02) + v * rng.range(-0.02, 0.02);
                        let h = rng.range(0.001, 0.015) + e;
                        let along = if b { s.thickness + h } else { -h };
                        s.at + n * along + lateral
                    }
                    _ => Vec3::new(
                        rng.range(-0.04, 0.04),
                        rng.range(-0.04, 0.04),
                        rng.range(-0.04, 0.04),
                    ),
                };
                Element {
                    shape,
                    place: Place::random(rng, at),
                }
            };
            let sources: Vec<Element> = (0..ns).map(|_| place(rng, Some(false))).collect();
            let victims: Vec<Element> = (0..nv)
                .map(|k| {
                    let beyond = k == 0 || rng.next_f64() < 0.5;
                    place(rng, Some(beyond))
                })
                .collect();
            for v in &victims {
                for s in &sources {
                    if path_gap(&v.path(), &s.path()) < min_gap {
                        continue 'retry;
                    }
                }
            }
            return Layout {
                sources,
                victims,
                sheet,
            };
        }
    }

    fn text(&self, lines: &[Lines]) -> String {
        let mut t = String::from("[scene]\ntitle = \"invariants\"\n");
        for (k, (s, l)) in self.sources.iter().zip(lines).enumerate() {
            t += &s.source(&format!("s{k}"), &l.toml());
        }
        for (k, v) in self.victims.iter().enumerate() {
            t += &v.victim(&format!("v{k}"));
        }
        if let Some(s) = &self.sheet {
            t += &s.toml();
        }
        t
    }

    fn scene(&self, lines: &[Lines]) -> Scene {
        parse(&self.text(lines))
    }

    fn moved(&self, m: &Motion) -> Layout {
        Layout {
            sources: self.sources.iter().map(|e| e.moved(m)).collect(),
            victims: self.victims.iter().map(|e| e.moved(m)).collect(),
            sheet: self.sheet.as_ref().map(|s| s.moved(m)),
        }
    }

    /// `n` random points within 50 mm of the origin, at least 1 mm from every source
    /// conductor; with a sheet, within 30 mm and at least 3 mm outside its faces (the
    /// sheet's spectral sum grows with the points' spread and nearness to it).
    fn probe_points(&self, rng: &mut Lcg, scene: &Scene, n: usize) -> Vec<Vec3> {
        let (size, gap) = if self.sheet.is_some() {
            (0.03, 3e-3)
        } else {
            (0.05, 0.0)
        };
        let mut out = Vec::new();
        while out.len() < n {
            let p = Vec3::new(
                rng.range(-size, size),
                rng.range(-size, size),
                rng.range(-size, size),
            );
            let clear = scene
                .sources
                .iter()
                .all(|s| s.conductors.distance_to(&p) > 1e-3);
            let off_sheet = self
                .sheet
                .as_ref()
                .is_none_or(|s| s.side_distance(&p).abs() > gap);
            if clear && off_sheet {
                out.push(p);
            }
        }
        out
    }
}

fn parse(text: &str) -> Scene {
    Scene::parse("invariants.toml", text).unwrap_or_else(|e| panic!("{e:?}\n{text}"))
}

fn couple(scene: &Scene, v: usize) -> VictimReport {
    couple_victim(scene, &Solver::for_scene(scene), &scene.victims[v])
        .unwrap_or_else(|e| panic!("{e}"))
}

/// |a − b| over a complex 3-vector.
fn cdiff(a: &[Complex64; 3], b: &[Complex64; 3]) -> f64 {
    (0..3).map(|k| (a[k] - b[k]).norm_sqr()).sum::<f64>().sqrt()
}

fn cnorm(a: &[Complex64; 3]) -> f64 {
    a.iter().map(|c| c.norm_sqr()).sum::<f64>().sqrt()
}

// ---------------------------------------------------------------------------------
// 1. Linearity in the current.
// ---------------------------------------------------------------------------------

#[test]
fn emf_and_field_scale_linearly_with_the_current_phasor() {
    // Linearity of the Biot–Savart law in the current (Jackson, "Classical
    // Electrodynamics", 3rd ed., §5.2), of Faraday's law E = −jωΦ, and of the eddy-
    // current problem in a linear sheet: multiplying every source's current phasor by a
    // complex s multiplies each line's EMF and each B phasor by s, leaves M unchanged
    // and scales the rms total by |s|. 24 random scenes (1–2 sources, 1–2 victims,
    // every fourth behind a random sheet), s random in modulus 0.1–10 and phase.
    // Tolerance 1e-12: the geometry, hence every flux and field per ampere, is the same
    // in both scenes and only the phasor changes, formed from peak and phase in double
    // precision (a few ulp); anything larger means a result depends nonlinearly on the
    // current (an absolute tolerance, a cut on the current's size).
    let mut rng = Lcg(0x1a7e_0001);
    let (mut worst_emf, mut worst_b, mut worst_m, mut checked) = (0.0f64, 0.0f64, 0.0f64, 0);
    for case in 0..24 {
        let shielded = case % 4 == 3;
        let ns = 1 + (rng.next_f64() * 2.0) as usize;
        let nv = 1 + (rng.next_f64() * 2.0) as usize;
        let layout = Layout::random(&mut rng, ns, nv, shielded, 0.002);
        let lines: Vec<Lines> = (0..ns).map(|_| Lines::random(&mut rng)).collect();
        let s = Complex64::from_polar(rng.range(0.1, 10.0), rng.range(-PI, PI));
        let scaled: Vec<Lines> = lines.iter().map(|l| l.scaled(s)).collect();
        let (a, b) = (layout.scene(&lines), layout.scene(&scaled));
        for v in 0..nv {
            let (ra, rb) = (couple(&a, v), couple(&b, v));
            for (ca, cb) in ra.sources.iter().zip(&rb.sources) {
                let dm = (ca.mutual_inductance - cb.mutual_inductance).abs();
                assert!(
                    dm <= 1e-12 * ca.mutual_inductance.abs(),
                    "case {case}: M changed"
                );
                worst_m = worst_m.max(dm / ca.mutual_inductance.abs());
                for (la, lb) in ca.lines.iter().zip(&cb.lines) {
                    let want = la.emf * s;
                    let e = (lb.emf - want).norm() / want.norm();
                    assert!(
                        e <= 1e-12,
                        "case {case}: EMF {} vs s·{} (rel {e:e})\n{}",
                        lb.emf,
                        la.emf,
                        layout.text(&lines)
                    );
                    worst_emf = worst_emf.max(e);
                    checked += 1;
                }
            }
            let e = (rb.total_rms().unwrap() - s.norm() * ra.total_rms().unwrap()).abs()
                / (s.norm() * ra.total_rms().unwrap());
            assert!(e <= 1e-12, "case {case}: rms total {e:e}");
            worst_emf = worst_emf.max(e);
        }
        let pts = layout.probe_points(&mut rng, &a, 8);
        let (pa, pb) = (
            probe(&a, &Solver::for_scene(&a), &pts).unwrap(),
            probe(&b, &Solver::for_scene(&b), &pts).unwrap(),
        );
        for (qa, qb) in pa.iter().zip(&pb) {
            for (la, lb) in qa.lines.iter().zip(&qb.lines) {
                let want = la.b.map(|c| c * s);
                let e = cdiff(&lb.b, &want) / cnorm(&want);
                assert!(
                    e <= 1e-12,
                    "case {case}: B {:?} vs s·{:?} at {:?}\n{}",
                    lb.b,
                    la.b,
                    qa.position,
                    layout.text(&lines)
                );
                worst_b = worst_b.max(e);
            }
        }
    }
    println!(
        "linearity: {checked} line EMFs; max rel EMF {worst_emf:.2e}, B {worst_b:.2e}, \
         M change {worst_m:.2e}"
    );
    assert!(
        worst_emf <= 1e-12 && worst_b <= 1e-12,
        "{worst_emf:e} {worst_b:e}"
    );
    assert!(worst_m <= 1e-12, "M depends on the current: {worst_m:e}");
}

// ---------------------------------------------------------------------------------
// 2. Superposition.
// ---------------------------------------------------------------------------------

#[test]
fn sources_together_couple_as_the_phasor_sum_of_each_alone() {
    // Superposition (linearity of the Biot–Savart law in the current distribution,
    // Jackson 3rd ed. §5.2; of the sheet's eddy-current response): the scene with
    // sources a and b gives, per frequency, the EMF phasor sum of the scene with a
    // alone and the scene with b alone, and B at every probe point is the sum. The two
    // sources share one frequency and each has lines of its own. 16 random scenes,
    // every fourth behind a random sheet. Tolerance 1e-12 of |E_a| + |E_b| (each part is
    // computed from the same geometry; only the phasor additions round).
    let mut rng = Lcg(0x5e_0002);
    let (mut worst_e, mut worst_b) = (0.0f64, 0.0f64);
    for case in 0..16 {
        let layout = Layout::random(&mut rng, 2, 2, case % 4 == 1, 0.002);
        let la = Lines(vec![
            (1e4, rng.range(0.1, 2.0), rng.range(-PI, PI)),
            (3e4, rng.range(0.1, 2.0), rng.range(-PI, PI)),
        ]);
        let lb = Lines(vec![
            (1e4, rng.range(0.1, 2.0), rng.range(-PI, PI)),
            (7e4, rng.range(0.1, 2.0), rng.range(-PI, PI)),
        ]);
        let both = layout.scene(&[la.clone(), lb.clone()]);
        let only = |k: usize, l: &Lines| {
            let mut one = layout.clone();
            one.sources = vec![layout.sources[k].clone()];
            one.scene(std::slice::from_ref(l))
        };
        let (sa, sb) = (only(0, &la), only(1, &lb));
        for v in 0..2 {
            let (r, ra, rb) = (couple(&both, v), couple(&sa, v), couple(&sb, v));
            assert_eq!(r.by_frequency.len(), 3);
            for &(f, e) in &r.by_frequency {
                let part = |rep: &VictimReport| {
                    rep.by_frequency
                        .iter()
                        .find(|x| (x.0 - f).abs() < 1e-6 * f)
                        .map_or(Complex64::new(0.0, 0.0), |x| x.1)
                };
                let (ea, eb) = (part(&ra), part(&rb));
                let err = (e - ea - eb).norm() / (ea.norm() + eb.norm());
                assert!(
                    err <= 1e-12,
                    "case {case}, victim {v}, {f} Hz: {e} vs {ea} + {eb}\n{}",
                    layout.text(&[la.clone(), lb.clone()])
                );
                worst_e = worst_e.max(err);
            }
        }
        let pts = layout.probe_points(&mut rng, &both, 8);
        let (p, pa, pb) = (
            probe(&both, &Solver::for_scene(&both), &pts).unwrap(),
            probe(&sa, &Solver::for_scene(&sa), &pts).unwrap(),
            probe(&sb, &Solver::for_scene(&sb), &pts).unwrap(),
        );
        for i in 0..pts.len() {
            for line in &p[i].lines {
                let part = |pp: &strayflux::run::probe::ProbePoint| {
                    pp.lines
                        .iter()
                        .find(|x| (x.frequency - line.frequency).abs() < 1e-6 * line.frequency)
                        .map_or([Complex64::new(0.0, 0.0); 3], |x| x.b)
                };
                let (ba, bb) = (part(&pa[i]), part(&pb[i]));
                let sum = [ba[0] + bb[0], ba[1] + bb[1], ba[2] + bb[2]];
                let err = cdiff(&line.b, &sum) / (cnorm(&ba) + cnorm(&bb));
                assert!(
                    err <= 1e-12,
                    "case {case}: B {:?} vs {ba:?} + {bb:?} at {:?}",
                    line.b,
                    pts[i]
                );
                worst_b = worst_b.max(err);
            }
        }
    }
    println!("superposition of sources: max rel EMF {worst_e:.2e}, B {worst_b:.2e}");
    assert!(
        worst_e <= 1e-12 && worst_b <= 1e-12,
        "{worst_e:e} {worst_b:e}"
    );
}

/// Flux per ampere (value, gross magnitude) of the scene's source `s` into victim `v`,
/// at the scene's tolerance.
fn flux(scene: &Scene, s: usize, v: usize) -> (f64, f64) {
    let i = flux_per_amp(
        &scene.sources[s].conductors,
        &scene.victims[v].edges,
        scene.tolerance,
    );
    assert!(i.converged, "flux integral did not converge");
    (i.value, i.magnitude)
}

#[test]
fn polygon_source_couples_as_the_sum_of_its_triangles() {
    // Superposition of current distributions (Jackson 3rd ed. §5.2) with Kirchhoff's
    // current law: a polygon carrying I is the sum of the fan of triangles (centre,
    // corner i, corner i+1) each carrying I, because every inner spoke carries I once
    // each way and cancels. So M(polygon → victim) = Σ M(triangle → victim), and, the
    // other way round (additivity of flux, Stokes' theorem), the flux into a polygon
    // victim is the sum of the fluxes into its triangles. 24 random non-planar polygons
    // against random victims at least 2 mm from every spoke. Tolerance: each integral
    // is good to the scene tolerance times its gross magnitude (the quadrature's
    // error scale), so |Δ| ≤ 1e-6 · (magnitude of the whole + Σ magnitudes of parts).
    let mut rng = Lcg(0x5e_0003);
    let mut worst: f64 = 0.0;
    for case in 0..24 {
        let size = rng.range(0.006, 0.02);
        let Shape::Poly(corners) = Shape::random_polygon(&mut rng, size, 0.2) else {
            unreachable!()
        };
        let n = corners.len();
        let centre = corners.iter().sum::<Vec3>() / n as f64;
        let whole = Element {
            shape: Shape::Poly(corners.clone()),
            place: Place::random(&mut rng, Vec3::zeros()),
        };
        let parts: Vec<Element> = (0..n)
            .map(|i| Element {
                shape: Shape::Poly(vec![centre, corners[i], corners[(i + 1) % n]]),
                place: whole.place,
            })
            .collect();
        let other = loop {
            let e = Element {
                shape: Shape::random(&mut rng, 0.004, 0.02, 0.15),
                place: Place::random_around(&mut rng, 0.01, 0.05),
            };
            if parts
                .iter()
                .all(|p| path_gap(&p.path(), &e.path()) >= 0.002)
            {
                break e;
            }
        };
        let current = "{ frequency = 1000, peak = 1 }";
        for polygon_is_source in [true, false] {
            let mut t = String::new();
            if polygon_is_source {
                t += &whole.source("whole", current);
                for (k, p) in parts.iter().enumerate() {
                    t += &p.source(&format!("part{k}"), current);
                }
                t += &other.victim("v");
            } else {
                t += &other.source("s", current);
                t += &whole.victim("whole");
                for (k, p) in parts.iter().enumerate() {
                    t += &p.victim(&format!("part{k}"));
                }
            }
            let scene = parse(&t);
            let terms: Vec<(f64, f64)> = (1..=n)
                .map(|k| {
                    if polygon_is_source {
                        flux(&scene, k, 0)
                    } else {
                        flux(&scene, 0, k)
                    }
                })
                .collect();
            let all = flux(&scene, 0, 0);
            let sum: f64 = terms.iter().map(|x| x.0).sum();
            let scale = all.1 + terms.iter().map(|x| x.1).sum::<f64>();
            let e = (all.0 - sum).abs() / scale;
            assert!(
                e <= TOL,
                "case {case} (polygon as {}): whole {:e}, Σ triangles {sum:e}, \
                 error {e:e} of the gross scale\n{t}",
                if polygon_is_source {
                    "source"
                } else {
                    "victim"
                },
                all.0
            );
            worst = worst.max(e);
        }
    }
    println!("polygon = Σ triangles (source and victim side): max |Δ|/scale {worst:.2e}");
}

// ---------------------------------------------------------------------------------
// 3. Reciprocity.
// ---------------------------------------------------------------------------------

/// One source `a` and one victim `b`, with an optional sheet, at `tolerance`.
fn pair_scene(a: &Element, b: &Element, sheet: Option<&Sheet>, tolerance: f64) -> Scene {
    let mut t = format!("[solver]\ntolerance = {tolerance:e}\n");
    t += &a.source("a", "{ frequency = 1000, peak = 1 }");
    t += &b.victim("b");
    if let Some(s) = sheet {
        t += &s.toml();
    }
    parse(&t)
}

#[test]
fn free_space_mutual_inductance_is_reciprocal() {
    // Reciprocity M12 = M21: Neumann's formula M = μ0/4π ∮∮ dl1·dl2/|r1 − r2| is
    // symmetric in the two circuits (Griffiths, "Introduction to Electrodynamics",
    // §7.2.3). 60 random pairs of loops, rectangles and non-planar polygons, randomly
    // tilted and offset, at least 2 mm and a tenth of the larger size apart; each pair
    // computed both ways (a as source, b as victim, then the roles swapped, so every
    // shape is once a source polyline and once a victim edge chain). Tolerance: each M is
    // good to the scene tolerance times its gross magnitude (quadrature), and a loop
    // source's chords stay within the tolerance of the circle at a tenth of its radius
    // (circle_segments), so |M12 − M21| ≤ 2 · 1e-6 · max(magnitudes).
    let mut rng = Lcg(0x2ec1_0004);
    let (mut worst, mut worst_rel) = (0.0f64, 0.0f64);
    for case in 0..60 {
        let (a, b) = loop {
            let a = Element {
                shape: Shape::random(&mut rng, 0.004, 0.02, 0.2),
                place: Place::random(&mut rng, Vec3::zeros()),
            };
            let b = Element {
                shape: Shape::random(&mut rng, 0.004, 0.02, 0.2),
                place: Place::random_around(&mut rng, 0.005, 0.05),
            };
            let size = a.shape.extent().max(b.shape.extent());
            if path_gap(&a.path(), &b.path()) >= 0.002f64.max(0.1 * size) {
                break (a, b);
            }
        };
        let (s1, s2) = (pair_scene(&a, &b, None, TOL), pair_scene(&b, &a, None, TOL));
        let (m12, g12) = flux(&s1, 0, 0);
        let (m21, g21) = flux(&s2, 0, 0);
        // The report's M is the same flux (one turn each).
        assert_eq!(couple(&s1, 0).sources[0].mutual_inductance, m12);
        let e = (m12 - m21).abs() / g12.max(g21);
        assert!(
            e <= 2.0 * TOL,
            "case {case}: M12 {m12:e}, M21 {m21:e}, |Δ| {e:e} of the gross scale\n{:?}\n{:?}",
            a,
            b
        );
        worst = worst.max(e);
        worst_rel = worst_rel.max((m12 - m21).abs() / m12.abs());
    }
    println!(
        "free-space reciprocity: max |M12 − M21|/gross {worst:.2e} (max relative to |M| \
         {worst_rel:.2e})"
    );
}

/// A random sheet with a source shape before it and a victim shape beyond it
/// (`through`) or beside the source (same side), both tilted, offset laterally, and at
/// least 1.5 mm from the faces.
fn sheet_pair(rng: &mut Lcg, through: bool, magnetic: bool) -> (Element, Element, Sheet) {
    let sheet = Sheet {
        at: unit(rng) * rng.range(0.0, 0.01),
        normal: unit(rng),
        material: random_material(rng, magnetic),
        thickness: log_range(rng, 2e-5, 2e-3),
    };
    let (u, v, n) = basis(&sheet.normal, &unit(rng));
    loop {
        let mut make = |beyond: bool| {
            let shape = Shape::random(rng, 0.004, 0.015, 0.15);
            let h = rng.range(0.0015, 0.012) + shape.extent();
            let along = if beyond { sheet.thickness + h } else { -h };
            let lateral = u * rng.range(-0.015, 0.015) + v * rng.range(-0.015, 0.015);
            Element {
                shape,
                place: Place::random(rng, sheet.at + n * along + lateral),
            }
        };
        let (a, b) = (make(false), make(through));
        if path_gap(&a.path(), &b.path()) >= 0.002 {
            return (a, b, sheet);
        }
    }
}

#[test]
fn shielded_mutual_inductance_is_reciprocal() {
    // Lorentz reciprocity for linear, isotropic media (e.g. Harrington, "Time-Harmonic
    // Electromagnetic Fields" (1961), §3-8): with a conducting (and possibly permeable)
    // sheet in place, the complex flux per ampere of a into b equals that of b into a,
    // at any frequency. 12 random pairs on opposite sides of a random sheet (random
    // normal, material — every third one permeable —, thickness 20 µm–2 mm, frequency
    // 10 Hz–1 MHz) and 4 on the same side. Tolerance 1e-6 relative to the larger of |M| and 1e-3 of the free-space
    // gross magnitude (below that the sheet has taken the coupling down by 60 dB and the
    // spectral sum's tolerance applies to the free-space scale, not to the remnant).
    let mut rng = Lcg(0x2ec1_0005);
    let (mut worst, mut worst_own) = (0.0f64, 0.0f64);
    for case in 0..16 {
        let through = case < 12;
        let (a, b, sheet) = sheet_pair(&mut rng, through, case % 3 == 2);
        let f = log_range(&mut rng, 10.0, 1e6);
        let (s1, s2) = (
            pair_scene(&a, &b, Some(&sheet), TOL),
            pair_scene(&b, &a, Some(&sheet), TOL),
        );
        let model = |s: &Scene| {
            Solver::for_scene(s)
                .pair_model(s, 0, &s.victims[0])
                .unwrap_or_else(|e| panic!("{e}"))
        };
        let (m12, m21) = (model(&s1).shielded_flux(f), model(&s2).shielded_flux(f));
        let gross = flux(&s1, 0, 0).1.max(flux(&s2, 0, 0).1);
        let scale = m12.norm().max(m21.norm()).max(1e-3 * gross);
        let e = (m12 - m21).norm() / scale;
        assert!(
            e <= TOL,
            "case {case}: M12 {m12:e}, M21 {m21:e}, rel {e:e}\n{}",
            pair_scene_text(&a, &b, &sheet)
        );
        worst = worst.max(e);
        worst_own = worst_own.max((m12 - m21).norm() / m12.norm());
    }
    println!(
        "shielded reciprocity: 16 pairs, max |M12 − M21|/scale {worst:.2e} (relative to |M12| \
         itself {worst_own:.2e})"
    );
}

fn pair_scene_text(a: &Element, b: &Element, sheet: &Sheet) -> String {
    format!(
        "{}{}{}",
        a.source("a", "{ frequency = 1000, peak = 1 }"),
        b.victim("b"),
        sheet.toml()
    )
}

// ---------------------------------------------------------------------------------
// 4. Invariance under rigid motions.
// ---------------------------------------------------------------------------------

#[test]
fn coupling_is_invariant_under_a_rigid_motion_of_the_whole_scene() {
    // Euclidean invariance: the Biot–Savart law and Faraday's law hold in every
    // Cartesian frame, and a flat sheet of linear, isotropic material has no preferred
    // direction in its plane, so rotating and translating the whole scene (sources,
    // victims and sheet) by Q, t leaves every M and every |EMF| unchanged and turns
    // B(r) into Q B(Q⁻¹(r − t)). 16 random scenes (2 sources, 2 victims), a quarter of
    // them behind a random sheet. Tolerances: M and |EMF| 1e-6 relative to the free-space
    // gross magnitude (each side is good to the scene tolerance; the sheet's spectral
    // sum is laid out in the sheet's own frame, so a different in-plane orientation
    // gives a different but equally accurate sum); B in free space 1e-9 (closed forms
    // only, rounding of coordinates up to 0.5 m against distances of ~1 mm), behind a
    // sheet 1e-6 relative to the free-space |B| there.
    let mut rng = Lcg(0x7e6d_0006);
    let (mut worst_m, mut worst_e, mut worst_b, mut worst_bs) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for case in 0..16 {
        let shielded = case % 4 == 1;
        let layout = Layout::random(&mut rng, 2, 2, shielded, 0.002);
        let lines: Vec<Lines> = (0..2).map(|_| Lines::random(&mut rng)).collect();
        let motion = Motion::random(&mut rng);
        let moved = layout.moved(&motion);
        let (a, b) = (layout.scene(&lines), moved.scene(&lines));
        let free = Layout {
            sheet: None,
            ..layout.clone()
        }
        .scene(&lines);
        for v in 0..2 {
            let (ra, rb) = (couple(&a, v), couple(&b, v));
            for (j, (ca, cb)) in ra.sources.iter().zip(&rb.sources).enumerate() {
                let (_, gross) = flux(&a, j, v);
                let e = (ca.mutual_inductance - cb.mutual_inductance).abs() / gross;
                assert!(
                    e <= TOL,
                    "case {case}: M {:e} moved {:e}\n{}",
                    ca.mutual_inductance,
                    cb.mutual_inductance,
                    layout.text(&lines)
                );
                worst_m = worst_m.max(e);
                for (la, lb) in ca.lines.iter().zip(&cb.lines) {
                    let scale = (TAU * la.frequency * gross * la.current.norm()).max(la.emf.norm());
                    let e = (la.emf.norm() - lb.emf.norm()).abs() / scale;
                    assert!(
                        e <= TOL,
                        "case {case}: |EMF| {:e} moved {:e}\n{}",
                        la.emf.norm(),
                        lb.emf.norm(),
                        layout.text(&lines)
                    );
                    worst_e = worst_e.max(e);
                }
            }
        }
        let pts = layout.probe_points(&mut rng, &a, 10);
        let moved_pts: Vec<Vec3> = pts.iter().map(|p| motion.point(p)).collect();
        let (pa, pb) = (
            probe(&a, &Solver::for_scene(&a), &pts).unwrap(),
            probe(&b, &Solver::for_scene(&b), &moved_pts).unwrap(),
        );
        let pf = probe(&free, &Solver::for_scene(&free), &pts).unwrap();
        for ((qa, qb), qf) in pa.iter().zip(&pb).zip(&pf) {
            for ((la, lb), lf) in qa.lines.iter().zip(&qb.lines).zip(&qf.lines) {
                let re = Vec3::new(la.b[0].re, la.b[1].re, la.b[2].re);
                let im = Vec3::new(la.b[0].im, la.b[1].im, la.b[2].im);
                let (qr, qi) = (motion.rot(&re), motion.rot(&im));
                let want = [
                    Complex64::new(qr.x, qi.x),
                    Complex64::new(qr.y, qi.y),
                    Complex64::new(qr.z, qi.z),
                ];
                let e = cdiff(&lb.b, &want) / cnorm(&lf.b).max(cnorm(&la.b));
                if shielded {
                    worst_bs = worst_bs.max(e);
                } else {
                    worst_b = worst_b.max(e);
                }
                assert!(
                    e <= if shielded { TOL } else { 1e-9 },
                    "case {case}: B {:?} vs Q B {want:?} (rel {e:e})\n{}",
                    lb.b,
                    layout.text(&lines)
                );
            }
        }
    }
    println!(
        "rigid motion: max |ΔM|/gross {worst_m:.2e}, |Δ|EMF||/scale {worst_e:.2e}, \
         B free {worst_b:.2e}, B shielded {worst_bs:.2e}"
    );
}

// ---------------------------------------------------------------------------------
// 5. ∇·B = 0 and Ampère's circuital law.
// ---------------------------------------------------------------------------------

/// A random source of any kind (TOML body without id/current) of about 5–25 mm.
fn random_source_body(rng: &mut Lcg, kind: usize) -> String {
    let s = rng.range(0.005, 0.025);
    match kind {
        0 => Shape::Loop(s).body(),
        1 => Shape::Rect(s, s * rng.range(0.3, 2.0)).body(),
        2 => Shape::random_polygon(rng, s, 0.3).body(),
        3 => format!(
            "kind = \"dipole\"\neffective_area = {:e}\n",
            s * s * rng.range(0.5, 50.0)
        ),
        4 => format!(
            "kind = \"helix\"\nradius = {:e}\nlength = {:e}\nturns = {:e}\nleads = \"axial\"\n",
            s * 0.5,
            s * rng.range(0.5, 2.0),
            rng.range(2.0, 8.0)
        ),
        5 => format!(
            "kind = \"toroid\"\nmajor_radius = {:e}\nminor_radius = {:e}\nturns = {}\n",
            s,
            s * rng.range(0.2, 0.5),
            3 + (rng.next_f64() * 8.0) as usize
        ),
        6 => format!(
            "kind = \"spiral\"\nshape = \"{}\"\ninner_radius = {:e}\nouter_radius = {:e}\n\
             turns = {:e}\n",
            if rng.next_f64() < 0.5 {
                "round"
            } else {
                "square"
            },
            s * 0.3,
            s,
            rng.range(1.5, 4.0)
        ),
        7 => format!(
            "kind = \"saddle\"\nradius = {:e}\nlength = {:e}\nopening = {:e}\nturns = {}\n",
            s,
            s * rng.range(1.0, 3.0),
            rng.range(0.5, 2.5),
            1 + (rng.next_f64() * 5.0) as usize
        ),
        _ => format!(
            "kind = \"pair\"\nlength = {:e}\nseparation = {:e}\n{}",
            s * 4.0,
            s * 0.2,
            if rng.next_f64() < 0.5 {
                format!("twist_pitch = {:e}\n", s)
            } else {
                String::new()
            }
        ),
    }
}

/// Number of kinds `random_source_body` knows.
const SOURCE_KINDS: usize = 9;

/// A one-source scene with `body` at a random placement near the origin.
fn one_source(rng: &mut Lcg, body: &str) -> Scene {
    let place = Place::random_around(rng, 0.0, 0.01);
    parse(&format!(
        "[[source]]\nid = \"s\"\n{body}{}current = {{ frequency = 1000, peak = 1 }}\n",
        place.toml()
    ))
}

/// A random point at a random distance in [lo, hi) (m) across a random segment of
/// the conductors (not necessarily the nearest one).
fn near_wire(rng: &mut Lcg, c: &Conductors, lo: f64, hi: f64) -> Vec3 {
    let w = &c.wires[(rng.next_f64() * c.wires.len() as f64) as usize];
    let k = (rng.next_f64() * w.segment_count() as f64) as usize;
    let (a, b) = (w.vertices[k], w.vertices[k + 1]);
    let along = a + (b - a) * rng.next_f64();
    let e = (b - a).normalize();
    let off = loop {
        let u = unit(rng);
        let perp = u - e * e.dot(&u);
        if perp.norm() > 0.1 {
            break perp.normalize();
        }
    };
    along + off * log_range(rng, lo, hi)
}

/// ∂B_k/∂x_i (T/m per A) by central differences of step `h` (m) at `p`, and the
/// largest |B| on the stencil.
fn jacobian<S: FieldSource>(c: &S, p: &Vec3, h: f64) -> ([[f64; 3]; 3], f64) {
    let mut jac = [[0.0; 3]; 3];
    let mut bmax: f64 = 0.0;
    for (i, row) in jac.iter_mut().enumerate() {
        let mut e = Vec3::zeros();
        e[i] = h;
        let (bp, bm) = (c.b_per_amp(&(p + e)), c.b_per_amp(&(p - e)));
        bmax = bmax.max(bp.norm()).max(bm.norm());
        for (k, x) in row.iter_mut().enumerate() {
            *x = (bp[k] - bm[k]) / (2.0 * h);
        }
    }
    (jac, bmax)
}

#[test]
fn field_is_divergence_free_by_central_differences() {
    // Gauss's law for magnetism, ∇·B = 0 (Jackson 3rd ed. eq. 5.13), for every source
    // kind (9 kinds × 3 random placements × 24 points: half anywhere within 50 mm,
    // half 3 wire radii to 3 mm across a random segment). d is the distance to the
    // nearest conductor: the stencils stay in the source-free ball of radius d where B
    // is analytic. With D(h) the central difference, D(h) = ∂B + h²/6 ∂³B + h⁴/120 ∂⁵B
    // + …, so
    //  * D(h) errs by h²/6 |∂³B|; near a wire B is locally the line field μ0I/2πρ and
    //    far off a multipole 1/rⁿ⁺¹ (n ≤ 3 here: dipole-like pair and saddle seen
    //    from afar), whose third derivative is at most (n+1)(n+2) = 20 times its first
    //    over d², so |div D(h)| ≤ 3 · 20/6 · (h/d)² ‖∇B‖ = 10 (h/d)² ‖∇B‖;
    //  * Richardson's R = (4 D(h/2) − D(h))/3 removes the h² term and errs by
    //    h⁴/480 |∂⁵B| ≤ 3 · 840/480 (h/d)⁴ ‖∇B‖ < 6 (h/d)⁴ ‖∇B‖;
    //  * rounding: B carries ~1e-15 of its gross sum, which the difference amplifies
    //    by 1/h; bounded by 1e-12 · max|B| / h on the stencil.
    // h = d/100, so the assertion on R is at ~6e-8 of ‖∇B‖: any part of the kernel that
    // is not the curl of a vector potential (a wrong regularisation, a branch switch
    // that is not seamless) shows at once. ‖∇B‖ is the Frobenius norm of D(h).
    let mut rng = Lcg(0xd1f_0007);
    let (mut worst_d, mut worst_r, mut points) = (0.0f64, 0.0f64, 0usize);
    for kind in 0..SOURCE_KINDS {
        for _ in 0..3 {
            let body = random_source_body(&mut rng, kind);
            let scene = one_source(&mut rng, &body);
            let c = &scene.sources[0].conductors;
            let mut got = 0;
            while got < 24 {
                let p = if got % 2 == 0 || c.wires.is_empty() {
                    unit(&mut rng) * rng.range(0.0, 0.05)
                } else {
                    near_wire(&mut rng, c, 3.0 * WIRE, 3e-3)
                };
                let d = c.distance_to(&p);
                if !(3.0 * WIRE..=0.04).contains(&d) {
                    continue;
                }
                got += 1;
                let h = d / 100.0;
                let (j1, bmax) = jacobian(c, &p, h);
                let (j2, _) = jacobian(c, &p, h / 2.0);
                let div = |j: &[[f64; 3]; 3]| j[0][0] + j[1][1] + j[2][2];
                let frob = j1.iter().flatten().map(|x| x * x).sum::<f64>().sqrt();
                let rounding = 1e-12 * bmax / h;
                let (d1, r) = (div(&j1), (4.0 * div(&j2) - div(&j1)) / 3.0);
                let b1 = 10.0 * (h / d).powi(2) * frob + rounding;
                let b2 = 6.0 * (h / d).powi(4) * frob + rounding;
                assert!(
                    d1.abs() <= b1 && r.abs() <= b2,
                    "∇·B at {p:?} (d = {d:e} m): D(h) {d1:e} (bound {b1:e}), Richardson \
                     {r:e} (bound {b2:e}), ‖∇B‖ {frob:e}, for\n{body}"
                );
                worst_d = worst_d.max(d1.abs() / (frob * (h / d).powi(2)));
                worst_r = worst_r.max(r.abs() / (frob * (h / d).powi(4)));
                points += 1;
            }
        }
    }
    println!(
        "∇·B: {points} points; |div D(h)| ≤ {worst_d:.2} (h/d)² ‖∇B‖ (bound 10), \
         Richardson ≤ {worst_r:.2} (h/d)⁴ ‖∇B‖ (bound 6)"
    );
}

/// A circle: centre, right-handed in-plane unit axes u, v (normal u × v), radius (m).
#[derive(Clone, Copy, Debug)]
struct Ring {
    centre: Vec3,
    u: Vec3,
    v: Vec3,
    r: f64,
}

impl Ring {
    fn new(centre: Vec3, normal: &Vec3, r: f64, rng: &mut Lcg) -> Ring {
        let (u, v, _) = basis(normal, &unit(rng));
        Ring { centre, u, v, r }
    }
    fn normal(&self) -> Vec3 {
        self.u.cross(&self.v)
    }
    fn point(&self, th: f64) -> Vec3 {
        self.centre + (self.u * th.cos() + self.v * th.sin()) * self.r
    }
    /// Smallest distance (m) from the circle (sampled at 720 points, spacing r/115:
    /// over-estimates a clearance δ by at most (r/115)²/8δ, 2.4 % at the smallest δ
    /// accepted, 0.02 r, which the quadrature's margin absorbs)
    /// to the conductors.
    fn clearance(&self, c: &Conductors) -> f64 {
        (0..720)
            .map(|k| c.distance_to(&self.point(TAU * k as f64 / 720.0)))
            .fold(f64::INFINITY, f64::min)
    }
}

/// ∮ B·dl (T·m per A) of `c` around `ring`, counter-clockwise about its normal, by the
/// `n`-point periodic trapezoidal rule, and the largest |B| met.
fn circulation<S: FieldSource>(c: &S, ring: &Ring, n: usize) -> (f64, f64) {
    let h = TAU / n as f64;
    let mut sum = 0.0;
    let mut bmax: f64 = 0.0;
    for k in 0..n {
        let th = h * k as f64;
        let b = c.b_per_amp(&ring.point(th));
        bmax = bmax.max(b.norm());
        let dl = (ring.v * th.cos() - ring.u * th.sin()) * ring.r;
        sum += b.dot(&dl);
    }
    (sum * h, bmax)
}

/// Ampère-turns per ampere linked by `ring`: every wire segment that crosses the flat
/// disc bounded by the ring counts its weight, signed by the direction of crossing
/// relative to the normal (right-hand rule). Half-open sign test, so a crossing
/// exactly at a vertex counts once.
fn linked(c: &Conductors, ring: &Ring) -> f64 {
    let n = ring.normal();
    let mut total = 0.0;
    for w in &c.wires {
        for s in w.vertices.windows(2) {
            let (zp, zq) = ((s[0] - ring.centre).dot(&n), (s[1] - ring.centre).dot(&n));
            if (zp < 0.0) != (zq < 0.0) {
                let x = s[0] + (s[1] - s[0]) * (zp / (zp - zq));
                if (x - ring.centre).norm() < ring.r {
                    total += w.weight * (zq - zp).signum();
                }
            }
        }
    }
    total
}

/// Checks Ampère's law around `ring` for `c`: returns (|error| / scale, linked turns).
/// Trapezoidal rule with n = 40 r/δ + 64 points (δ the ring's clearance): the
/// integrand is analytic in a strip |Im θ| ≲ δ/r, so the rule's error falls like
/// e^{−n δ/r} ≈ e^{−40} (Trefethen & Weideman, SIAM Review 56, 385 (2014)); checked
/// against 1.5 n points. `slack` adds a known model error (relative to the scale).
fn ampere(c: &Conductors, ring: &Ring, delta: f64, what: &str, slack: f64) -> (f64, f64) {
    let n = ((40.0 * ring.r / delta).ceil() as usize + 64).min(20_000);
    let (got, bmax) = circulation(c, ring, n);
    let (check, _) = circulation(c, ring, n * 3 / 2);
    let lk = linked(c, ring);
    let want = MU0 * lk;
    // Scale: the law's own μ0 I and the integrand's size. Rounding: B carries ~1e-15 of
    // its gross sum (up to ~1e4 segments), and r − (vertex) rounds to ε·|vertex|, which
    // moves the field point by that much against a clearance δ: a relative noise of
    // ε·max|vertex|/δ (1e-8 for the 20 km wire seen from 0.3 mm; 1e-13 otherwise).
    let scale = MU0 * (lk.abs() + 1.0) + TAU * ring.r * bmax;
    let far = c
        .wires
        .iter()
        .flat_map(|w| w.vertices.iter())
        .map(|v| v.amax())
        .fold(0.0, f64::max);
    let noise = 10.0 * f64::EPSILON * far / delta;
    assert!(
        (got - check).abs() <= (1e-12 + noise) * scale,
        "{what}: trapezoidal rule not converged ({got:e} vs {check:e}) around {ring:?}"
    );
    let e = (got - want).abs() / scale;
    assert!(
        e <= 1e-10 + noise + slack,
        "{what}: ∮B·dl = {got:e} T·m/A, μ0·I_enclosed = {want:e} ({lk} turns linked), \
         error {e:e} of the scale, around {ring:?} (clearance {delta:e} m)"
    );
    (e, lk)
}

#[test]
fn circulation_of_b_equals_mu0_times_the_linked_current() {
    // Ampère's circuital law ∮B·dl = μ0 I_enclosed (Jackson 3rd ed. eq. 5.25, the
    // integral form of ∇ × B = μ0 J), for the closed circuits the library builds: the
    // field is exactly Biot–Savart of the modelled filaments, so the law holds to
    // rounding whatever the chord count. I_enclosed is counted independently as the
    // signed crossings of the wires through the circle's disc. Per closed source kind
    // (all but the point dipole, 8 kinds) 3 random placements × 12 random circles, half
    // around a wire (up to several turns linked), half anywhere (mostly linking
    // nothing); and the point dipole, whose field is curl-free outside its centre (0
    // for every circle that keeps clear of it). Plus a straight 20 km wire with 40
    // random tilted, offset circles: there the finite length adds at most
    // (r/L)² · μ0 I, below 1e-10.
    let mut rng = Lcg(0xa3fe_0008);
    let (mut worst, mut n_link, mut n_multi, mut n_zero) = (0.0f64, 0, 0, 0);
    for kind in (0..SOURCE_KINDS).filter(|&k| k != 3) {
        for _ in 0..3 {
            let body = random_source_body(&mut rng, kind);
            let scene = one_source(&mut rng, &body);
            let c = &scene.sources[0].conductors;
            assert!(c.wires.iter().all(|w| w.is_closed()), "{body}: not closed");
            let mut rings = Vec::new();
            // The classic toroid check: the core's centre line links every turn.
            if body.contains("toroid") {
                let f = &scene.sources[0].frame;
                let major: f64 = body
                    .lines()
                    .find_map(|l| l.strip_prefix("major_radius = "))
                    .unwrap()
                    .parse()
                    .unwrap();
                rings.push(Ring {
                    centre: f.origin,
                    u: f.x,
                    v: f.y,
                    r: major,
                });
            }
            while rings.len() < 12 {
                let r = log_range(&mut rng, 5e-4, 0.02);
                let ring = if rings.len() % 2 == 0 {
                    let centre = near_wire(&mut rng, c, 1e-6, r);
                    let w = &c.wires[0];
                    let k = (0..w.segment_count())
                        .min_by(|&i, &j| {
                            let di = (w.vertices[i] - centre).norm();
                            let dj = (w.vertices[j] - centre).norm();
                            di.total_cmp(&dj)
                        })
                        .unwrap();
                    let along = (w.vertices[k + 1] - w.vertices[k]).normalize();
                    let tilt = (along + unit(&mut rng) * 0.5).normalize();
                    Ring::new(centre, &tilt, r, &mut rng)
                } else {
                    let centre = unit(&mut rng) * rng.range(0.0, 0.04);
                    let normal = unit(&mut rng);
                    Ring::new(centre, &normal, r, &mut rng)
                };
                rings.push(ring);
            }
            for ring in &rings {
                let delta = ring.clearance(c);
                if delta < (3.0 * WIRE).max(0.02 * ring.r) {
                    continue;
                }
                let (e, lk) = ampere(c, ring, delta, &body, 0.0);
                worst = worst.max(e);
                match lk.abs() {
                    0.0 => n_zero += 1,
                    1.0 => n_link += 1,
                    _ => n_multi += 1,
                }
            }
        }
    }
    // The dipole: ∮B·dl = 0 around circles whose disc may hold the centre.
    for _ in 0..12 {
        let body = random_source_body(&mut rng, 3);
        let scene = one_source(&mut rng, &body);
        let c = &scene.sources[0].conductors;
        let centre = c.dipoles[0].position + unit(&mut rng) * rng.range(0.0, 0.005);
        let normal = unit(&mut rng);
        let r = rng.range(0.002, 0.02);
        let ring = Ring::new(centre, &normal, r, &mut rng);
        let delta = ring.clearance(c);
        let (e, lk) = ampere(c, &ring, delta, &body, 0.0);
        assert_eq!(lk, 0.0);
        worst = worst.max(e);
    }
    // A 20 km straight wire: the infinite-wire Ampère law.
    let (mut worst_wire, mut wire_links) = (0.0f64, 0);
    for _ in 0..40 {
        let place = Place::random_around(&mut rng, 0.0, 0.01);
        let half = 1e4;
        let scene = parse(&format!(
            "[[source]]\nid = \"w\"\nkind = \"polyline\"\nvertices = [[0, 0, {:e}], [0, 0, {half:e}]]\n\
             {}current = {{ frequency = 50, peak = 1 }}\n",
            -half,
            place.toml()
        ));
        let c = &scene.sources[0].conductors;
        let r = log_range(&mut rng, 1e-3, 0.05);
        let off = unit(&mut rng) * rng.range(0.0, 2.0 * r);
        let tilt = (place.axis + unit(&mut rng) * rng.range(0.0, 1.5)).normalize();
        let ring = Ring::new(place.at + off, &tilt, r, &mut rng);
        let delta = ring.clearance(c);
        if delta < (3.0 * WIRE).max(0.02 * r) {
            continue;
        }
        let slack = (r + off.norm()).powi(2) / (half * half);
        let (e, lk) = ampere(c, &ring, delta, "20 km wire", slack);
        worst_wire = worst_wire.max(e);
        if lk != 0.0 {
            wire_links += 1;
        }
    }
    println!(
        "Ampère: closed circuits {} circles ({n_zero} linking nothing, {n_link} one turn, \
         {n_multi} several turns), max error {worst:.2e} of the scale; 20 km wire: {} of the \
         circles link it, max error {worst_wire:.2e}",
        n_zero + n_link + n_multi,
        wire_links
    );
    assert!(
        n_zero >= 20 && n_link >= 20 && n_multi >= 10 && wire_links >= 10,
        "too few discriminating circles: {n_zero} / {n_link} / {n_multi} / {wire_links}"
    );
}

// ---------------------------------------------------------------------------------
// 6. No NaN or infinity anywhere.
// ---------------------------------------------------------------------------------

/// Points where a careless kernel divides by zero: every vertex (up to 120 sampled),
/// segment midpoints and random points on segments, points on each segment's line
/// just and far beyond both ends, points at, inside and just outside the wire radius,
/// the element's own origin (a loop's centre), the scene origin and, for dipoles,
/// the centre and the sphere's surface.
fn singular_points(rng: &mut Lcg, scene: &Scene) -> Vec<Vec3> {
    let s = &scene.sources[0];
    let mut pts = vec![Vec3::zeros(), s.frame.origin];
    for w in &s.conductors.wires {
        let n = w.segment_count();
        let step = n.div_ceil(120).max(1);
        for k in (0..n).step_by(step).chain([n - 1]) {
            let (a, b) = (w.vertices[k], w.vertices[k + 1]);
            let e = b - a;
            let perp = {
                let u = unit(rng);
                (u - e * (e.dot(&u) / e.norm_squared())).normalize()
            };
            let mid = a + e * 0.5;
            pts.extend([a, b, mid, a + e * rng.next_f64()]);
            for t in [1e-12, 1e-6, 0.5, 3.0] {
                pts.push(a - e * t);
                pts.push(b + e * t);
            }
            for f in [0.0, 0.5, 1.0 - 1e-12, 1.0, 1.0 + 1e-12, 2.0] {
                pts.push(mid + perp * (w.wire_radius * f));
                pts.push(a + perp * (w.wire_radius * f));
            }
        }
    }
    for d in &s.conductors.dipoles {
        let m = d.moment_per_amp.normalize();
        let u = unit(rng);
        let perp = (u - m * m.dot(&u)).normalize();
        pts.push(d.position);
        for f in [0.5, 1.0 - 1e-15, 1.0, 1.0 + 1e-15] {
            pts.push(d.position + m * (d.radius * f));
            pts.push(d.position + perp * (d.radius * f));
        }
    }
    pts
}

#[test]
fn fields_are_finite_at_every_singular_point() {
    // The library's contract (FieldSource: "never NaN or infinity for finite input";
    // inside a conductor's radius the round-wire field, inside a dipole's radius the
    // uniformly magnetised sphere, Jackson 3rd ed. eq. 5.104): B, A and A's gross
    // magnitude finite at ~3.5e4 points placed exactly on wires, at vertices, on segment
    // extensions, on the wire surface and at centres, for 2 random sources of every
    // kind plus open polylines and a helix without leads, both from the kernel and
    // through `probe`.
    let mut rng = Lcg(0xf1_0009);
    let mut count = 0usize;
    let mut bodies: Vec<String> = Vec::new();
    for kind in 0..SOURCE_KINDS {
        for _ in 0..2 {
            bodies.push(random_source_body(&mut rng, kind));
        }
    }
    for _ in 0..2 {
        let pts: Vec<String> = (0..5)
            .map(|_| v3(&(unit(&mut rng) * rng.range(0.001, 0.02))))
            .collect();
        bodies.push(format!(
            "kind = \"polyline\"\nvertices = [{}]\n",
            pts.join(", ")
        ));
    }
    bodies.push(
        "kind = \"helix\"\nradius = 0.004\nlength = 0.01\nturns = 5.5\nleads = \"none\"\n".into(),
    );
    for body in &bodies {
        let scene = one_source(&mut rng, body);
        let c = &scene.sources[0].conductors;
        let pts = singular_points(&mut rng, &scene);
        for p in &pts {
            let (a, gross) = c.a_and_gross_per_amp(p);
            let b = c.b_per_amp(p);
            let a2 = c.a_per_amp(p);
            let finite = b
                .iter()
                .chain(a.iter())
                .chain(a2.iter())
                .all(|x| x.is_finite())
                && gross.is_finite();
            assert!(
                finite,
                "B {b:?}, A {a:?}, gross {gross} at {p:?} for\n{body}"
            );
            for w in &c.wires {
                let (wb, wa) = (w.b_per_amp(p), w.a_per_amp(p));
                assert!(
                    wb.iter().chain(wa.iter()).all(|x| x.is_finite()),
                    "one wire: B {wb:?}, A {wa:?} at {p:?} for\n{body}"
                );
            }
            count += 1;
        }
        for pp in probe(&scene, &Solver::for_scene(&scene), &pts).unwrap() {
            for l in &pp.lines {
                assert!(
                    l.b.iter().all(|c| c.re.is_finite() && c.im.is_finite()),
                    "probe B {:?} at {:?} for\n{body}",
                    l.b,
                    pp.position
                );
            }
        }
    }
    println!(
        "finite fields: {count} singular points over {} sources",
        bodies.len()
    );
}

/// The victim `shape` with random axes, placed so that its path passes through the
/// scene point `q`: through a random point of a random side (a corner when
/// `corner`).
fn victim_through(rng: &mut Lcg, shape: &Shape, q: &Vec3, corner: bool) -> Element {
    let local = match shape {
        Shape::Loop(r) => {
            let th = rng.range(0.0, TAU);
            Vec3::new(r * th.cos(), r * th.sin(), 0.0)
        }
        _ => {
            let path = shape.local_path();
            let k = (rng.next_f64() * path.len() as f64) as usize;
            let (a, b) = (path[k], path[(k + 1) % path.len()]);
            if corner {
                a
            } else {
                a + (b - a) * rng.range(0.05, 0.95)
            }
        }
    };
    let mut place = Place::random(rng, Vec3::zeros());
    place.at = q - place.world(&local);
    Element {
        shape: shape.clone(),
        place,
    }
}

#[test]
fn victims_touching_or_crossing_a_source_stay_finite_and_are_warned_about() {
    // At contact the thin-filament model breaks down (the flux of a filament through a
    // loop it touches is log-infinite; the library holds it finite with the round-wire
    // field inside the radius), so the result must stay finite and the scene must say
    // so ("touches or crosses", src/scene/mod.rs). 20 random sources (loop, rectangle,
    // polygon), each with up to four victims: the same shape in the same place
    // (touching all along), a random victim whose path crosses a random point of the
    // source wire, a polygon victim with a corner on the wire, and a control at least
    // 2 mm away that must not be warned about.
    let mut rng = Lcg(0xc0_000a);
    let mut misses: Vec<String> = Vec::new();
    let (mut cases, mut coincident_loop) = (0, false);
    for case in 0..20 {
        let src = Element {
            shape: Shape::random(&mut rng, 0.005, 0.03, 0.15),
            place: Place::random_around(&mut rng, 0.0, 0.01),
        };
        let current = "{ frequency = 1e4, peak = 1 }";
        let base = parse(&src.source("s", current));
        let c = &base.sources[0].conductors;
        let w = &c.wires[0];
        let k = (rng.next_f64() * w.segment_count() as f64) as usize;
        let q = w.vertices[k] + (w.vertices[k + 1] - w.vertices[k]) * rng.next_f64();
        let shape = Shape::random(&mut rng, 0.003, 0.03, 0.1);
        let crossing = victim_through(&mut rng, &shape, &q, false);
        let size = rng.range(0.003, 0.02);
        let poly = Shape::random_polygon(&mut rng, size, 0.1);
        let cornered = victim_through(&mut rng, &poly, &q, true);
        let control = loop {
            let e = Element {
                shape: Shape::random(&mut rng, 0.003, 0.02, 0.1),
                place: Place::random_around(&mut rng, 0.0, 0.05),
            };
            if path_gap(&e.path(), &src.path()) > 0.002 {
                break e;
            }
        };
        // A victim on top of a loop source costs seconds (the exact circle runs a few
        // µm from hundreds of chords), so only the first loop gets one.
        let is_loop = matches!(src.shape, Shape::Loop(_));
        let mut victims = vec![
            ("crossing", &crossing),
            ("corner", &cornered),
            ("control", &control),
        ];
        if !is_loop || !coincident_loop {
            victims.push(("same", &src));
            coincident_loop |= is_loop;
        }
        let mut t = src.source("s", current);
        for (id, v) in &victims {
            t += &v.victim(id);
        }
        let scene = parse(&t);
        for (i, (id, _)) in victims.iter().enumerate() {
            let r = couple(&scene, i);
            let finite = r.total_rms().is_some_and(f64::is_finite)
                && r.sources.iter().all(|s| {
                    s.mutual_inductance.is_finite()
                        && s.lines
                            .iter()
                            .all(|l| l.emf.re.is_finite() && l.emf.im.is_finite())
                });
            assert!(
                finite,
                "case {case}: victim {id} gives a non-finite coupling\n{t}"
            );
            let warned = scene.warnings.iter().any(|w| {
                w.contains(&format!("victim \"{id}\"")) && w.contains("touches or crosses")
            });
            if *id != "control" {
                cases += 1;
            }
            if *id == "control" {
                assert!(!warned, "case {case}: control victim warned about\n{t}");
            } else if !warned {
                misses.push(format!(
                    "case {case}: victim \"{id}\" not warned about\n{t}"
                ));
            }
        }
    }
    println!(
        "contact: 20 sources, {cases} touching or crossing victims (and 20 controls), {} \
         without the warning",
        misses.len()
    );
    assert!(
        misses.is_empty(),
        "{} contacts not warned about: {:?}; the first scene:\n{}",
        misses.len(),
        misses
            .iter()
            .map(|m| m.lines().next().unwrap_or(""))
            .collect::<Vec<_>>(),
        misses[0]
    );
}

// ---------------------------------------------------------------------------------
// 7. Passive shielding.
// ---------------------------------------------------------------------------------

/// A planar source shape parallel to a random sheet and the same shape, same in-plane
/// orientation, straight across it (translated along the normal only).
fn facing_pair(rng: &mut Lcg) -> (Element, Element, Sheet) {
    let normal = unit(rng);
    let sheet = Sheet {
        at: unit(rng) * rng.range(0.0, 0.01),
        normal,
        material: random_material(rng, false),
        thickness: log_range(rng, 1e-5, 3e-3),
    };
    let shape = Shape::random(rng, 0.004, 0.02, 0.0);
    let axis = if rng.next_f64() < 0.5 {
        normal
    } else {
        -normal
    };
    let reference = loop {
        let r = unit(rng);
        if r.cross(&normal).norm() > 0.3 {
            break r;
        }
    };
    let (h1, h2) = (rng.range(0.0015, 0.02), rng.range(0.0015, 0.02));
    let lateral = {
        let (u, v, _) = basis(&normal, &reference);
        u * rng.range(-0.01, 0.01) + v * rng.range(-0.01, 0.01)
    };
    let at = sheet.at + lateral - normal * h1;
    let a = Element {
        shape: shape.clone(),
        place: Place {
            at,
            axis,
            reference,
        },
    };
    let b = Element {
        shape,
        place: Place {
            at: at + normal * (h1 + sheet.thickness + h2),
            axis,
            reference,
        },
    };
    (a, b, sheet)
}

#[test]
fn non_magnetic_sheet_never_raises_the_coupling_of_facing_loops() {
    // A passive eddy-current sheet (μr = 1, σ > 0) between source and victim. The
    // quasi-static field beyond a flat sheet is, wavenumber by wavenumber, the free
    // field times the sheet's transmission T(k) = 4kγ / ((k+γ)² e^{γd} − (k−γ)²
    // e^{−γd}), γ² = k² + jωμ0σ (Smythe, "Static and Dynamic Electricity", ch. 11;
    // Kaden, "Wirbelströme und Schirmung in der Nachrichtentechnik"; from memory), and
    // |T| ≤ 1 for a passive sheet (the sheet only absorbs). That bounds the flux only
    // where the free coupling has no cancellation between wavenumbers: for a flat loop
    // parallel to the sheet and its copy translated straight across (same shape, same
    // in-plane orientation), the flux is ∫ |Ŝ(k)|² k e^{−kH} T(k) d²k with Ŝ the
    // Fourier transform of the loop's area, a sum of non-negative terms, so
    // |Φ_shielded| ≤ Φ_free exactly. (Tilted or laterally offset pairs mix signs and a
    // sheet can then raise |EMF|, physically: it moves the null. Same-side (reflected)
    // coupling is not bounded either.) 40 random facing pairs (loops, rectangles, flat
    // polygons; copper, aluminium, brass, stainless or custom σ; 10 µm–3 mm; 1.5–20 mm
    // from each face), each at 6 frequencies from 1 Hz to 10 MHz. Tolerance 2e-6
    // relative: both fluxes are good to the scene tolerance (1e-6), and near DC
    // |T| → 1, so the two are equal to within their errors.
    let mut rng = Lcg(0x5d_000b);
    let (mut worst, mut least_db, mut most_db, mut n) =
        (f64::NEG_INFINITY, f64::INFINITY, 0.0f64, 0);
    for case in 0..40 {
        let (a, b, sheet) = facing_pair(&mut rng);
        let scene = pair_scene(&a, &b, Some(&sheet), TOL);
        let model = Solver::for_scene(&scene)
            .pair_model(&scene, 0, &scene.victims[0])
            .unwrap_or_else(|e| panic!("{e}"));
        let free = model.flux.abs();
        for k in 0..6 {
            let f = 10f64.powf(k as f64 * 7.0 / 5.0) * rng.range(0.8, 1.25);
            let shielded = model.shielded_flux(f).norm();
            let excess = shielded / free - 1.0;
            assert!(
                excess <= 2.0 * TOL,
                "case {case}, {f} Hz: |Φ shielded| {shielded:e} > |Φ free| {free:e} \
                 (by {excess:e})\n{}",
                pair_scene_text(&a, &b, &sheet)
            );
            worst = worst.max(excess);
            let db = 20.0 * (free / shielded).log10();
            least_db = least_db.min(db);
            most_db = most_db.max(db);
            n += 1;
        }
    }
    println!(
        "passive sheet, facing loops: {n} pairs × frequencies, max |Φs|/|Φ| − 1 = \
         {worst:.2e}; shielding {least_db:.2e} .. {most_db:.1} dB"
    );
}

#[test]
fn contact_between_the_warning_samples_is_warned_about() {
    // The smallest cases of the property above that fail: a victim that crosses a
    // source wire between two of the points the contact check looks at. A 40 mm square
    // source in z = 0; (1) a 20 mm loop victim in the plane x = 0 whose circle passes
    // exactly through the source side y = −20 mm, at θ = 270° + 2.8125° (half-way
    // between two of 64 samples); (2) a 60 mm × 10 mm rectangle victim in the plane
    // x = 0 whose 60 mm bottom side runs along y in z = 0 and crosses the same source
    // side 0.47 mm from the nearest sample. Both cross the source filament (distance
    // 0), so both must carry "touches or crosses"; the couplings must stay finite.
    let th = 1.5 * PI + PI / 64.0;
    let t = format!(
        "[[source]]\nid = \"s\"\nkind = \"rectangle\"\nwidth = 0.04\nheight = 0.04\n\
         current = {{ frequency = 1e4, peak = 1 }}\n\
         [[victim]]\nid = \"ring\"\nkind = \"loop\"\nradius = 0.02\naxis = [1, 0, 0]\n\
         reference = [0, 1, 0]\nposition = [0, {:e}, {:e}]\n\
         [[victim]]\nid = \"frame\"\nkind = \"rectangle\"\nwidth = 0.06\nheight = 0.01\n\
         axis = [1, 0, 0]\nreference = [0, 1, 0]\nposition = [0, {:e}, 0.005]\n",
        -0.02 - 0.02 * th.cos(),
        -0.02 * th.sin(),
        -0.02 + 0.06 / 128.0
    );
    let scene = parse(&t);
    // The crossing points really are on the source filament.
    let c = &scene.sources[0].conductors;
    let ring_point = scene.victims[0].edges[0].point(th / TAU);
    let frame_point = scene.victims[1].edges[0].point(0.5 - 1.0 / 128.0);
    assert!(c.distance_to(&ring_point) < 1e-15 && c.distance_to(&frame_point) < 1e-15);
    for v in 0..2 {
        let r = couple(&scene, v);
        assert!(
            r.sources[0].mutual_inductance.is_finite() && r.total_rms().is_some_and(f64::is_finite)
        );
    }
    let missing: Vec<&str> = ["ring", "frame"]
        .into_iter()
        .filter(|id| {
            !scene.warnings.iter().any(|w| {
                w.contains(&format!("victim \"{id}\"")) && w.contains("touches or crosses")
            })
        })
        .collect();
    assert!(
        missing.is_empty(),
        "victims {missing:?} cross the source but get no contact warning; warnings: {:?}\n{t}",
        scene.warnings
    );
}
