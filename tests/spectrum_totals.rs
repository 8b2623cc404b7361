//! Totals that do not depend on where a spectrum is cut: the unlisted lines of a
//! waveform's series, summed in closed form, against independent sums; refusal of an
//! ideal edge; the warning when unlisted lines matter.
//!
//! Independent sources used here:
//! * Mutual inductance of two coaxial circles: Maxwell's formula with complete elliptic
//!   integrals (Grover, "Inductance Calculations", 1946, ch. 13; tests/common).
//! * Parseval's relation for periodic signals (Oppenheim & Willsky, "Signals and
//!   Systems", 2nd ed., §3.3): the mean square of a periodic function equals the sum of
//!   |c_n|² over its Fourier series. The EMF is −M di/dt, so the rms of every line's
//!   EMF together is |M| times the rms of di/dt, which for a trapezoid is a pair of
//!   rectangular pulses of heights A/t_r and −A/t_f (written out by hand below).
//! * The trapezoidal pulse train's spectrum, 2A(τ/T)|sinc(nπτ/T)||sinc(nπt_r/T)| for
//!   equal edges: Paul, "Introduction to Electromagnetic Compatibility", 2nd ed.
//!   (2006), §3.2 (from memory; the derivation is in tests/waveforms.rs). Summed line
//!   by line, it checks the closed-form tail without Parseval.

mod cli_support;
mod common;

use cli_support::run;
use common::{maxwell_coaxial, rel};
use std::f64::consts::{PI, SQRT_2, TAU};
use strayflux::Scene;
use strayflux::coupling::Total;
use strayflux::run::Solver;
use strayflux::run::couple::{VictimReport, couple_victim};

/// Source loop radius, victim loop radius and their spacing, m.
const A: f64 = 0.01;
const B: f64 = 0.008;
const D: f64 = 0.02;

fn scene(current: &str, limit: &str) -> String {
    format!(
        "[solver]\ntolerance = 1e-9\n\
         [[source]]\nid = \"drive\"\nkind = \"loop\"\nradius = \"10 mm\"\ncurrent = {current}\n\
         [[victim]]\nid = \"pickup\"\nkind = \"loop\"\nradius = \"8 mm\"\n\
         position = [\"0 mm\", \"0 mm\", \"20 mm\"]\n{limit}"
    )
}

fn couple(current: &str) -> VictimReport {
    let text = scene(current, "");
    let s = Scene::parse("t.toml", &text).unwrap_or_else(|e| panic!("{e}\n{text}"));
    couple_victim(&s, &Solver::for_scene(&s), &s.victims[0]).expect("couples")
}

fn converged(r: &VictimReport) -> (f64, f64, f64, bool) {
    match r.total {
        Total::Converged {
            rms,
            listed,
            omitted,
            omitted_exact,
        } => (rms, listed, omitted, omitted_exact),
        Total::Diverges(ref s) => panic!("diverges ({s})"),
    }
}

fn sinc(x: f64) -> f64 {
    if x == 0.0 { 1.0 } else { x.sin() / x }
}

#[test]
fn a_trapezoid_total_is_m_times_the_rms_of_di_dt_wherever_the_series_is_cut() {
    // 2 A peak-to-peak, 100 kHz, rise 200 ns, fall 500 ns, duty 0.3: di/dt is A/t_r for
    // t_r and −A/t_f for t_f, so its mean square over T is (A²/t_r + A²/t_f)/T.
    let (a, f, tr, tf): (f64, f64, f64, f64) = (2.0, 100e3, 200e-9, 500e-9);
    let m = maxwell_coaxial(A, B, D);
    let want = m * ((a * a / tr + a * a / tf) * f).sqrt();
    let base = "waveform = \"trapezoid\", peak_to_peak = \"2 A\", frequency = \"100 kHz\", \
                rise = \"200 ns\", fall = \"500 ns\", duty = 0.3";
    for h in [
        "harmonics = 1, ",
        "harmonics = 7, ",
        "harmonics = 300, ",
        "",
    ] {
        let r = couple(&format!("{{ {h}{base} }}"));
        let (rms, listed, omitted, exact) = converged(&r);
        assert!(exact, "{h}: a lone unshielded source's tail is exact");
        assert!(rel(rms, want) < 1e-7, "{h}: total {rms} want {want}");
        assert!(listed <= rms && omitted <= rms);
    }
}

