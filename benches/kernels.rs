//! Kernel and whole-job timings. Run with `cargo bench`; each prints its time, and the
//! throughput ones their segment–point pairs per second.
//!
//! * `potential/2000seg` and `field/2000seg`: A and B of a 2000-segment polygon at 1000
//!   points (2e6 pairs per iteration).
//! * `bound/sqrt+div`: 2e6 square roots and divisions, four-wide on every thread: the
//!   machine's own bound for the field kernel (one of each per pair), in the same units;
//!   `bound/sqrt+div-avx2` the same in 256-bit registers, the width the field kernel
//!   uses on a CPU with AVX2; `bound/sqrt+div-avx512` in 512-bit registers, and
//!   `bound/sqrt-avx512` the square roots alone: the bound of the AVX-512 kernels,
//!   which take their quotients by Newton steps on the multiply units.
//! * `sweep/1000steps-2000seg`: a 1000-step distance sweep of a 10 × 5 mm rectangular
//!   victim past a 2000-segment polygon source, the far-field moments built afresh in
//!   every run (target 0.1 s, see docs/performance.md); `-exact` the same with direct
//!   sums only.
//! * `shielded/couple-demo`: a shielded `couple` of one victim (see [`shielded`]).

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::hint::black_box;
use strayflux::Scene;
use strayflux::field::{FieldSource, Polyline, Vec3, b_at_points};
use strayflux::model::SolverOptions;
use strayflux::run::Solver;

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
    // The physical bound of the field kernel: one square root and one division per
    // segment–point pair, four-wide, on every thread, with nothing else to do.
    let xs: Vec<f64> = (0..2_000_000)
        .map(|k| 1.0 + (k % 1000) as f64 * 1e-3)
        .collect();
    g.bench_function("bound/sqrt+div", |b| b.iter(|| black_box(sqrt_div(&xs))));
    // The same with 256-bit vectors, the width the field kernel runs at when the CPU
    // has AVX2.
    #[cfg(target_arch = "x86_64")]
    if std::is_x86_feature_detected!("avx2") {
        g.bench_function("bound/sqrt+div-avx2", |b| {
            b.iter(|| black_box(sqrt_div_avx2(&xs)))
        });
    }
    // With AVX-512 the kernels take their quotients by Newton steps on the multiply
    // units and leave the divider to the square roots: their bound is then one
    // hardware square root per pair (and the sqrt+div bounds above can be passed).
    #[cfg(target_arch = "x86_64")]
    if std::is_x86_feature_detected!("avx512f") {
        g.bench_function("bound/sqrt+div-avx512", |b| {
            b.iter(|| black_box(avx512_bound(&xs, true)))
        });
        g.bench_function("bound/sqrt-avx512", |b| {
            b.iter(|| black_box(avx512_bound(&xs, false)))
        });
    }
    g.finish();
}

/// Σ (x + 1)/√x (with `divide`) or Σ (x + √x) over `xs` in 512-bit registers
/// (AVX-512F), in parallel chunks: one square root, and with `divide` one division, per
/// element.
#[cfg(target_arch = "x86_64")]
fn avx512_bound(xs: &[f64], divide: bool) -> f64 {
    use rayon::prelude::*;
    #[target_feature(enable = "avx512f")]
    fn chunk(c: &[f64], divide: bool) -> f64 {
        use std::arch::x86_64::*;
        let one = _mm512_set1_pd(1.0);
        let mut acc = [_mm512_setzero_pd(); 4];
        for q in c.chunks_exact(32) {
            for (j, a) in acc.iter_mut().enumerate() {
                let v: [f64; 8] = std::array::from_fn(|i| q[8 * j + i]);
                // SAFETY: same size, any bits are valid f64s.
                let x = unsafe { std::mem::transmute::<[f64; 8], __m512d>(v) };
                let r = _mm512_sqrt_pd(x);
                let term = if divide {
                    _mm512_div_pd(_mm512_add_pd(x, one), r)
                } else {
                    _mm512_add_pd(x, r)
                };
                *a = _mm512_add_pd(*a, term);
            }
        }
        let s = _mm512_add_pd(_mm512_add_pd(acc[0], acc[1]), _mm512_add_pd(acc[2], acc[3]));
        _mm512_reduce_add_pd(s)
    }
    // SAFETY: called only after AVX-512F was detected.
    xs.par_chunks(1 << 14)
        .map(|c| unsafe { chunk(c, divide) })
        .sum()
}

