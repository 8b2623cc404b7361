//! Non-sine drive currents through the scene reader: Fourier amplitudes and phases
//! against published series, Parseval against the exact rms, the time-domain shape
//! rebuilt from the lines, the line-count rules, and located errors for bad input.
//!
//! Every expected value here comes from a published series written out in the test,
//! never from strayflux itself. Harmonic n of a waveform of peak Î (zero mean):
//! * square (odd n) 4Î/(nπ), triangle (odd n) 8Î/(n²π²), sawtooth 2Î/(nπ): Kreyszig,
//!   "Advanced Engineering Mathematics", 10th ed., §11.1–11.2 (the rectangular wave,
//!   the |x| wave and f(x) = x on (−π, π)), rescaled to peak Î; from memory.
//! * trapezoidal pulse train of height A, width τ between the 50 % points, equal rise
//!   and fall t_r: 2A(τ/T)|sinc(nπτ/T)| |sinc(nπt_r/T)|, sinc x = sin x / x: Paul,
//!   "Introduction to Electromagnetic Compatibility", 2nd ed. (2006), §3.2, from
//!   memory. Derivation that fixes the 50 %-point convention: such a trapezoid is the
//!   rectangular pulse of width τ (edges at the 50 % points) convolved with a unit-area
//!   box of width t_r, so its lines are the pulse's times the box's transform
//!   sinc(πnt_r/T). At τ = T/2 and A = 2Î this is 4Î/(nπ)·|sinc(nπt_r/T)| for odd n.

use num_complex::Complex64;
use std::f64::consts::{PI, TAU};
use strayflux::spectrum::Line;
use strayflux::{InputError, Scene};

const F0: f64 = 100e3;

fn scene_text(current: &str, solver: &str) -> String {
    format!(
        "{solver}\n[[source]]\nid = \"drive\"\nkind = \"loop\"\nradius = \"5 mm\"\ncurrent = {current}\n"
    )
}

fn parse(current: &str, solver: &str) -> Scene {
    let text = scene_text(current, solver);
    Scene::parse("w.toml", &text).unwrap_or_else(|e| panic!("{e}\n{text}"))
}

fn lines(current: &str) -> Vec<Line> {
    parse(current, "").sources[0].lines.clone()
}

/// Harmonic order of a line at fundamental `f0`.
fn order(l: &Line, f0: f64) -> u64 {
    let n = (l.frequency / f0).round();
    assert!((l.frequency - n * f0).abs() <= 1e-9 * l.frequency);
    n as u64
}

fn sinc(x: f64) -> f64 {
    if x == 0.0 { 1.0 } else { x.sin() / x }
}

/// Σ |I_n|²/2 over the lines: the mean square they carry (Parseval).
fn mean_square(lines: &[Line]) -> f64 {
    lines.iter().map(|l| l.current.norm_sqr() / 2.0).sum()
}

/// i(t) = Re Σ I_n e^{jω_n t} (the crate's phasor convention).
fn rebuild(lines: &[Line], t: f64) -> f64 {
    lines
        .iter()
        .map(|l| (l.current * Complex64::from_polar(1.0, TAU * l.frequency * t)).re)
        .sum()
}

/// Checks every line's magnitude against `want(n)` and that the orders kept are exactly
/// the first `count` orders whose published amplitude is non-zero.
fn check_amplitudes(lines: &[Line], count: usize, want: impl Fn(u64) -> f64) {
    let expected: Vec<u64> = (1..).filter(|&n| want(n) > 1e-9).take(count).collect();
    let got: Vec<u64> = lines.iter().map(|l| order(l, F0)).collect();
    assert_eq!(got, expected);
    for l in lines {
        let n = order(l, F0);
        let rel = (l.current.norm() - want(n)).abs() / want(n);
        assert!(
            rel < 1e-12,
            "n={n}: {} vs {} ({rel:e})",
            l.current.norm(),
            want(n)
        );
    }
}