#[test]
fn the_unlisted_lines_of_a_trapezoid_match_a_line_by_line_sum_of_its_spectrum() {
    // Equal edges, duty 0.5: Paul's spectrum with τ = T/2. Lines 10.. summed to n = 2e6;
    // the lines beyond fall as 1/n² in |E_n|², so they add less than
    // (E_corner²)·Σ_{n>2e6} (n_c/n)² ≈ E_c² n_c²/2e6: below 1e-6 of the tail here.
    let (a, f, tr) = (2.0, 50e3, 400e-9);
    let m = maxwell_coaxial(A, B, D);
    let r = couple(
        "{ waveform = \"trapezoid\", peak_to_peak = \"2 A\", frequency = \"50 kHz\", \
         rise = \"400 ns\", harmonics = 5 }",
    );
    let (_, _, omitted, _) = converged(&r);
    // Five non-zero lines are odd orders 1..9; the tail starts at n = 11.
    let t = 1.0 / f;
    let mut tail2 = 0.0;
    for n in (11..2_000_001u64).step_by(2) {
        let nf = n as f64;
        let i_n = 2.0 * a * 0.5 * sinc(nf * PI * 0.5).abs() * sinc(nf * PI * tr / t).abs();
        let e_rms = TAU * nf * f * m * i_n / SQRT_2;
        tail2 += e_rms * e_rms;
    }
    assert!(
        rel(omitted, tail2.sqrt()) < 1e-5,
        "closed form {omitted} vs line sum {}",
        tail2.sqrt()
    );
}

#[test]
fn a_sawtooth_with_a_flyback_converges_to_its_closed_form() {
    // 3 A peak (6 A swing), 15.625 kHz, 12 µs flyback: di/dt is 6/(T − t_f) for T − t_f
    // and −6/t_f for t_f.
    let (swing, f, tf): (f64, f64, f64) = (6.0, 15.625e3, 12e-6);
    let t = 1.0 / f;
    let m = maxwell_coaxial(A, B, D);
    let ms = (swing * swing / (t - tf) + swing * swing / tf) / t;
    let r = couple(
        "{ waveform = \"sawtooth\", peak = \"3 A\", frequency = \"15.625 kHz\", \
         fall = \"12 us\", harmonics = 9 }",
    );
    let (rms, ..) = converged(&r);
    assert!(rel(rms, m * ms.sqrt()) < 1e-7, "{rms} vs {}", m * ms.sqrt());
}

#[test]
fn a_square_wave_with_edges_is_the_symmetric_trapezoid() {
    // rise = fall = 100 ns at 200 kHz, 1 A peak (2 A swing): mean square 2·(2²/100 ns)/T.
    let m = maxwell_coaxial(A, B, D);
    let want = m * (2.0 * 4.0 / 100e-9 * 200e3_f64).sqrt();
    let r = couple(
        "{ waveform = \"square\", peak = \"1 A\", frequency = \"200 kHz\", rise = \"100 ns\" }",
    );
    assert!(rel(converged(&r).0, want) < 1e-7);
}

fn write_scene(name: &str, current: &str, extra: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("strayflux-totals-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, scene(current, "limit = \"1 mV\"\n") + extra).unwrap();
    p
}