/// Σ (x + 1)/√x over `xs` with four-wide SIMD, in parallel chunks: one square root and
/// one division per element.
fn sqrt_div(xs: &[f64]) -> f64 {
    use rayon::prelude::*;
    use wide::f64x4;
    xs.par_chunks(1 << 14)
        .map(|c| {
            let mut acc = [f64x4::ZERO; 4];
            let one = f64x4::splat(1.0);
            for q in c.chunks_exact(16) {
                for (j, a) in acc.iter_mut().enumerate() {
                    let x = f64x4::from([q[4 * j], q[4 * j + 1], q[4 * j + 2], q[4 * j + 3]]);
                    *a += (x + one) / x.sqrt();
                }
            }
            (acc[0] + acc[1] + acc[2] + acc[3]).reduce_add()
        })
        .sum()
}

/// [`sqrt_div`] in 256-bit registers (AVX2), in parallel chunks.
#[cfg(target_arch = "x86_64")]
fn sqrt_div_avx2(xs: &[f64]) -> f64 {
    use rayon::prelude::*;
    #[target_feature(enable = "avx2")]
    unsafe fn chunk(c: &[f64]) -> f64 {
        use std::arch::x86_64::*;
        let one = _mm256_set1_pd(1.0);
        let mut acc = [_mm256_setzero_pd(); 4];
        for q in c.chunks_exact(16) {
            for (j, a) in acc.iter_mut().enumerate() {
                let x = _mm256_setr_pd(q[4 * j], q[4 * j + 1], q[4 * j + 2], q[4 * j + 3]);
                *a = _mm256_add_pd(*a, _mm256_div_pd(_mm256_add_pd(x, one), _mm256_sqrt_pd(x)));
            }
        }
        let s = _mm256_add_pd(_mm256_add_pd(acc[0], acc[1]), _mm256_add_pd(acc[2], acc[3]));
        // SAFETY: same size, any bits are valid f64s.
        let v = unsafe { std::mem::transmute::<__m256d, [f64; 4]>(s) };
        v.iter().sum()
    }
    // SAFETY: called only after AVX2 was detected.
    xs.par_chunks(1 << 14).map(|c| unsafe { chunk(c) }).sum()
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
    let mut g = c.benchmark_group("sweep");
    g.sample_size(10);
    // A fresh scene per iteration: the source's far-field moments, which a sweep builds
    // on first use and keeps, are then paid for in every timed run, as in one command.
    g.bench_function("1000steps-2000seg", |b| {
        b.iter_batched(
            sweep_scene,
            |scene| {
                let solver = Solver::for_scene(&scene);
                black_box(
                    strayflux::run::sweep::run(&scene, &solver, &scene.sweeps[0], &|| {}).ok(),
                )
            },
            criterion::BatchSize::LargeInput,
        )
    });
    // The same with `--exact` (direct sums at every step).
    g.bench_function("1000steps-2000seg-exact", |b| {
        b.iter_batched(
            sweep_scene,
            |scene| {
                let options = SolverOptions::for_scene(&scene).exact_if(true);
                let solver = Solver::new(&scene, options);
                black_box(
                    strayflux::run::sweep::run(&scene, &solver, &scene.sweeps[0], &|| {}).ok(),
                )
            },
            criterion::BatchSize::LargeInput,
        )
    });
    g.finish();
}

/// `shielded/couple-demo`: `couple` of the demo scene `scenes/shield-options.toml` (a
/// 4400-segment helix, a 20 × 8 mm victim, 1 mm aluminium between; target: under a
/// second, measurements in docs/performance.md), and the same at the default tolerance
/// 1e-6.
fn shielded(c: &mut Criterion) {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/scenes/shield-options.toml");
    let text = std::fs::read_to_string(path).expect("demo scene");
    let scene = Scene::parse(path, &text).expect("demo scene is valid");
    let fine = Scene::parse(path, &text.replace("tolerance = 1e-5", "tolerance = 1e-6"))
        .expect("demo scene is valid");
    let (solver, fine_solver) = (Solver::for_scene(&scene), Solver::for_scene(&fine));
    let mut g = c.benchmark_group("shielded");
    g.sample_size(10);
    g.bench_function("couple-demo", |b| {
        b.iter(|| {
            black_box(
                strayflux::run::couple::couple_victim(&scene, &solver, &scene.victims[0]).ok(),
            )
        })
    });
    g.bench_function("couple-demo-tol1e-6", |b| {
        b.iter(|| {
            black_box(
                strayflux::run::couple::couple_victim(&fine, &fine_solver, &fine.victims[0]).ok(),
            )
        })
    });
    g.finish();
}

criterion_group!(benches, kernels, sweep, shielded);
criterion_main!(benches);