#[test]
fn square_lines_are_4_peak_over_n_pi() {
    let l =
        lines(r#"{ waveform = "square", peak = "2 A", frequency = "100 kHz", harmonics = 20 }"#);
    let odd = |n: u64| n % 2 == 1;
    check_amplitudes(&l, 20, |n| {
        if odd(n) {
            4.0 * 2.0 / (n as f64 * PI)
        } else {
            0.0
        }
    });
    // At phase 0 the square is the even one: (4Î/π)(cos ωt − cos 3ωt/3 + cos 5ωt/5 − ...),
    // the same series shifted by a quarter period (Kreyszig, as above).
    for x in &l {
        let sign = if order(x, F0) % 4 == 1 { 1.0 } else { -1.0 };
        assert!(
            (x.current - sign * x.current.norm()).norm() < 1e-12,
            "{x:?}"
        );
    }
}

#[test]
fn triangle_scene_has_15_lines_at_odd_multiples() {
    let l = lines(
        r#"{ waveform = "triangle", peak = "1.5 A", frequency = "100 kHz", harmonics = 15 }"#,
    );
    assert_eq!(l.len(), 15);
    for (k, x) in l.iter().enumerate() {
        let n = (2 * k + 1) as f64;
        assert!((x.frequency - n * 100e3).abs() < 1e-9 * x.frequency);
        // 8Î/(n²π²), all in phase at the peak t = 0 (Kreyszig's |x| series; as above).
        let want = 8.0 * 1.5 / (n * n * PI * PI);
        assert!(
            (x.current - want).norm() < 1e-12 * want,
            "n={n}: {}",
            x.current
        );
    }
}

#[test]
fn sawtooth_lines_are_2_peak_over_n_pi() {
    let l = lines(
        r#"{ waveform = "sawtooth", peak = "0.5 A", frequency = "100 kHz", harmonics = 12 }"#,
    );
    check_amplitudes(&l, 12, |n| 2.0 * 0.5 / (n as f64 * PI));
}

#[test]
fn symmetric_trapezoid_is_the_square_line_times_sinc() {
    // t_r = 0.35 µs of a 10 µs period: sinc zeros fall on no integer order.
    let tr = 0.035;
    let l = lines(
        r#"{ waveform = "trapezoid", rise = "0.35 us", peak = "1 A", frequency = "100 kHz", harmonics = 40 }"#,
    );
    check_amplitudes(&l, 40, |n| {
        let nf = n as f64;
        if n % 2 == 1 {
            4.0 / (nf * PI) * sinc(nf * PI * tr).abs()
        } else {
            0.0
        }
    });
}

#[test]
fn trapezoid_pulse_train_follows_paul() {
    // Height A = 3 A (peak_to_peak), τ/T = 0.2, t_r = t_f = 0.03 T: lines at multiples
    // of 5 vanish (sinc(nπ·0.2) = 0) and are skipped.
    let (a, d, tr) = (3.0, 0.2, 0.03);
    let l = lines(
        r#"{ waveform = "trapezoid", rise = "0.3 us", duty = 0.2, peak_to_peak = "3 A", frequency = "100 kHz", harmonics = 30 }"#,
    );
    check_amplitudes(&l, 30, |n| {
        let nf = n as f64;
        2.0 * a * d * (sinc(nf * PI * d) * sinc(nf * PI * tr)).abs()
    });
}

#[test]
fn a_trapezoid_whose_edges_fill_the_period_is_the_triangle() {
    // rise = fall = T/2 leaves no flat part: the triangle's 8Î/(n²π²) (Kreyszig, as above).
    let l = lines(
        r#"{ waveform = "trapezoid", rise = "5 us", peak = "1 A", frequency = "100 kHz", harmonics = 10 }"#,
    );
    check_amplitudes(&l, 10, |n| {
        let nf = n as f64;
        if n % 2 == 1 {
            8.0 / (nf * nf * PI * PI)
        } else {
            0.0
        }
    });
}

/// Σ_{odd n > m} n^−4, summed to 2·10⁶ plus the Euler–Maclaurin remainder 1/(6M³)
/// (odd terms only: half of ∫ x^−4 dx beyond M = 1/(3M³), over two).
fn odd_tail_4(m: u64) -> f64 {
    let top = 2_000_001_u64;
    let sum: f64 = (m + 1..=top)
        .filter(|n| n % 2 == 1)
        .map(|n| (n as f64).powi(-4))
        .sum();
    sum + 1.0 / (6.0 * (top as f64).powi(3))
}

#[test]
fn triangle_parseval_truncation_equals_the_published_tail() {
    // rms² = Î²/3 for a triangle (Parseval on the series above with Σ_{odd} n^−4 = π⁴/96,
    // Abramowitz & Stegun 23.2.20); so rms = 1 A means Î = √3 A. The missing mean
    // square after N lines is the tail Σ_{odd n > 2N−1} (8Î/(n²π²))²/2.
    let peak2 = 3.0;
    let mut previous = f64::INFINITY;
    for n_lines in [1_u64, 3, 8, 40] {
        let current = format!(
            r#"{{ waveform = "triangle", rms = "1 A", frequency = "100 kHz", harmonics = {n_lines} }}"#
        );
        let missing = 1.0 - mean_square(&lines(&current));
        let tail = 32.0 * peak2 / PI.powi(4) * odd_tail_4(2 * n_lines - 1);
        assert!(
            (missing - tail).abs() < 1e-12,
            "N={n_lines}: {missing:e} vs {tail:e}"
        );
        assert!(missing < previous && missing > 0.0);
        previous = missing;
    }
}

#[test]
fn square_parseval_truncation_equals_the_published_tail() {
    // A square's rms is its peak. Σ_{odd} n^−2 = π²/8 (Abramowitz & Stegun 23.2.20), so
    // after the odd lines up to m the missing mean square is Î²(1 − (8/π²) Σ_{odd ≤ m} n^−2).
    for n_lines in [1_u64, 10, 200] {
        let current = format!(
            r#"{{ waveform = "square", rms = "1 A", frequency = "100 kHz", harmonics = {n_lines} }}"#
        );
        let missing = 1.0 - mean_square(&lines(&current));
        let kept: f64 = (0..n_lines).map(|k| ((2 * k + 1) as f64).powi(-2)).sum();
        let tail = 1.0 - 8.0 / (PI * PI) * kept;
        assert!(
            (missing - tail).abs() < 1e-12,
            "N={n_lines}: {missing:e} vs {tail:e}"
        );
    }
}

#[test]
fn asymmetric_trapezoid_lines_carry_its_exact_rms() {
    // Parseval's theorem: with unequal edges and duty ≠ 0.5 no published series is used;
    // the lines (falling as 1/n² past the corners) must carry the whole mean square the
    // reader set from the exact rms. Past the corners each line is below
    // (T/t_r + T/t_f)/(π²n²) per unit height, so the tail beyond 20 000 lines is of
    // order 1e-12 of the mean square.
    let l = lines(
        r#"{ waveform = "trapezoid", rise = "0.5 us", fall = "1.2 us", duty = 0.3, rms = "1 A", frequency = "100 kHz", harmonics = 20000 }"#,
    );
    let missing = 1.0 - mean_square(&l);
    assert!(missing.abs() < 1e-9, "{missing:e}");
}

#[test]
fn phase_sets_the_fundamental_and_shifts_the_harmonics_with_it() {
    let shapes = [
        r#"waveform = "square""#,
        r#"waveform = "triangle""#,
        r#"waveform = "sawtooth""#,
        r#"waveform = "trapezoid", rise = "0.4 us", fall = "1.1 us", duty = 0.35"#,
    ];
    for shape in shapes {
        let at = |phase: &str| {
            lines(&format!(
                r#"{{ {shape}, peak = "1 A", frequency = "100 kHz", harmonics = 9, phase = "{phase}" }}"#
            ))
        };
        let (zero, shifted) = (at("0 deg"), at("-130 deg"));
        let phi = -130f64.to_radians();
        assert!((shifted[0].current.arg() - phi).abs() < 1e-12, "{shape}");
        assert!(zero[0].current.arg().abs() < 1e-12, "{shape}");
        // A time shift of φ/ω multiplies line n by e^{jnφ}.
        for (a, b) in zero.iter().zip(&shifted) {
            let n = order(a, F0) as f64;
            let want = a.current * Complex64::from_polar(1.0, n * phi);
            assert!((b.current - want).norm() < 1e-12, "{shape} n={n}");
        }
    }
}

#[test]
fn square_rebuilt_from_its_lines_has_its_two_levels() {
    // Phase 0: +Î on (−T/4, T/4), −Î on (T/4, 3T/4). At T/8 from an edge the partial
    // sum over odd orders to 1999 is within ~1e-3 Î (Gibbs ripple decays as 1/(n d)).
    let l =
        lines(r#"{ waveform = "square", peak = "2 A", frequency = "100 kHz", harmonics = 1000 }"#);
    let period = 1.0 / F0;
    for (frac, level) in [
        (0.0, 2.0),
        (0.125, 2.0),
        (-0.125, 2.0),
        (0.375, -2.0),
        (0.5, -2.0),
    ] {
        let x = rebuild(&l, frac * period);
        assert!((x - level).abs() < 5e-3, "t = {frac} T: {x}");
    }
}

#[test]
fn triangle_rebuilt_at_its_peak_misses_exactly_the_tail() {
    // At t = 0 every line is at its crest, so the partial sum is Î minus the tail
    // Σ_{odd n > m} 8Î/(n²π²), with Σ_{odd} n^−2 = π²/8 (Abramowitz & Stegun 23.2.20).
    let l =
        lines(r#"{ waveform = "triangle", peak = "1 A", frequency = "100 kHz", harmonics = 50 }"#);
    let kept: f64 = (0..50).map(|k| ((2 * k + 1) as f64).powi(-2)).sum();
    let tail = 1.0 - 8.0 / (PI * PI) * kept;
    assert!((rebuild(&l, 0.0) - (1.0 - tail)).abs() < 1e-12);
    assert!((rebuild(&l, 0.5 / F0) + (1.0 - tail)).abs() < 1e-12);
}

#[test]
fn sawtooth_rebuilt_follows_its_ramp() {
    // Kreyszig's x on (−π, π) has fundamental +sin: at phase 0 (fundamental cos) the
    // ramp is i(t) = Î·(ωt + π/2)/π for ωt + π/2 in (−π, π); away from the drop at
    // ωt = π/2 the partial sum converges as 1/n.
    let l = lines(
        r#"{ waveform = "sawtooth", peak = "1 A", frequency = "100 kHz", harmonics = 4000 }"#,
    );
    for wt in [-2.5, -1.0, -PI / 2.0, 0.0, 1.0] {
        let want = (wt + PI / 2.0) / PI;
        let x = rebuild(&l, wt / (TAU * F0));
        assert!((x - want).abs() < 2e-3, "ωt = {wt}: {x} vs {want}");
    }
}

#[test]
fn trapezoid_rebuilt_has_its_levels_and_50_percent_points() {
    // Height A = 1, duty D = 0.3, equal edges 0.05 T: centred on the high level at
    // phase 0, the zero-mean levels are 1 − D and −D, and the 50 % points (±DT/2) sit
    // at 0.5 − D. A continuous shape: the partial sum converges uniformly.
    let l = lines(
        r#"{ waveform = "trapezoid", rise = "0.5 us", duty = 0.3, peak_to_peak = "1 A", frequency = "100 kHz", harmonics = 3000 }"#,
    );
    let period = 1.0 / F0;
    for (frac, want) in [
        (0.0, 0.7),
        (0.1, 0.7),
        (0.15, 0.2),
        (-0.15, 0.2),
        (0.5, -0.3),
        (0.3, -0.3),
    ] {
        let x = rebuild(&l, frac * period);
        assert!((x - want).abs() < 1e-5, "t = {frac} T: {x} vs {want}");
    }
}

#[test]
fn default_rule_keeps_lines_down_to_the_tolerance() {
    // Triangle lines 8Î/(n²π²) relative to the fundamental are 1/n², ≥ 1e-4 for odd
    // n ≤ 100: 50 lines, no warning.
    let s = parse(
        r#"{ waveform = "triangle", peak = "1 A", frequency = "100 kHz" }"#,
        "[solver]\ntolerance = 1e-4",
    );
    let l = &s.sources[0].lines;
    assert_eq!(l.len(), 50);
    assert_eq!(order(l.last().unwrap(), F0), 99);
    assert!(s.warnings.is_empty(), "{:?}", s.warnings);
}

#[test]
fn default_rule_on_a_trapezoid_stops_where_the_series_falls_below_tolerance() {
    // The symmetric trapezoid's published lines 4/(nπ)|sinc(nπ t_r/T)| (Paul, as above):
    // every one kept is ≥ tol × the fundamental, every non-zero one left out is below.
    let (tol, tr) = (1e-3, 0.1);
    let s = parse(
        r#"{ waveform = "trapezoid", rise = "1 us", peak = "1 A", frequency = "100 kHz" }"#,
        "[solver]\ntolerance = 1e-3",
    );
    let published = |n: u64| {
        let nf = n as f64;
        if n % 2 == 1 {
            4.0 / (nf * PI) * sinc(nf * PI * tr).abs()
        } else {
            0.0
        }
    };
    let largest = published(1);
    let kept: Vec<u64> = s.sources[0].lines.iter().map(|l| order(l, F0)).collect();
    for n in 1..100_000 {
        let above = published(n) >= tol * largest;
        assert_eq!(
            kept.contains(&n),
            above,
            "n = {n}: {}",
            published(n) / largest
        );
    }
    assert!(s.warnings.is_empty(), "{:?}", s.warnings);
}

#[test]
fn default_rule_caps_an_ideal_square_wave_with_a_warning() {
    // Square lines fall only as 1/n: at tolerance 1e-6 they would run to n ≈ 10⁶. The
    // EMF of such lines does not fall at all, so the warning asks for the edge time.
    let s = parse(
        r#"{ waveform = "square", peak = "1 A", frequency = "100 kHz" }"#,
        "",
    );
    assert_eq!(s.sources[0].lines.len(), 1000);
    assert_eq!(s.warnings.len(), 1, "{:?}", s.warnings);
    let w = &s.warnings[0];
    for needle in [
        "\"drive\"",
        "w.toml:",
        "ideal",
        "`rise`",
        "does not converge",
    ] {
        assert!(w.contains(needle), "{needle} missing from: {w}");
    }
}

/// Where `needle` first starts in `text`, one-based line and column (characters).
fn position(text: &str, needle: &str) -> (usize, usize) {
    let at = text.find(needle).expect("needle in text");
    let line = text[..at].matches('\n').count() + 1;
    let start = text[..at].rfind('\n').map_or(0, |i| i + 1);
    (line, text[start..at].chars().count() + 1)
}

fn error(current: &str) -> (String, InputError) {
    let text = scene_text(current, "");
    let e = Scene::parse("w.toml", &text).expect_err("bad input is refused");
    (text, e)
}

#[test]
fn bad_waveform_inputs_give_located_errors() {
    let cases = [
        // (current, key expected, text the error points at, words in the reason)
        (
            r#"{ waveform = "trapezoid", rise = "-5 ns", peak = "1 A", frequency = "1 MHz" }"#,
            "rise",
            r#""-5 ns""#,
            "negative",
        ),
        (
            r#"{ waveform = "trapezoid", rise = "0.6 us", fall = "0.5 us", peak = "1 A", frequency = "1 MHz" }"#,
            "fall",
            "fall =",
            "longer than the period",
        ),
        (
            r#"{ waveform = "trapezoid", rise = "50 ns", duty = 1.2, peak = "1 A", frequency = "1 MHz" }"#,
            "duty",
            "1.2",
            "between 0 and 1",
        ),
        (
            r#"{ waveform = "trapezoid", rise = "200 ns", duty = 0.1, peak = "1 A", frequency = "1 MHz" }"#,
            "duty",
            "duty =",
            "do not fit",
        ),
        (
            r#"{ waveform = "square", rise = "50 ns", duty = 0.3, peak = "1 A", frequency = "1 MHz" }"#,
            "duty",
            "0.3",
            "duty is 0.5",
        ),
        (
            r#"{ waveform = "sawtooth", rise = "50 ns", peak = "1 A", frequency = "1 MHz" }"#,
            "rise",
            "rise =",
            "not a key of a sawtooth current",
        ),
        (
            r#"{ waveform = "triangle", peak = "1 A", frequency = "0 Hz" }"#,
            "frequency",
            r#""0 Hz""#,
            "greater than zero",
        ),
        (
            r#"{ waveform = "sawtooth", peak = "1 A", frequency = "1 MHz", harmonics = 0 }"#,
            "harmonics",
            "0 }",
            "at least 1",
        ),
        (
            r#"{ waveform = "square", peak = "1 A", rms = "1 A", frequency = "1 MHz" }"#,
            "rms",
            "rms =",
            "only one of",
        ),
        (
            r#"{ waveform = "sqare", peak = "1 A", frequency = "1 MHz" }"#,
            "waveform",
            r#""sqare""#,
            "unknown waveform",
        ),
    ];
    for (current, key, at, reason) in cases {
        let (text, e) = error(current);
        assert_eq!(e.key, format!("source[1].current.{key}"), "{e}");
        assert_eq!((e.line, e.col), position(&text, at), "{e}");
        assert!(e.reason.contains(reason), "{e}");
    }
}

#[test]
fn a_trapezoid_without_rise_names_the_missing_key() {
    let (text, e) = error(r#"{ waveform = "trapezoid", peak = "1 A", frequency = "1 MHz" }"#);
    assert_eq!(e.key, "source[1].current.rise", "{e}");
    assert_eq!((e.line, e.col), position(&text, "{ waveform"), "{e}");
    assert!(e.reason.contains("missing key `rise`"), "{e}");
}
