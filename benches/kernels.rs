//! Kernel and whole-job timings. Run with `cargo bench`; each prints its time, and the
//! throughput ones their segment–point pairs per second.
//!
//! * `potential/2000seg` and `field/2000seg`: A and B of a 2000-segment polygon at 1000
//!   points (2e6 pairs per iteration).
//! * `sweep/1000steps-2000seg`: a 1000-step distance sweep of a 10 × 5 mm rectangular
//!   victim past a 2000-segment polygon source (the issue's target: well under 1 s).

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::hint::black_box;
use strayflux::Scene;
use strayflux::field::{FieldSource, Polyline, Vec3, b_at_points};

/// A closed, wavy 2000-segment polygon of about 20 mm radius in the xy plane.
fn wavy_polygon(n: usize) -> Vec<Vec3> {
    let mut v: Vec<Vec3> = (0..n)
        .map(|k| {
            let t = std::f64::consts::TAU * k as f64 / n as f64;
            let r = 0.02 * (1.0 + 0.3 * (5.0 * t).cos());
            Vec3::new(r * t.cos(), r * t.sin(), 0.0)
        })
        .collect();
    v.push(v[0]);
    v
}

fn grid_points(n: usize) -> Vec<Vec3> {
    (0..n)
        .map(|k| {
            let f = k as f64 / n as f64;
            Vec3::new(0.03 + 0.05 * f, 0.01 * (7.0 * f).sin(), 0.004 + 0.02 * f)
        })
        .collect()
}

fn kernels(c: &mut Criterion) {
    let wire = Polyline::new(wavy_polygon(2000), 1e-5);
    let pts = grid_points(1000);
    let mut g = c.benchmark_group("pairs");
    g.throughput(Throughput::Elements(2000 * 1000));
    g.sample_size(20);
    g.bench_function("potential/2000seg", |b| {
        b.iter(|| {
            let s: f64 = pts.iter().map(|p| wire.a_per_amp(p).x).sum();
            black_box(s)
        })
    });
    g.bench_function("field/2000seg", |b| {
        b.iter(|| black_box(b_at_points(&wire, &pts)))
    });
    g.finish();
}

fn sweep_scene() -> Scene {
    let verts: Vec<String> = wavy_polygon(2000)[..2000]
        .iter()
        .map(|p| format!("[{}, {}, {}]", p.x, p.y, p.z))
        .collect();
    let text = format!(
        r#"
[solver]
wire_radius = "0.01 mm"
[[source]]
id = "poly"
kind = "polygon"
vertices = [{}]
current = {{ peak = "1 A", frequency = "100 kHz" }}
[[victim]]
id = "v"
kind = "rectangle"
width = "10 mm"
height = "5 mm"
position = ["40 mm", "0 mm", "5 mm"]
limit = "1 uV"
[[sweep]]
id = "s"
victim = "v"
vary = "distance"
along = [1, 0, 0]
from = "1 mm"
to = "500 mm"
steps = 1000
"#,
        verts.join(", ")
    );
    Scene::parse("bench.toml", &text).expect("benchmark scene is valid")
}

fn sweep(c: &mut Criterion) {
    let scene = sweep_scene();
    let mut g = c.benchmark_group("sweep");
    g.sample_size(10);
    g.bench_function("1000steps-2000seg", |b| {
        b.iter(|| black_box(strayflux::sweep::run(&scene, &scene.sweeps[0], &|| {}).ok()))
    });
    g.finish();
}

criterion_group!(benches, kernels, sweep);
criterion_main!(benches);