#[test]
fn an_ideal_edge_gets_no_verdict_and_sweeps_refuse_it() {
    let p = write_scene(
        "ideal.toml",
        "{ waveform = \"square\", peak = \"1 A\", frequency = \"10 kHz\", harmonics = 9 }",
        "[[sweep]]\nid = \"away\"\nvictim = \"pickup\"\nvary = \"distance\"\n\
         along = [0, 0, 1]\nscale = \"linear\"\nfrom = \"0 mm\"\nto = \"50 mm\"\nsteps = 5\n",
    );
    let path = p.to_str().unwrap();
    let out = run(&["couple", path]);
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8_lossy(&out.stdout);
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(text.contains("does not converge"), "{text}");
    assert!(text.contains("no verdict"), "{text}");
    assert!(
        err.contains("rise"),
        "the warning asks for the edge time: {err}"
    );
    let json = cli_support::stdout_json(&run(&["couple", path, "--json"]));
    let v = &json["victims"][0];
    assert!(v["total_emf_v_rms"].is_null() && v["pass"].is_null() && v["margin_db"].is_null());
    assert_eq!(v["total_converges"], false);
    // A gate cannot pass a victim without a verdict.
    assert_eq!(run(&["couple", path, "--strict"]).status.code(), Some(3));
    let sweep = run(&["sweep", path, "--out", "/nonexistent-dir-never-written"]);
    assert_eq!(sweep.status.code(), Some(2));
    let err = String::from_utf8_lossy(&sweep.stderr);
    assert!(
        err.contains("ideal.toml:") && err.contains("does not converge"),
        "{err}"
    );
}

#[test]
fn unlisted_lines_that_matter_are_warned_with_their_share() {
    // A 1 A, 20 kHz trapezoid with 50 ns edges listed to 3 lines: most of the EMF is in
    // the unlisted lines (the edges' corner is near n = 1/(π·0.001) ≈ 318).
    let p = write_scene(
        "cut.toml",
        "{ waveform = \"trapezoid\", peak_to_peak = \"1 A\", frequency = \"20 kHz\", \
         rise = \"50 ns\", harmonics = 3 }",
        "",
    );
    let path = p.to_str().unwrap();
    let out = run(&["couple", path, "--json"]);
    let json = cli_support::stdout_json(&out);
    let v = &json["victims"][0];
    let (total, listed) = (
        v["total_emf_v_rms"].as_f64().unwrap(),
        v["listed_emf_v_rms"].as_f64().unwrap(),
    );
    let share = 20.0 * (total / listed).log10();
    assert!(
        share > 1.0,
        "the case must leave out more than 1 dB: {share}"
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains(&format!("({share:.1} dB)")),
        "warning names the share {share:.1} dB: {err}"
    );
    // And a case that lists enough lines stays quiet.
    let quiet = write_scene(
        "enough.toml",
        "{ waveform = \"triangle\", peak = \"1 A\", frequency = \"20 kHz\", harmonics = 50 }",
        "",
    );
    let out = run(&["couple", quiet.to_str().unwrap()]);
    assert!(!String::from_utf8_lossy(&out.stderr).contains("lines above them"));
}

#[test]
fn calibrate_scales_the_whole_waveform_not_only_its_listed_lines() {
    // A triangle of peak Î listing 3 lines, calibrated to 2 µT rms on the axis of a
    // 10 mm loop, 30 mm up. On the axis B = μ0 a² / (2 (a² + z²)^{3/2}) per ampere
    // (Biot–Savart, any electromagnetism text, e.g. Griffiths §5.2 example 5.6), and the
    // triangle's rms is Î/√3 (from memory; it is the rms of a linear ramp). Its
    // fundamental is 8Î/π² (Kreyszig §11.1, from memory), which gives Î back.
    let text = "[[source]]\nid = \"drive\"\nkind = \"loop\"\nradius = \"10 mm\"\n\
                current = { waveform = \"triangle\", frequency = \"20 kHz\", harmonics = 3 }\n\
                calibrate = { at = [\"0 mm\", \"0 mm\", \"30 mm\"], field = \"2 uT\" }\n";
    let s = Scene::parse("c.toml", text).unwrap_or_else(|e| panic!("{e}"));
    let mu0 = 4e-7 * PI;
    let (a, z) = (0.01_f64, 0.03_f64);
    let b_per_amp = mu0 * a * a / (2.0 * (a * a + z * z).powf(1.5));
    let peak = s.sources[0].lines[0].current.norm() * PI * PI / 8.0;
    let b_rms = b_per_amp * peak / 3f64.sqrt();
    assert!(rel(b_rms, 2e-6) < 1e-6, "calibrated to {b_rms} T rms");
}
