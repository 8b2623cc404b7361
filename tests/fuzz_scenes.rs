//! Fuzzing of the scene loader (`Scene::parse`) and of the units parser
//! (`units::parse_quantity`) with proptest.
//!
//! Properties:
//!
//! * units: on arbitrary text and on near-valid quantities (number, optional space,
//!   prefix, unit from the real table, then mutations: NaN, inf, huge exponents, missing
//!   number, double units, µ/μ/u, trailing junk) `parse_quantity` never panics, an `Ok`
//!   is finite and, for a well-formed quantity, equals number × prefix × unit scale (as
//!   the module documents it); an `Err` has a non-empty one-line message.
//! * scenes, on random text, on generated scenes (every table kind with plausible and
//!   wild values) and on the demo scenes in `scenes/*.toml` after random edits (delete,
//!   duplicate or swap lines, replace a value, change a unit, misspell a key, truncate,
//!   insert characters): `Scene::parse` never panics and takes at most 2 s; an `Ok`
//!   scene holds only finite numbers (conductor vertices, line frequencies and
//!   currents, victims' area and self-inductance finite and > 0, ...); an error is
//!   located: line and column inside the file it names, a one-line display
//!   `FILE:LINE:COL: key: reason`, a non-empty reason and a key that is empty or a
//!   dotted path such as `source[1].radius`.
//! * determinism: parsing the same text twice gives the same scene or the same error.
//!
//! Scene cases run in a child process (proptest `fork`, 3 s `timeout`) whose address
//! space is capped at 2 GiB (Linux), so an abort, an allocation failure or a hang in
//! the loader fails its case and is shrunk like a panic, without exhausting the
//! machine's memory (the child's "memory allocation of N bytes failed" then shows in
//! the output above the minimal input). Seeds are fixed: every run makes the same cases.
//!
//! Default run, about 170 000 cases, some 20 s on two cores:
//!
//! ```text
//! cargo test --test fuzz_scenes
//! ```
//!
//! Long run, every property mixed in one stream of STRAYFLUX_FUZZ_CASES cases
//! (1 000 000 when unset); STRAYFLUX_FUZZ_SEED picks another fixed seed:
//!
//! ```text
//! STRAYFLUX_FUZZ_CASES=1000000 cargo test --test fuzz_scenes -- --ignored --nocapture
//! ```
//!
//! A run stops at its first failure. To look past bugs already reported, list
//! `;`-separated substrings of their failure reasons in STRAYFLUX_FUZZ_TOLERATE (e.g.
//! `STRAYFLUX_FUZZ_TOLERATE="capacity overflow;: area "`); such failures then pass.

use proptest::collection::vec;
use proptest::option;
use proptest::prelude::*;
use proptest::sample::{Index, select};
use proptest::test_runner::{Config, RngAlgorithm, TestCaseError, TestError, TestRng, TestRunner};
use std::borrow::Cow;
use std::fmt;
use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use std::time::{Duration, Instant};
use strayflux::units::{Dimension, parse_quantity};
use strayflux::{InputError, Scene};

/// One parse slower than this fails its case.
const SLOW_PARSE: Duration = Duration::from_secs(2);

/// A forked case that runs longer than this (ms) is killed and fails.
const HARD_TIMEOUT_MS: u32 = 3_000;

/// Address-space cap of the process that runs scene cases.
const ADDRESS_SPACE_CAP: u64 = 2 << 30;

// ---------------------------------------------------------------------------------
// Running properties with fixed seeds
// ---------------------------------------------------------------------------------

fn config(cases: u32, forked_test: Option<&'static str>) -> Config {
    Config {
        cases,
        failure_persistence: None,
        rng_algorithm: RngAlgorithm::ChaCha,
        max_shrink_iters: 1024,
        max_shrink_time: 90_000,
        fork: forked_test.is_some(),
        timeout: if forked_test.is_some() {
            HARD_TIMEOUT_MS
        } else {
            0
        },
        test_name: forked_test,
        source_file: Some(file!()),
        ..Config::default()
    }
}

/// A ChaCha generator seeded from `seed` and the property's name.
fn rng(label: &str, seed: u64) -> TestRng {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in label.bytes() {
        h = (h ^ u64::from(b)).wrapping_mul(0x0000_0100_0000_01b3);
    }
    let mut bytes = [0u8; 32];
    for (k, chunk) in bytes.chunks_mut(8).enumerate() {
        let word = (seed ^ h).rotate_left(17 * k as u32) ^ (k as u64);
        chunk.copy_from_slice(&word.to_le_bytes());
    }
    TestRng::from_seed(RngAlgorithm::ChaCha, &bytes)
}

fn run_property<S>(
    label: &str,
    config: Config,
    seed: u64,
    strategy: S,
    test: impl Fn(S::Value) -> Result<(), TestCaseError>,
) where
    S: Strategy,
    S::Value: fmt::Debug,
{
    let marks = if config.fork {
        cap_address_space(ADDRESS_SPACE_CAP);
        Marks::start(label)
    } else {
        None
    };
    let mut runner = TestRunner::new_with_rng(config, rng(label, seed));
    match runner.run(&strategy, test) {
        Ok(()) => {}
        Err(TestError::Fail(reason, value)) => {
            let deaths = marks.as_ref().map_or(0, |m| deaths_in(&m.0));
            let how = if deaths > 0 {
                format!(
                    "\n(the child process died {deaths} time(s) inside Scene::parse: a crash, \
                     shown in the output above, e.g. \"memory allocation of N bytes failed\", \
                     or a kill after the {HARD_TIMEOUT_MS} ms timeout; shrinking stops after \
                     {MAX_DEATHS})"
                )
            } else {
                String::new()
            };
            panic!("{label}: {reason}{how}\nminimal failing input: {value:?}")
        }
        Err(TestError::Abort(reason)) => panic!("{label}: aborted: {reason}"),
    }
}

/// Children that die inside a parse (an abort, or a kill after the timeout) before a
/// forked run stops shrinking: the remaining candidates then pass unparsed, so a hang
/// costs seconds rather than a killed child per shrink step.
const MAX_DEATHS: u32 = 3;

/// The forked run's mark directory, `<tmp>/fuzz_scenes/<label>-<pid of the parent>`,
/// kept by the parent (removed on drop). A child finds it through its parent's pid and
/// marks each parse it is inside, so the next child can tell that one died mid-parse.
struct Marks(PathBuf);

/// The mark directory, when this process is the forked child of a run.
static CHILD_MARKS: OnceLock<PathBuf> = OnceLock::new();

fn mark_dir(label: &str, pid: u32) -> PathBuf {
    Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("fuzz_scenes")
        .join(format!("{label}-{pid}"))
}

impl Marks {
    #[cfg(unix)]
    fn start(label: &str) -> Option<Marks> {
        let parents = mark_dir(label, std::os::unix::process::parent_id());
        if parents.is_dir() {
            let _ = CHILD_MARKS.set(parents);
            return None;
        }
        let mine = mark_dir(label, std::process::id());
        let _ = std::fs::remove_dir_all(&mine);
        std::fs::create_dir_all(&mine).ok()?;
        Some(Marks(mine))
    }

    #[cfg(not(unix))]
    fn start(_label: &str) -> Option<Marks> {
        None
    }
}

impl Drop for Marks {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn deaths_in(dir: &Path) -> u32 {
    std::fs::read_to_string(dir.join("deaths"))
        .ok()
        .and_then(|s| s.trim().parse().ok())
        .unwrap_or(0)
}

/// In a forked child: whether parses may still run. The first call counts the
/// previous child's death if it left its in-parse mark.
fn parses_allowed(dir: &Path) -> bool {
    static DEATHS: OnceLock<u32> = OnceLock::new();
    let deaths = *DEATHS.get_or_init(|| {
        let mut n = deaths_in(dir);
        if std::fs::remove_file(dir.join("in-parse")).is_ok() {
            n += 1;
            let _ = std::fs::write(dir.join("deaths"), n.to_string());
        }
        n
    });
    deaths < MAX_DEATHS
}

/// Lowers the soft address-space limit of this process to `bytes`, so a runaway
/// allocation fails (and aborts the forked child) instead of exhausting the machine.
#[cfg(all(
    target_os = "linux",
    any(target_arch = "x86_64", target_arch = "aarch64")
))]
fn cap_address_space(bytes: u64) {
    #[repr(C)]
    struct RLimit {
        cur: u64,
        max: u64,
    }
    unsafe extern "C" {
        fn getrlimit(resource: i32, rlim: *mut RLimit) -> i32;
        fn setrlimit(resource: i32, rlim: *const RLimit) -> i32;
    }
    const RLIMIT_AS: i32 = 9;
    let mut limit = RLimit { cur: 0, max: 0 };
    // SAFETY: getrlimit and setrlimit only read or write the struct passed, which has
    // the layout of `struct rlimit` (two `rlim_t`, 64-bit on these targets).
    unsafe {
        if getrlimit(RLIMIT_AS, &mut limit) == 0 && limit.cur > bytes {
            limit.cur = bytes.min(limit.max);
            setrlimit(RLIMIT_AS, &limit);
        }
    }
}

#[cfg(not(all(
    target_os = "linux",
    any(target_arch = "x86_64", target_arch = "aarch64")
)))]
fn cap_address_space(_bytes: u64) {}

fn fail(why: impl Into<String>) -> TestCaseError {
    TestCaseError::fail(why.into())
}

/// Failures whose reason contains one of the `;`-separated STRAYFLUX_FUZZ_TOLERATE
/// substrings pass, so a long run can look past bugs already reported.
fn tolerated(reason: &str) -> bool {
    static LIST: OnceLock<Vec<String>> = OnceLock::new();
    LIST.get_or_init(|| {
        std::env::var("STRAYFLUX_FUZZ_TOLERATE")
            .unwrap_or_default()
            .split(';')
            .filter(|s| !s.is_empty())
            .map(String::from)
            .collect()
    })
    .iter()
    .any(|s| reason.contains(s.as_str()))
}

/// A property's verdict: a failure unless tolerated.
fn verdict(result: Result<(), String>) -> Result<(), TestCaseError> {
    match result {
        Err(why) if !tolerated(&why) => Err(fail(why)),
        _ => Ok(()),
    }
}

fn panic_text(p: &(dyn std::any::Any + Send)) -> String {
    p.downcast_ref::<&str>()
        .map(|s| s.to_string())
        .or_else(|| p.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "<non-string panic payload>".into())
}

/// Text shown raw in failure reports (a `String`'s Debug escapes every newline).
#[derive(Clone)]
struct TomlText(String);

impl fmt::Debug for TomlText {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "scene text ({} bytes), as Rust: {:?}\n--- text ---\n{}\n--- end ---",
            self.0.len(),
            self.0,
            self.0
        )
    }
}

// ---------------------------------------------------------------------------------
// Units parser
// ---------------------------------------------------------------------------------

const DIMENSIONS: &[Dimension] = &[
    Dimension::Length,
    Dimension::Current,
    Dimension::Frequency,
    Dimension::Time,
    Dimension::Angle,
    Dimension::Field,
    Dimension::Voltage,
    Dimension::Inductance,
    Dimension::Resistance,
    Dimension::Area,
    Dimension::Conductivity,
];

/// How a unit turns its number into SI, as `units` documents it.
#[derive(Clone, Copy, Debug)]
enum Rule {
    /// × factor; one SI prefix allowed.
    Prefixed(f64),
    /// × factor; no prefix.
    Plain(f64),
    /// Square metres: the prefix applies to the metre, so it is squared.
    Square,
    /// dB relative to 1 µV.
    DbMicrovolt,
    /// Not settled by the documentation (Greek-mu dBμV, the ohm sign U+2126): any
    /// finite result or an error is accepted.
    Unsettled,
}

/// The unit table as the module documentation and its examples describe it.
const UNIT_TABLE: &[(&str, Dimension, Rule)] = &[
    ("m", Dimension::Length, Rule::Prefixed(1.0)),
    ("in", Dimension::Length, Rule::Plain(0.0254)),
    ("mil", Dimension::Length, Rule::Plain(0.0254e-3)),
    ("A", Dimension::Current, Rule::Prefixed(1.0)),
    ("Hz", Dimension::Frequency, Rule::Prefixed(1.0)),
    ("s", Dimension::Time, Rule::Prefixed(1.0)),
    ("rad", Dimension::Angle, Rule::Prefixed(1.0)),
    (
        "deg",
        Dimension::Angle,
        Rule::Plain(std::f64::consts::PI / 180.0),
    ),
    ("T", Dimension::Field, Rule::Prefixed(1.0)),
    ("V", Dimension::Voltage, Rule::Prefixed(1.0)),
    ("dBuV", Dimension::Voltage, Rule::DbMicrovolt),
    ("dB\u{b5}V", Dimension::Voltage, Rule::DbMicrovolt),
    ("dB\u{3bc}V", Dimension::Voltage, Rule::Unsettled),
    ("H", Dimension::Inductance, Rule::Prefixed(1.0)),
    ("ohm", Dimension::Resistance, Rule::Prefixed(1.0)),
    ("\u{3a9}", Dimension::Resistance, Rule::Prefixed(1.0)),
    ("\u{2126}", Dimension::Resistance, Rule::Unsettled),
    ("m2", Dimension::Area, Rule::Square),
    ("S/m", Dimension::Conductivity, Rule::Prefixed(1.0)),
];

fn prefix_power(c: char) -> Option<i32> {
    Some(match c {
        'p' => -12,
        'n' => -9,
        'u' | '\u{b5}' | '\u{3bc}' => -6,
        'm' => -3,
        'c' => -2,
        'k' => 3,
        'M' => 6,
        'G' => 9,
        _ => return None,
    })
}

fn oracle_lookup(symbol: &str) -> Option<(Dimension, Rule, i32)> {
    if let Some(&(_, d, r)) = UNIT_TABLE.iter().find(|(s, _, _)| *s == symbol) {
        return Some((d, r, 0));
    }
    let mut chars = symbol.chars();
    let p = prefix_power(chars.next()?)?;
    let rest = chars.as_str();
    UNIT_TABLE
        .iter()
        .find(|(s, _, r)| {
            *s == rest && matches!(r, Rule::Prefixed(_) | Rule::Square | Rule::Unsettled)
        })
        .map(|&(_, d, r)| (d, r, p))
}

/// What `parse_quantity` must give.
#[derive(Clone, Copy, Debug)]
enum Expect {
    /// Ok with this SI value (relative 1e-12).
    Value(f64),
    /// An error.
    Error,
    /// Either (beyond the range where the value is certain), but an Ok is finite.
    Either,
}

#[derive(Clone)]
struct QuantityCase {
    text: String,
    dim: Dimension,
    expect: Expect,
}

impl fmt::Debug for QuantityCase {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "parse_quantity({:?}, Dimension::{:?}), expected {:?}",
            self.text, self.dim, self.expect
        )
    }
}

/// The expectation for `number` (its text and, when well formed, its value) followed by
/// `symbol` (everything after the number, untrimmed).
fn expectation(number: Option<f64>, symbol: &str, dim: Dimension) -> Expect {
    let Some(x) = number else {
        return Expect::Error;
    };
    let symbol = symbol.trim();
    if symbol.is_empty() {
        return Expect::Error;
    }
    let Some((d, rule, p)) = oracle_lookup(symbol) else {
        return Expect::Error;
    };
    if d != dim {
        return Expect::Error;
    }
    let value = match rule {
        Rule::Prefixed(k) | Rule::Plain(k) => x * k * 10f64.powi(p),
        Rule::Square => x * 10f64.powi(2 * p),
        Rule::DbMicrovolt => 1e-6 * 10f64.powf(x / 20.0),
        Rule::Unsettled => return Expect::Either,
    };
    if !value.is_finite() || value.abs() > 1e300 {
        Expect::Either
    } else {
        Expect::Value(value)
    }
}

const GOOD_PREFIXES: &[&str] = &["p", "n", "u", "\u{b5}", "\u{3bc}", "m", "c", "k", "M", "G"];
const BAD_PREFIXES: &[&str] = &[
    "f",
    "T",
    "K",
    "da",
    "h",
    "E",
    "P",
    "mu",
    "\u{b5}\u{b5}",
    "U",
    "N",
    "mm",
];
const NEAR_MISS_UNITS: &[&str] = &[
    "hz", "HZ", "Ohm", "OHM", "ohms", "sec", "S/M", "S / m", "m^2", "m\u{b2}", "\u{b0}", "dBV",
    "dBmV", "dbuv", "A/m", "Wb", "furlong", "\u{b5}", "m 2", "Hz.", "_m",
];
const BAD_NUMBERS: &[&str] = &[
    "",
    "nan",
    "NaN",
    "inf",
    "-inf",
    "+inf",
    "infinity",
    ".",
    "-",
    "+",
    "e5",
    "E3",
    "--1",
    "+-1",
    "1.2.3",
    "..5",
    "\u{ff11}\u{ff12}",
    "\u{661}\u{662}",
    "0x1A",
    "1_000",
    "1,5",
    "\u{bd}",
    "five",
    "\u{2212}5",
];
const HUGE_NUMBERS: &[&str] = &[
    "1e308",
    "-1e308",
    "1.7976931348623157e308",
    "1e309",
    "-1e400",
    "1e-308",
    "1e-320",
    "4.9e-324",
    "1e-400",
    "9e307",
    "123456789012345678901234567890",
    "1e+308",
    "0e999",
    "00000000000000000000001",
    "1E-7",
    "1e0",
    "-0",
    "+0.0",
];
const SPACES: &[&str] = &["", " ", "  ", "\t", "\u{a0}", "\u{2009}", "\u{3000}", "\n"];
const JUNK: &[&str] = &[
    "x",
    "!",
    "mm",
    " m",
    "2",
    "/s",
    "\u{b2}",
    ".",
    "0",
    "e",
    "\u{0}",
    "#",
    "\u{1f642}",
    " junk",
    "Hz",
    "\u{301}",
    "\"",
    " 5",
    "-",
    "\u{200b}",
    "/m",
];
const EDGE_WHITESPACE: &[&str] = &["", " ", "\n", "\t ", "\r\n", "\u{feff}"];

/// A number as text and, when the quantity grammar accepts it, its value.
fn number_part() -> BoxedStrategy<(String, Option<f64>)> {
    let parsed = |s: String| {
        let v = s.parse::<f64>().ok();
        (s, v)
    };
    prop_oneof![
        3 => (-1e6f64..1e6).prop_map(|x| format!("{x}")).prop_map(parsed),
        2 => any::<i32>().prop_map(|n| n.to_string()).prop_map(parsed),
        2 => any::<f64>()
            .prop_filter("finite", |x| x.is_finite())
            .prop_map(|x| format!("{x:e}"))
            .prop_map(parsed),
        1 => (0u32..100_000).prop_map(|n| format!(".{n}")).prop_map(parsed),
        1 => (0u32..100_000).prop_map(|n| format!("{n}.")).prop_map(parsed),
        1 => (1u32..1000, -330i32..330).prop_map(|(m, e)| format!("{m}e{e}")).prop_map(parsed),
        1 => (0u32..1000).prop_map(|n| format!("+{n}")).prop_map(parsed),
        2 => select(HUGE_NUMBERS).prop_map(String::from).prop_map(parsed),
        2 => select(BAD_NUMBERS).prop_map(|s| (s.to_string(), None)),
    ]
    .boxed()
}

/// Prefix + unit symbol + where it came from (its dimension, when a real unit).
fn symbol_part() -> BoxedStrategy<(String, Option<Dimension>)> {
    let table_unit = select(UNIT_TABLE).prop_map(|(s, d, _)| (s.to_string(), Some(d)));
    prop_oneof![
        4 => table_unit.clone(),
        4 => (select(GOOD_PREFIXES), table_unit.clone())
            .prop_map(|(p, (s, d))| (format!("{p}{s}"), d)),
        1 => (select(BAD_PREFIXES), table_unit.clone())
            .prop_map(|(p, (s, d))| (format!("{p}{s}"), d)),
        1 => select(NEAR_MISS_UNITS).prop_map(|s| (s.to_string(), None)),
        1 => Just((String::new(), None)),
        // Double units: "5 mm kHz", "5 mmm".
        1 => (table_unit.clone(), select(SPACES), table_unit)
            .prop_map(|((a, d), sp, (b, _))| (format!("{a}{sp}{b}"), d)),
    ]
    .boxed()
}

fn near_valid_quantity() -> impl Strategy<Value = QuantityCase> {
    (
        number_part(),
        select(SPACES),
        symbol_part(),
        option::weighted(0.2, select(JUNK)),
        select(EDGE_WHITESPACE),
        select(EDGE_WHITESPACE),
        prop::bool::weighted(0.75),
        select(DIMENSIONS),
    )
        .prop_map(
            |((num, value), space, (symbol, unit_dim), junk, lead, trail, same, other)| {
                let dim = match unit_dim {
                    Some(d) if same => d,
                    _ => other,
                };
                // Junk only follows a unit, so it cannot turn into digits of the number.
                let junk = if symbol.is_empty() {
                    ""
                } else {
                    junk.unwrap_or("")
                };
                let rest = format!("{space}{symbol}{junk}");
                // A byte-order mark is not whitespace: it is junk wherever it is.
                let expect = if lead.contains('\u{feff}') || trail.contains('\u{feff}') {
                    Expect::Error
                } else {
                    expectation(value, &format!("{rest}{trail}"), dim)
                };
                QuantityCase {
                    text: format!("{lead}{num}{rest}{trail}"),
                    dim,
                    expect,
                }
            },
        )
}

const QUANTITY_CHARS: &[char] = &[
    '0', '1', '5', '9', '.', 'e', 'E', '+', '-', ' ', 'm', 'k', 'M', 'u', '\u{b5}', '\u{3bc}', 'H',
    'z', 'A', 's', 'V', 'd', 'B', 'T', 'S', '/', '2', 'i', 'n', 'l', 'o', 'h', 'g', 'r', 'a',
    '\u{3a9}', 'p', 'G', 'c', '\t', '\n', 'N', 'f',
];

/// Arbitrary text: any code points, or a dense mix of the characters quantities use.
fn quantity_text() -> BoxedStrategy<String> {
    prop_oneof![
        vec(any::<char>(), 0..24).prop_map(String::from_iter),
        vec(select(QUANTITY_CHARS), 0..16).prop_map(String::from_iter),
    ]
    .boxed()
}

/// Checks everything but the one-line rule, which [`unit_message_line_rule`] checks.
fn check_quantity(text: &str, dim: Dimension, expect: Expect) -> Result<(), String> {
    let got = catch_unwind(|| parse_quantity(text, dim))
        .map_err(|p| format!("parse_quantity panicked: {}", panic_text(&*p)))?;
    match (&got, expect) {
        (Ok(v), _) if !v.is_finite() => return Err(format!("Ok({v}) is not finite")),
        (Err(e), _) if e.0.trim().is_empty() => return Err("empty error message".into()),
        (Err(e), _) if !text.contains('\n') && e.0.contains('\n') => {
            return Err(format!(
                "one-line input, message of several lines: {:?}",
                e.0
            ));
        }
        (Ok(v), Expect::Value(want)) if (v - want).abs() > 1e-12 * want.abs() + 1e-300 => {
            return Err(format!("Ok({v:e}), expected {want:e}"));
        }
        (Err(e), Expect::Value(want)) => {
            return Err(format!("Err({:?}), expected Ok({want:e})", e.0));
        }
        (Ok(v), Expect::Error) => return Err(format!("Ok({v:e}), expected an error")),
        _ => {}
    }
    Ok(())
}

/// `UnitError` documents its message as one line, whatever the input.
fn unit_message_line_rule(text: &str, dim: Dimension) -> Result<(), String> {
    match catch_unwind(|| parse_quantity(text, dim)) {
        Ok(Err(e)) if e.0.contains('\n') || e.0.contains('\r') => {
            Err(format!("the message is not one line: {:?}", e.0))
        }
        _ => Ok(()),
    }
}

#[test]
fn units_parser_on_near_valid_quantities() {
    run_property(
        "units_parser_on_near_valid_quantities",
        config(50_000, None),
        1,
        near_valid_quantity(),
        |c| verdict(check_quantity(&c.text, c.dim, c.expect)),
    );
}

#[test]
fn units_parser_on_arbitrary_text() {
    run_property(
        "units_parser_on_arbitrary_text",
        config(50_000, None),
        2,
        (quantity_text(), select(DIMENSIONS)),
        |(text, dim)| verdict(check_quantity(&text, dim, Expect::Either)),
    );
}

#[test]
fn unit_error_messages_are_one_line() {
    run_property(
        "unit_error_messages_are_one_line",
        config(10_000, None),
        3,
        (
            prop_oneof![quantity_text(), near_valid_quantity().prop_map(|c| c.text)],
            select(DIMENSIONS),
        ),
        |(text, dim)| verdict(unit_message_line_rule(&text, dim)),
    );
}

// ---------------------------------------------------------------------------------
// Scene checks shared by every scene property
// ---------------------------------------------------------------------------------

/// Parses with a panic guard and a stopwatch.
/// `Ok(None)`: not parsed (a forked run that has stopped shrinking after
/// [`MAX_DEATHS`]).
fn parse_scene(name: &str, text: &str) -> Result<Option<(Parsed, Duration)>, String> {
    let marks = CHILD_MARKS.get();
    if let Some(dir) = marks {
        if !parses_allowed(dir) {
            return Ok(None);
        }
        let _ = std::fs::write(dir.join("in-parse"), "");
    }
    let start = Instant::now();
    let outcome = catch_unwind(AssertUnwindSafe(|| Scene::parse(name, text)));
    let took = start.elapsed();
    if let Some(dir) = marks {
        let _ = std::fs::remove_file(dir.join("in-parse"));
    }
    let outcome = outcome.map_err(|p| format!("Scene::parse panicked: {}", panic_text(&*p)))?;
    if took > SLOW_PARSE {
        return Err(format!(
            "Scene::parse took {took:.2?} (limit {SLOW_PARSE:?}); outcome: {}",
            match &outcome {
                Ok(s) => format!(
                    "Ok, {} conductor vertices",
                    s.sources
                        .iter()
                        .flat_map(|s| &s.conductors.wires)
                        .map(|w| w.vertices.len())
                        .sum::<usize>()
                ),
                Err(e) => format!("Err({e})"),
            }
        ));
    }
    Ok(Some((outcome, took)))
}

type Parsed = Result<Scene, InputError>;

fn finite3(v: &strayflux::field::Vec3) -> bool {
    v.iter().all(|c| c.is_finite())
}

fn positive(x: f64) -> bool {
    x.is_finite() && x > 0.0
}

macro_rules! ensure {
    ($cond:expr, $($msg:tt)+) => {
        if !$cond {
            return Err(format!($($msg)+));
        }
    };
}

/// Every number of an accepted scene is finite, and sizes are positive.
fn check_scene(s: &Scene) -> Result<(), String> {
    ensure!(
        positive(s.tolerance) && s.tolerance <= 0.1,
        "tolerance {}",
        s.tolerance
    );
    ensure!(positive(s.wire_radius), "wire_radius {}", s.wire_radius);
    ensure!(!s.sources.is_empty(), "an accepted scene without sources");
    for (i, src) in s.sources.iter().enumerate() {
        let at = format!("source[{}] \"{}\"", i + 1, src.id);
        ensure!(
            finite3(&src.frame.origin),
            "{at}: origin {:?}",
            src.frame.origin
        );
        let c = &src.conductors;
        ensure!(
            !c.wires.is_empty() || !c.dipoles.is_empty(),
            "{at}: no conductors"
        );
        for (j, w) in c.wires.iter().enumerate() {
            ensure!(
                w.vertices.len() >= 2,
                "{at}: wire {j} has {} vertices",
                w.vertices.len()
            );
            if let Some(k) = w.vertices.iter().position(|v| !finite3(v)) {
                return Err(format!("{at}: wire {j} vertex {k} is {:?}", w.vertices[k]));
            }
            ensure!(
                w.weight.is_finite() && w.weight != 0.0,
                "{at}: wire {j} weight {}",
                w.weight
            );
            ensure!(
                positive(w.wire_radius),
                "{at}: wire {j} radius {}",
                w.wire_radius
            );
        }
        for (j, d) in c.dipoles.iter().enumerate() {
            ensure!(
                finite3(&d.position) && finite3(&d.moment_per_amp) && positive(d.radius),
                "{at}: dipole {j} {d:?}"
            );
        }
        ensure!(!src.lines.is_empty(), "{at}: no spectral lines");
        for (j, l) in src.lines.iter().enumerate() {
            ensure!(
                positive(l.frequency) && l.current.re.is_finite() && l.current.im.is_finite(),
                "{at}: line {j} frequency {} current {}",
                l.frequency,
                l.current
            );
        }
        if let Some((p, b)) = &src.calibration {
            ensure!(finite3(p) && positive(*b), "{at}: calibration {p:?} {b}");
        }
    }
    for (i, v) in s.victims.iter().enumerate() {
        let at = format!("victim[{}] \"{}\"", i + 1, v.id);
        ensure!(!v.edges.is_empty(), "{at}: no edges");
        for (j, e) in v.edges.iter().enumerate() {
            ensure!(
                finite3(&e.point(0.0)) && finite3(&e.point(0.5)),
                "{at}: edge {j} {e:?}"
            );
        }
        ensure!(positive(v.area), "{at}: area {}", v.area);
        ensure!(
            positive(v.self_inductance),
            "{at}: self_inductance {}",
            v.self_inductance
        );
        ensure!(
            v.turns.is_finite() && v.turns >= 1.0,
            "{at}: turns {}",
            v.turns
        );
        ensure!(
            positive(v.wire_radius),
            "{at}: wire_radius {}",
            v.wire_radius
        );
        ensure!(v.limit.is_none_or(positive), "{at}: limit {:?}", v.limit);
        ensure!(v.load.is_none_or(positive), "{at}: load {:?}", v.load);
    }
    for (i, w) in s.sweeps.iter().enumerate() {
        ensure!(
            w.victim < s.victims.len() && w.from.is_finite() && w.to.is_finite() && w.steps >= 2,
            "sweep[{}]: {w:?}",
            i + 1
        );
    }
    for (i, m) in s.maps.iter().enumerate() {
        ensure!(
            finite3(&m.origin) && finite3(&m.spacing) && m.points.iter().all(|&n| n >= 1),
            "map[{}]: {m:?}",
            i + 1
        );
    }
    for (i, sh) in s.shields.iter().enumerate() {
        ensure!(
            finite3(&sh.origin)
                && finite3(&sh.normal)
                && !sh.layers.is_empty()
                && sh.layers.iter().all(|(_, t)| positive(*t)),
            "shield[{}]: {sh:?}",
            i + 1
        );
    }
    for (i, e) in s.enclosures.iter().enumerate() {
        ensure!(
            finite3(&e.frame.origin)
                && e.size.iter().all(|&x| positive(x))
                && positive(e.thickness),
            "enclosure[{}]: {e:?}",
            i + 1
        );
    }
    ensure!(
        s.warnings.iter().all(|w| !w.trim().is_empty()),
        "an empty warning in {:?}",
        s.warnings
    );
    Ok(())
}

fn is_bare_key(s: &str) -> bool {
    !s.is_empty()
        && s.chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
}

/// `name`, `name[2]`, `a.b[1].c`: dot-separated names, each followed by one-based
/// indexes. A name that is not a bare key is shown quoted (`scene."quoted key"`,
/// `scene.""`), with escapes for control characters, and must be a quoted key of the
/// text.
fn check_key_path(key: &str, text: &str) -> Result<(), String> {
    for part in split_key_path(key) {
        let mut name = part.as_str();
        while let Some(open) = name.rfind('[') {
            if name.ends_with('"') {
                break;
            }
            let Some(index) = name[open..]
                .strip_prefix('[')
                .and_then(|s| s.strip_suffix(']'))
            else {
                break;
            };
            ensure!(
                !index.is_empty()
                    && index.bytes().all(|b| b.is_ascii_digit())
                    && !index.starts_with('0'),
                "key {key:?}: index [{index}] is not one-based"
            );
            name = &name[..open];
        }
        if name.len() >= 2 && name.starts_with('"') && name.ends_with('"') {
            // Shown quoted: it must not be a bare key, and (unless it holds escapes,
            // which decoded no longer match their text) it must be quoted in the text.
            let inner = &name[1..name.len() - 1];
            ensure!(
                !is_bare_key(inner),
                "key {key:?}: the bare key {inner:?} is shown quoted"
            );
            let quoted = inner.contains('\\')
                || text.contains(&format!("\"{inner}\""))
                || text.contains(&format!("'{inner}'"));
            ensure!(
                quoted,
                "key {key:?}: {name} is not a quoted key of the text"
            );
            continue;
        }
        ensure!(
            is_bare_key(name),
            "key {key:?} is not a dotted key path (part {name:?})"
        );
    }
    Ok(())
}

/// The parts of a dotted key path; dots inside a quoted part do not split it.
fn split_key_path(key: &str) -> Vec<String> {
    let mut parts = vec![String::new()];
    let (mut quoted, mut escaped) = (false, false);
    for c in key.chars() {
        match c {
            '.' if !quoted => parts.push(String::new()),
            _ => {
                if quoted && c == '\\' && !escaped {
                    escaped = true;
                } else {
                    if c == '"' && !escaped {
                        quoted = !quoted;
                    }
                    escaped = false;
                }
                parts.last_mut().unwrap().push(c);
            }
        }
    }
    parts
}

/// The error is located in the file it names and displays as one line.
fn check_error(e: &InputError, name: &str, text: &str) -> Result<(), String> {
    let shown = e.to_string();
    ensure!(
        !shown.contains('\n'),
        "the error displays on several lines: {shown:?}"
    );
    ensure!(!e.reason.trim().is_empty(), "empty reason: {e:?}");
    ensure!(
        shown.starts_with(&format!("{}:{}:{}: ", e.file, e.line, e.col)),
        "display {shown:?} does not start FILE:LINE:COL"
    );
    let located: Cow<'_, str> = if e.file == name {
        Cow::Borrowed(text)
    } else {
        match std::fs::read_to_string(&e.file) {
            Ok(t) => Cow::Owned(t),
            Err(err) => {
                return Err(format!(
                    "the error names {:?}, neither the scene nor a readable file ({err}): {shown}",
                    e.file
                ));
            }
        }
    };
    let lines: Vec<&str> = located.split('\n').collect();
    ensure!(
        e.line >= 1 && e.line <= lines.len(),
        "line {} outside {:?} ({} lines): {shown}",
        e.line,
        e.file,
        lines.len()
    );
    let width = lines[e.line - 1].chars().count();
    ensure!(
        e.col >= 1 && e.col <= width + 1,
        "column {} outside line {} ({width} characters): {shown}",
        e.col,
        e.line
    );
    if !e.key.is_empty() {
        check_key_path(&e.key, &located)?;
    }
    Ok(())
}

/// The scene property: no panic, no slow parse, an Ok scene is finite, an error is
/// located.
fn check_parse(name: &str, text: &str) -> Result<(), String> {
    match parse_scene(name, text)? {
        None => Ok(()),
        Some((Ok(scene), _)) => check_scene(&scene).map_err(|w| format!("accepted scene: {w}")),
        Some((Err(e), _)) => check_error(&e, name, text),
    }
}

/// Two parses of the same text agree exactly.
fn check_twice(name: &str, text: &str) -> Result<(), String> {
    let Some((a, took)) = parse_scene(name, text)? else {
        return Ok(());
    };
    // Two slow parses would pass for a hang: slowness is the other properties' concern.
    if took > SLOW_PARSE / 2 {
        return Ok(());
    }
    let Some((b, _)) = parse_scene(name, text)? else {
        return Ok(());
    };
    match (&a, &b) {
        (Ok(x), Ok(y)) => {
            let (x, y) = (format!("{x:?}"), format!("{y:?}"));
            if x != y {
                let at = x
                    .bytes()
                    .zip(y.bytes())
                    .position(|(p, q)| p != q)
                    .unwrap_or(x.len().min(y.len()));
                let from = at.saturating_sub(80);
                return Err(format!(
                    "two parses give different scenes; first difference near {:?} / {:?}",
                    x.get(from..(at + 80).min(x.len())).unwrap_or(""),
                    y.get(from..(at + 80).min(y.len())).unwrap_or("")
                ));
            }
        }
        (Err(x), Err(y)) => {
            ensure!(
                x == y && x.to_string() == y.to_string(),
                "two parses give different errors: {x} / {y}"
            );
        }
        _ => {
            return Err(format!(
                "one parse accepts, the other refuses: {:?}",
                [&a, &b].map(|r| r.as_ref().err().map(ToString::to_string))
            ));
        }
    }
    Ok(())
}

// ---------------------------------------------------------------------------------
// Random text
// ---------------------------------------------------------------------------------

const TOML_CHARS: &[char] = &[
    '[',
    ']',
    '{',
    '}',
    '=',
    '"',
    '\'',
    '#',
    ',',
    '.',
    '\n',
    '\n',
    ' ',
    ' ',
    '\\',
    '\r',
    '\t',
    'a',
    'e',
    'i',
    'd',
    'k',
    'n',
    'x',
    'z',
    '_',
    '-',
    '0',
    '1',
    '9',
    '+',
    ':',
    '\u{0}',
    '\u{b5}',
    '\u{feff}',
    '\u{1f642}',
];

const HEADERS: &[&str] = &[
    "[scene]",
    "[solver]",
    "[[source]]",
    "[[victim]]",
    "[[shield]]",
    "[[enclosure]]",
    "[[sweep]]",
    "[[map]]",
    "[source]",
    "[[scene]]",
    "[source.current]",
    "[[source.current.lines]]",
    "[[source.calibrate]]",
    "[\"quoted key\"]",
    "[a.b]",
    "[[victim.load]]",
    "[[source.position]]",
];

const KEYS: &[&str] = &[
    "id",
    "kind",
    "title",
    "tolerance",
    "wire_radius",
    "radius",
    "width",
    "height",
    "vertices",
    "effective_area",
    "length",
    "turns",
    "leads",
    "major_radius",
    "minor_radius",
    "inner_radius",
    "outer_radius",
    "shape",
    "opening",
    "separation",
    "twist_pitch",
    "path",
    "calibrate",
    "position",
    "axis",
    "reference",
    "current",
    "limit",
    "load",
    "material",
    "thickness",
    "layers",
    "fitted",
    "size",
    "contains",
    "victim",
    "vary",
    "along",
    "about",
    "from",
    "to",
    "steps",
    "scale",
    "orientation",
    "compare",
    "min",
    "max",
    "step",
    "cells",
    "line",
    "waveform",
    "peak",
    "rms",
    "peak_to_peak",
    "frequency",
    "harmonics",
    "phase",
    "rise",
    "fall",
    "duty",
    "lines",
    "current.frequency",
    "current.peak",
    "\"quoted key\"",
    "'lit'",
    "\"dotted.key\"",
    "\"\"",
    "raduis",
    "kidn",
    "\"id\"",
    "\"new\\nline\"",
];

/// Plausible and wild values (TOML).
const TOKENS: &[&str] = &[
    "0",
    "-1",
    "1",
    "2",
    "3",
    "1e308",
    "-1e308",
    "1e-300",
    "5e-324",
    "nan",
    "inf",
    "-inf",
    "1e999",
    "-0.0",
    "0.0",
    "0.5",
    "1000000",
    "1000001",
    "9223372036854775807",
    "-9223372036854775808",
    "99999999999999999999999",
    "-99999999999999999999999999999999999999999",
    "0x7fffffffffffffff",
    "0o17",
    "0b101",
    "1_000",
    "true",
    "false",
    "1979-05-27",
    "07:32:00",
    "1979-05-27T07:32:00Z",
    "[]",
    "{}",
    "[0, 0, 0]",
    "[0, 0, 1]",
    "[1, 0, 0]",
    "[1e308, 1e308, 1e308]",
    "[\"1 mm\", \"2 mm\"]",
    "[\"1 mm\", \"2 mm\", \"3 mm\"]",
    "[[0, 0, 0], [0.01, 0, 0], [0, 0.01, 0]]",
    "[\"none\"]",
    "[\"v1\"]",
    "{ x = 1 }",
    "\"\"",
    "\"abc\"",
    "\"0 mm\"",
    "\"-5 mm\"",
    "\"1e9 m\"",
    "\"1 um\"",
    "\"1 nm\"",
    "\"3 um\"",
    "\"5 um\"",
    "\"1e308 m\"",
    "\"1e-300 m\"",
    "\"nan mm\"",
    "\"inf Hz\"",
    "\"1e-9\"",
    "\"5 kHz\"",
    "\"1 GHz\"",
    "\"-6 dBuV\"",
    "\"180 deg\"",
    "\"1e6\"",
    "\"none\"",
    "\"axial\"",
    "\"log\"",
    "\"linear\"",
    "\"worst\"",
    "\"all\"",
    "\"round\"",
    "\"square\"",
    "\"loop\"",
    "\"helix\"",
    "\"pair\"",
    "\"trace\"",
    "\"box\"",
    "\"plane\"",
    "\"copper\"",
    "\"steel\"",
    "\"sine\"",
    "\"trapezoid\"",
    "\"distance\"",
    "\"frequency\"",
    "'literal'",
    "\"\"\"multi\nline\"\"\"",
    "\"a\\tb\"",
    "\"\\u00b5m\"",
    "\"v1\"",
    "\"s1\"",
];

const UNIT_SYMBOLS: &[&str] = &[
    "m",
    "mm",
    "um",
    "\u{b5}m",
    "nm",
    "cm",
    "km",
    "in",
    "mil",
    "A",
    "mA",
    "kA",
    "Hz",
    "kHz",
    "MHz",
    "GHz",
    "s",
    "ms",
    "us",
    "ns",
    "ps",
    "rad",
    "deg",
    "T",
    "mT",
    "uT",
    "nT",
    "V",
    "mV",
    "uV",
    "dBuV",
    "dB\u{b5}V",
    "H",
    "mH",
    "uH",
    "nH",
    "ohm",
    "kohm",
    "\u{3a9}",
    "m2",
    "mm2",
    "cm2",
    "S/m",
    "MS/m",
    "furlong",
    "hz",
    "",
    "mm mm",
    "\u{b0}",
];

/// A TOML float for any f64.
fn toml_float(x: f64) -> String {
    if x.is_nan() {
        "nan".into()
    } else if x.is_infinite() {
        if x > 0.0 { "inf" } else { "-inf" }.into()
    } else {
        format!("{x:e}")
    }
}

/// A number spread over many decades, as Rust writes it.
fn magnitude() -> impl Strategy<Value = String> {
    (1u32..1000, -15i32..15, any::<bool>()).prop_map(|(m, e, neg)| {
        let x = f64::from(m) * 10f64.powi(e);
        format!("{}{x}", if neg { "-" } else { "" })
    })
}

fn token() -> BoxedStrategy<String> {
    prop_oneof![
        6 => select(TOKENS).prop_map(String::from),
        1 => any::<f64>().prop_map(toml_float),
        1 => any::<i64>().prop_map(|n| n.to_string()),
        2 => (magnitude(), select(UNIT_SYMBOLS)).prop_map(|(x, u)| format!("\"{x} {u}\"")),
    ]
    .boxed()
}

fn toml_line() -> BoxedStrategy<String> {
    prop_oneof![
        2 => select(HEADERS).prop_map(String::from),
        6 => (select(KEYS), token()).prop_map(|(k, v)| format!("{k} = {v}")),
        1 => Just(String::new()),
        1 => Just("# a comment".to_string()),
        1 => vec(select(TOML_CHARS), 0..12).prop_map(String::from_iter),
    ]
    .boxed()
}

fn random_text() -> BoxedStrategy<TomlText> {
    prop_oneof![
        1 => vec(any::<char>(), 0..200).prop_map(String::from_iter),
        1 => vec(select(TOML_CHARS), 0..300).prop_map(String::from_iter),
        2 => vec(toml_line(), 0..40).prop_map(|lines| lines.join("\n")),
    ]
    .prop_map(TomlText)
    .boxed()
}

// ---------------------------------------------------------------------------------
// Generated scenes: every table kind, plausible values with some wild ones
// ---------------------------------------------------------------------------------

/// Mostly one of `plausible`, sometimes a wild token.
fn value(plausible: &'static [&'static str]) -> BoxedStrategy<String> {
    prop_oneof![
        8 => select(plausible).prop_map(String::from),
        1 => token(),
    ]
    .boxed()
}

fn length() -> BoxedStrategy<String> {
    prop_oneof![
        6 => select(&[
            "\"0.1 mm\"", "\"0.5 mm\"", "\"1 mm\"", "\"2 mm\"", "\"5 mm\"", "\"8 mm\"",
            "\"12 mm\"", "\"20 mm\"", "\"50 mm\"", "\"0.1 m\"", "\"1 m\"", "0.003", "0.02",
            "\"0.5 in\"", "\"40 mil\"", "\"35 um\"", "\"-10 mm\"", "0",
        ][..])
        .prop_map(String::from),
        3 => (0.01f64..200.0).prop_map(|x| format!("\"{x} mm\"")),
        1 => token(),
    ]
    .boxed()
}

fn small_length() -> BoxedStrategy<String> {
    value(&[
        "\"0.1 mm\"",
        "\"0.2 mm\"",
        "\"0.05 mm\"",
        "\"35 um\"",
        "0.0001",
        "\"1 mm\"",
    ])
}

fn point() -> BoxedStrategy<String> {
    prop_oneof![
        1 => Just("[0, 0, 0]".to_string()),
        3 => (length(), length(), length()).prop_map(|(a, b, c)| format!("[{a}, {b}, {c}]")),
        1 => token(),
    ]
    .boxed()
}

fn direction() -> BoxedStrategy<String> {
    prop_oneof![
        4 => select(&[
            "[0, 0, 1]", "[1, 0, 0]", "[0, 1, 0]", "[1, 1, 0]", "[0, 0, -1]",
            "[0.3, -0.2, 0.9]", "[0, 0, 0]",
        ][..])
        .prop_map(String::from),
        2 => (-1.0f64..1.0, -1.0f64..1.0, -1.0f64..1.0)
            .prop_map(|(a, b, c)| format!("[{a}, {b}, {c}]")),
        1 => token(),
    ]
    .boxed()
}

fn vertices() -> BoxedStrategy<String> {
    prop_oneof![
        3 => vec((-50i32..50, -50i32..50, -5i32..5), 0..7).prop_map(|pts| {
            let items: Vec<String> = pts
                .iter()
                .map(|(x, y, z)| format!("[\"{x} mm\", \"{y} mm\", \"{z} mm\"]"))
                .collect();
            format!("[{}]", items.join(", "))
        }),
        1 => Just("[[0, 0, 0], [0.02, 0, 0], [0.02, 0.01, 0], [0, 0.01, 0]]".to_string()),
        1 => token(),
    ]
    .boxed()
}

fn count() -> BoxedStrategy<String> {
    prop_oneof![
        5 => (1u32..=60).prop_map(|n| n.to_string()),
        1 => select(&["0", "1000", "100000", "1000000", "1000001", "2.5", "-3"][..])
            .prop_map(String::from),
        1 => token(),
    ]
    .boxed()
}

fn frequency() -> BoxedStrategy<String> {
    prop_oneof![
        4 => select(&[
            "\"50 Hz\"", "\"1 kHz\"", "\"25 kHz\"", "\"200 kHz\"", "\"1 MHz\"", "\"2 MHz\"",
            "1000", "\"0 Hz\"",
        ][..])
        .prop_map(String::from),
        1 => (0.001f64..10_000.0).prop_map(|x| format!("\"{x} kHz\"")),
        1 => token(),
    ]
    .boxed()
}

fn amplitude() -> BoxedStrategy<String> {
    value(&[
        "\"1 A\"",
        "\"0.5 A\"",
        "\"10 mA\"",
        "2",
        "\"0 A\"",
        "\"-1 A\"",
    ])
}

fn angle() -> BoxedStrategy<String> {
    value(&[
        "\"0 deg\"",
        "\"90 deg\"",
        "\"120 deg\"",
        "\"-30 deg\"",
        "1.5",
        "\"180 deg\"",
    ])
}

fn edge_time() -> BoxedStrategy<String> {
    value(&["\"50 ns\"", "\"200 ns\"", "\"1 us\"", "0", "\"10 ms\""])
}

fn current() -> BoxedStrategy<String> {
    let amplitude_key = select(&["peak", "rms", "peak_to_peak"][..]);
    let waveform = select(
        &[
            "sine",
            "square",
            "triangle",
            "sawtooth",
            "trapezoid",
            "cosine",
        ][..],
    );
    prop_oneof![
        3 => (frequency(), amplitude_key.clone(), amplitude(), option::of(angle())).prop_map(
            |(f, k, a, p)| {
                let phase = p.map(|p| format!(", phase = {p}")).unwrap_or_default();
                format!("{{ frequency = {f}, {k} = {a}{phase} }}")
            }
        ),
        3 => (
            waveform,
            frequency(),
            amplitude_key,
            amplitude(),
            option::of(count()),
            option::of(edge_time()),
            option::of(edge_time()),
            option::of(value(&["0.5", "0.25", "0.9", "0", "1"])),
        )
            .prop_map(|(w, f, k, a, h, rise, fall, duty)| {
                let mut s = format!("{{ waveform = \"{w}\", frequency = {f}, {k} = {a}");
                for (key, v) in [("harmonics", h), ("rise", rise), ("fall", fall), ("duty", duty)] {
                    if let Some(v) = v {
                        s.push_str(&format!(", {key} = {v}"));
                    }
                }
                s + " }"
            }),
        2 => vec((frequency(), amplitude(), option::of(angle())), 1..4).prop_map(|lines| {
            let items: Vec<String> = lines
                .iter()
                .map(|(f, a, p)| {
                    let phase = p.as_ref().map(|p| format!(", phase = {p}")).unwrap_or_default();
                    format!("{{ frequency = {f}, peak = {a}{phase} }}")
                })
                .collect();
            format!("{{ lines = [{}] }}", items.join(", "))
        }),
        1 => token(),
    ]
    .boxed()
}

/// `key = value` lines, each key kept with probability 0.9.
fn fields(entries: Vec<(&'static str, BoxedStrategy<String>)>) -> BoxedStrategy<Vec<String>> {
    entries
        .into_iter()
        .map(|(k, v)| {
            option::weighted(0.9, v)
                .prop_map(move |v| v.map(|v| format!("{k} = {v}")))
                .boxed()
        })
        .collect::<Vec<_>>()
        .prop_map(|lines| lines.into_iter().flatten().collect())
        .boxed()
}

/// The geometry of one source kind.
fn source_geometry() -> BoxedStrategy<(&'static str, Vec<String>)> {
    let turns_real = || value(&["1", "3", "10", "12.5", "40", "0.5", "100"]);
    prop_oneof![
        fields(vec![("radius", length())]).prop_map(|f| ("loop", f)),
        fields(vec![("width", length()), ("height", length())]).prop_map(|f| ("rectangle", f)),
        fields(vec![("vertices", vertices())]).prop_map(|f| ("polygon", f)),
        fields(vec![("vertices", vertices())]).prop_map(|f| ("polyline", f)),
        fields(vec![(
            "effective_area",
            value(&[
                "\"0.02 m2\"",
                "\"150 mm2\"",
                "\"1 cm2\"",
                "1e-4",
                "-0.01",
                "0"
            ])
        )])
        .prop_map(|f| ("dipole", f)),
        fields(vec![
            ("radius", length()),
            ("length", length()),
            ("turns", turns_real()),
            ("leads", value(&["\"axial\"", "\"none\""])),
        ])
        .prop_map(|f| ("helix", f)),
        fields(vec![
            ("major_radius", length()),
            ("minor_radius", length()),
            ("turns", count()),
        ])
        .prop_map(|f| ("toroid", f)),
        fields(vec![
            ("inner_radius", length()),
            ("outer_radius", length()),
            ("turns", turns_real()),
            ("shape", value(&["\"round\"", "\"square\""])),
        ])
        .prop_map(|f| ("spiral", f)),
        fields(vec![
            ("radius", length()),
            ("length", length()),
            ("opening", angle()),
            ("turns", count()),
        ])
        .prop_map(|f| ("saddle", f)),
        fields(vec![
            ("length", length()),
            ("separation", length()),
            ("twist_pitch", length()),
        ])
        .prop_map(|f| ("pair", f)),
        fields(vec![(
            "path",
            value(&[
                "\"scenes/harness-route.csv\"",
                "\"harness-route.csv\"",
                "\"Cargo.toml\"",
                "\"\"",
                "\"scenes\"",
            ])
        )])
        .prop_map(|f| ("file", f)),
    ]
    .boxed()
}

fn placement() -> Vec<(&'static str, BoxedStrategy<String>)> {
    vec![
        ("position", point()),
        ("axis", direction()),
        ("reference", direction()),
    ]
}

fn optional_fields(
    entries: Vec<(&'static str, BoxedStrategy<String>)>,
) -> BoxedStrategy<Vec<String>> {
    entries
        .into_iter()
        .map(|(k, v)| {
            option::weighted(0.3, v)
                .prop_map(move |v| v.map(|v| format!("{k} = {v}")))
                .boxed()
        })
        .collect::<Vec<_>>()
        .prop_map(|lines| lines.into_iter().flatten().collect())
        .boxed()
}

fn source_table() -> BoxedStrategy<String> {
    let mut extra = placement();
    extra.extend([
        ("wire_radius", small_length()),
        ("turns", count()),
        (
            "calibrate",
            (point(), value(&["\"12 uT\"", "\"1 mT\"", "0", "\"5 T\""]))
                .prop_map(|(at, b)| format!("{{ at = {at}, field = {b} }}"))
                .boxed(),
        ),
    ]);
    (
        source_geometry(),
        optional_fields(extra),
        option::weighted(0.95, current()),
    )
        .prop_map(|((kind, geometry), extra, current)| {
            let mut lines = vec!["[[source]]".to_string(), format!("kind = \"{kind}\"")];
            lines.extend(geometry);
            lines.extend(extra);
            lines.extend(current.map(|c| format!("current = {c}")));
            lines.join("\n")
        })
        .boxed()
}

fn victim_table() -> BoxedStrategy<String> {
    let geometry = prop_oneof![
        fields(vec![("radius", length())]).prop_map(|f| ("loop", f)),
        fields(vec![("width", length()), ("height", length())]).prop_map(|f| ("rectangle", f)),
        fields(vec![("vertices", vertices())]).prop_map(|f| ("polygon", f)),
        fields(vec![
            ("length", length()),
            ("height", length()),
            ("width", small_length())
        ])
        .prop_map(|f| ("trace", f)),
    ];
    let mut extra = placement();
    extra.extend([
        ("wire_radius", small_length()),
        ("turns", count()),
        (
            "limit",
            value(&[
                "\"5 uV\"",
                "\"1 mV\"",
                "\"-10 dBuV\"",
                "\"50 mV\"",
                "0.001",
                "0",
            ]),
        ),
        (
            "load",
            value(&["{ resistance = \"10 kohm\" }", "{ resistance = 0 }", "{ }"]),
        ),
    ]);
    (geometry, optional_fields(extra))
        .prop_map(|((kind, geometry), extra)| {
            let mut lines = vec!["[[victim]]".to_string(), format!("kind = \"{kind}\"")];
            lines.extend(geometry);
            lines.extend(extra);
            lines.join("\n")
        })
        .boxed()
}

fn material() -> BoxedStrategy<String> {
    value(&[
        "\"aluminium\"",
        "\"copper\"",
        "\"steel\"",
        "\"mu-metal\"",
        "\"alumimium\"",
        "{ conductivity = \"3.5e7 S/m\", relative_permeability = 1 }",
        "{ conductivity = \"58 MS/m\" }",
        "{ conductivity = -1 }",
    ])
}

/// `[[shield]]`, `[[enclosure]]`, `[[sweep]]` or `[[map]]`.
fn other_table() -> BoxedStrategy<String> {
    let shield = fields(vec![
        ("position", point()),
        ("axis", direction()),
        ("material", material()),
        ("thickness", small_length()),
        ("fitted", value(&["true", "false"])),
    ])
    .prop_map(|f| ("shield", f));
    let enclosure = fields(vec![
        ("position", point()),
        ("size", point()),
        ("material", material()),
        ("thickness", small_length()),
        ("contains", value(&["[\"v1\"]", "[]", "[\"s1\"]"])),
    ])
    .prop_map(|f| ("enclosure", f));
    let sweep = fields(vec![
        ("victim", value(&["\"v1\"", "\"v2\"", "\"s1\""])),
        (
            "vary",
            value(&["\"distance\"", "\"angle\"", "\"frequency\""]),
        ),
        ("along", direction()),
        ("about", direction()),
        (
            "from",
            value(&["\"1 mm\"", "\"0 deg\"", "\"50 Hz\"", "0", "\"-5 mm\""]),
        ),
        (
            "to",
            value(&["\"300 mm\"", "\"180 deg\"", "\"1 MHz\"", "1", "\"1 mm\""]),
        ),
        ("steps", value(&["2", "10", "37", "100000", "100001", "1"])),
        ("scale", value(&["\"log\"", "\"linear\""])),
        ("orientation", value(&["\"worst\"", "\"as-placed\""])),
        ("compare", value(&["[\"none\", \"x1\"]", "[\"x2\"]", "[]"])),
    ])
    .prop_map(|f| ("sweep", f));
    let map = fields(vec![
        ("kind", value(&["\"box\"", "\"plane\""])),
        ("min", point()),
        ("max", point()),
        (
            "step",
            value(&["\"1 mm\"", "\"5 mm\"", "\"0.5 mm\"", "\"20 um\"", "0.01"]),
        ),
        ("line", value(&["1", "2", "\"all\"", "0"])),
    ])
    .prop_map(|f| ("map", f));
    prop_oneof![shield, enclosure, sweep, map]
        .prop_map(|(table, f)| format!("[[{table}]]\n{}", f.join("\n")))
        .boxed()
}

fn generated_scene() -> BoxedStrategy<TomlText> {
    let solver = fields(vec![
        (
            "tolerance",
            value(&[
                "1e-3", "1e-4", "1e-5", "1e-6", "1e-8", "1e-12", "0.1", "0.5", "0",
            ]),
        ),
        ("wire_radius", small_length()),
    ]);
    (
        option::weighted(0.5, solver),
        vec(source_table(), 1..=2),
        vec(victim_table(), 0..=2),
        vec(other_table(), 0..=2),
    )
        .prop_map(|(solver, sources, victims, others)| {
            let mut parts = vec!["[scene]\ntitle = \"generated\"".to_string()];
            if let Some(s) = solver {
                parts.push(format!("[solver]\n{}", s.join("\n")));
            }
            // Ids in file order: s1, s2, v1, v2, x1, x2.
            let with_id = |table: &str, id: String| match table.split_once('\n') {
                Some((head, rest)) => format!("{head}\nid = \"{id}\"\n{rest}"),
                None => format!("{table}\nid = \"{id}\""),
            };
            for (i, s) in sources.iter().enumerate() {
                parts.push(with_id(s, format!("s{}", i + 1)));
            }
            for (i, v) in victims.iter().enumerate() {
                parts.push(with_id(v, format!("v{}", i + 1)));
            }
            for (i, o) in others.iter().enumerate() {
                parts.push(with_id(o, format!("x{}", i + 1)));
            }
            TomlText(parts.join("\n\n") + "\n")
        })
        .boxed()
}

// ---------------------------------------------------------------------------------
// Mutated demo scenes
// ---------------------------------------------------------------------------------

struct Demo {
    /// File name, for messages.
    file: String,
    /// The real path, passed to `Scene::parse` so a relative `path` resolves.
    path: String,
    text: String,
}

fn demos() -> &'static [Demo] {
    static DEMOS: OnceLock<Vec<Demo>> = OnceLock::new();
    DEMOS.get_or_init(|| {
        let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/scenes");
        let mut out: Vec<Demo> = std::fs::read_dir(dir)
            .expect("scenes/ is readable")
            .map(|e| e.expect("a directory entry").path())
            .filter(|p| p.extension().is_some_and(|e| e == "toml"))
            .map(|p| Demo {
                file: p.file_name().unwrap().to_string_lossy().into_owned(),
                path: p.display().to_string(),
                text: std::fs::read_to_string(&p).expect("a demo scene is UTF-8"),
            })
            .collect();
        out.sort_by(|a, b| a.file.cmp(&b.file));
        assert!(
            out.iter().any(|d| d.file == "shield-options.toml") && out.len() >= 5,
            "the demo scenes are in {dir}"
        );
        out
    })
}

#[derive(Clone, Debug)]
enum Typo {
    Drop(Index),
    Insert(Index, char),
    Transpose(Index),
}

#[derive(Clone, Debug)]
enum Mutation {
    DeleteLine(Index),
    DuplicateLine(Index),
    SwapLines(Index, Index),
    /// Everything after the first `=` of a line with values.
    ReplaceValue(Index, String),
    /// One value (string, number, array start...) of a line with values.
    ReplaceToken(Index, Index, String),
    /// The unit of one quantity string.
    ChangeUnit(Index, Index, String),
    /// One key or table name.
    MisspellKey(Index, Index, Typo),
    /// Cut the file at a byte (moved back to a character boundary).
    Truncate(Index),
    /// Insert text at a byte (moved back to a character boundary).
    Insert(Index, String),
}

#[derive(Clone)]
struct SceneCase {
    demo: Index,
    mutations: Vec<Mutation>,
}

impl SceneCase {
    fn demo(&self) -> &'static Demo {
        let all = demos();
        &all[self.demo.index(all.len())]
    }

    fn text(&self) -> String {
        self.mutations
            .iter()
            .fold(self.demo().text.clone(), |t, m| mutate(&t, m))
    }
}

impl fmt::Debug for SceneCase {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let text = self.text();
        writeln!(f, "{} after {:?}", self.demo().file, self.mutations)?;
        // The changed block: what lies between the common first and last lines.
        let old: Vec<&str> = self.demo().text.lines().collect();
        let new: Vec<&str> = text.lines().collect();
        let head = old.iter().zip(&new).take_while(|(a, b)| a == b).count();
        let tail = old[head..]
            .iter()
            .rev()
            .zip(new[head..].iter().rev())
            .take_while(|(a, b)| a == b)
            .count();
        writeln!(f, "changed from line {}:", head + 1)?;
        for line in &old[head..old.len() - tail] {
            writeln!(f, "  - {line:?}")?;
        }
        for line in &new[head..new.len() - tail] {
            writeln!(f, "  + {line:?}")?;
        }
        write!(f, "--- full text ---\n{text}\n--- end ---")
    }
}

/// Byte ranges `(start, end)` in a line.
type Spans = Vec<(usize, usize)>;

/// Byte ranges of the values and of the keys (and table names) on one line.
fn scan_line(line: &str) -> (Spans, Spans) {
    let b = line.as_bytes();
    let (mut values, mut keys) = (Vec::new(), Vec::new());
    let trimmed = line.trim_start();
    if trimmed.starts_with('[') {
        let start = line.len() - trimmed.len();
        let inner_start = start + trimmed.bytes().take_while(|&c| c == b'[').count();
        let inner_end = line[inner_start..]
            .find(']')
            .map_or(line.len(), |k| inner_start + k);
        if inner_end > inner_start {
            keys.push((inner_start, inner_end));
        }
        return (values, keys);
    }
    let next_is_eq = |mut j: usize| {
        while j < b.len() && (b[j] == b' ' || b[j] == b'\t') {
            j += 1;
        }
        j < b.len() && b[j] == b'='
    };
    let mut after_sep = false;
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'#' => break,
            b' ' | b'\t' | b'\r' | b'\n' => i += 1,
            b'=' | b'[' | b',' | b'{' => {
                after_sep = true;
                i += 1;
            }
            b']' | b'}' => {
                after_sep = false;
                i += 1;
            }
            b'"' | b'\'' => {
                let quote = b[i];
                let mut j = i + 1;
                while j < b.len() && b[j] != quote {
                    j += if b[j] == b'\\' && quote == b'"' { 2 } else { 1 };
                }
                let end = (j + 1).min(b.len());
                if next_is_eq(end) {
                    keys.push((i, end));
                } else if after_sep {
                    values.push((i, end));
                }
                after_sep = false;
                i = end;
            }
            _ => {
                let mut j = i;
                while j < b.len() && !b" \t\r\n,]}#=".contains(&b[j]) {
                    j += 1;
                }
                if next_is_eq(j) {
                    keys.push((i, j));
                } else if after_sep {
                    values.push((i, j));
                }
                after_sep = false;
                i = j.max(i + 1);
            }
        }
    }
    (values, keys)
}

/// The text as lines, each ending in '\n' (one is added to the last if missing).
fn lines_of(text: &str) -> Vec<String> {
    let mut lines: Vec<String> = text.split_inclusive('\n').map(String::from).collect();
    if let Some(last) = lines.last_mut()
        && !last.ends_with('\n')
    {
        last.push('\n');
    }
    lines
}

fn floor_boundary(text: &str, mut at: usize) -> usize {
    at = at.min(text.len());
    while !text.is_char_boundary(at) {
        at -= 1;
    }
    at
}

/// Applies `edit` to the `line_pick`-th of the lines that have what `select` finds,
/// on the `item_pick`-th item found.
fn edit_item(
    text: &str,
    line_pick: &Index,
    item_pick: &Index,
    select_items: impl Fn(&str) -> Vec<(usize, usize)>,
    edit: impl Fn(&str) -> Option<String>,
) -> String {
    let mut lines = lines_of(text);
    let candidates: Vec<usize> = (0..lines.len())
        .filter(|&n| !select_items(&lines[n]).is_empty())
        .collect();
    if candidates.is_empty() {
        return text.to_string();
    }
    let n = candidates[line_pick.index(candidates.len())];
    let items = select_items(&lines[n]);
    let (a, b) = items[item_pick.index(items.len())];
    if let Some(new) = edit(&lines[n][a..b]) {
        lines[n].replace_range(a..b, &new);
    }
    lines.concat()
}

/// For a quoted quantity `"<number> <unit>"`, the byte range of its unit.
fn unit_range(quoted: &str) -> Option<(usize, usize)> {
    let inner = quoted.strip_prefix('"')?.strip_suffix('"')?;
    let space = inner.rfind(' ')?;
    inner[..space].trim().parse::<f64>().ok()?;
    Some((1 + space + 1, 1 + inner.len()))
}

fn mutate(text: &str, m: &Mutation) -> String {
    let mut lines = lines_of(text);
    let n = lines.len();
    match m {
        Mutation::DeleteLine(i) if n > 0 => {
            lines.remove(i.index(n));
            lines.concat()
        }
        Mutation::DuplicateLine(i) if n > 0 => {
            let k = i.index(n);
            let copy = lines[k].clone();
            lines.insert(k + 1, copy);
            lines.concat()
        }
        Mutation::SwapLines(a, b) if n > 0 => {
            lines.swap(a.index(n), b.index(n));
            lines.concat()
        }
        Mutation::ReplaceValue(i, token) => {
            let with_values: Vec<usize> = (0..n)
                .filter(|&k| lines[k].contains('=') && !scan_line(&lines[k]).0.is_empty())
                .collect();
            if with_values.is_empty() {
                return text.to_string();
            }
            let k = with_values[i.index(with_values.len())];
            let eq = lines[k].find('=').expect("has =");
            lines[k] = format!("{}= {token}\n", &lines[k][..eq]);
            lines.concat()
        }
        Mutation::ReplaceToken(line, item, token) => edit_item(
            text,
            line,
            item,
            |l| scan_line(l).0,
            |_| Some(token.clone()),
        ),
        Mutation::ChangeUnit(line, item, unit) => edit_item(
            text,
            line,
            item,
            |l| {
                scan_line(l)
                    .0
                    .into_iter()
                    .filter(|&(a, b)| unit_range(&l[a..b]).is_some())
                    .collect()
            },
            |quoted| {
                let (a, b) = unit_range(quoted)?;
                Some(format!("{}{unit}{}", &quoted[..a], &quoted[b..]))
            },
        ),
        Mutation::MisspellKey(line, item, typo) => edit_item(
            text,
            line,
            item,
            |l| scan_line(l).1,
            |key| {
                let mut chars: Vec<char> = key.chars().collect();
                match typo {
                    Typo::Drop(at) if !chars.is_empty() => {
                        chars.remove(at.index(chars.len()));
                    }
                    Typo::Insert(at, c) => chars.insert(at.index(chars.len() + 1), *c),
                    Typo::Transpose(at) if chars.len() >= 2 => {
                        let k = at.index(chars.len() - 1);
                        chars.swap(k, k + 1);
                    }
                    _ => {}
                }
                Some(chars.into_iter().collect())
            },
        ),
        Mutation::Truncate(at) => {
            let cut = floor_boundary(text, at.index(text.len() + 1));
            text[..cut].to_string()
        }
        Mutation::Insert(at, s) => {
            let mut t = text.to_string();
            t.insert_str(floor_boundary(text, at.index(text.len() + 1)), s);
            t
        }
        _ => text.to_string(),
    }
}

fn typo() -> BoxedStrategy<Typo> {
    let ch = prop_oneof![
        3 => select(&['a', 'e', 's', '_', '-', 'x', '1', 'r'][..]),
        1 => any::<char>(),
    ];
    prop_oneof![
        any::<Index>().prop_map(Typo::Drop),
        (any::<Index>(), ch).prop_map(|(i, c)| Typo::Insert(i, c)),
        any::<Index>().prop_map(Typo::Transpose),
    ]
    .boxed()
}

fn insertion() -> BoxedStrategy<String> {
    prop_oneof![
        vec(any::<char>(), 1..8).prop_map(String::from_iter),
        vec(select(TOML_CHARS), 1..6).prop_map(String::from_iter),
        select(
            &[
                "\n",
                "[",
                "]",
                "=",
                "\"",
                "#",
                "{",
                "}",
                ",",
                "\\",
                "\r",
                "\u{0}",
                "\u{feff}",
                "[[source]]\n",
                "\n[[victim]]\n",
                "\nkind = \"loop\"\n",
                "\n[solver]\n",
                "\ntolerance = 1e-12\n",
                "\n[[shield]]\n",
            ][..]
        )
        .prop_map(String::from),
    ]
    .boxed()
}

fn mutation() -> BoxedStrategy<Mutation> {
    prop_oneof![
        1 => any::<Index>().prop_map(Mutation::DeleteLine),
        1 => any::<Index>().prop_map(Mutation::DuplicateLine),
        1 => (any::<Index>(), any::<Index>()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        2 => (any::<Index>(), token()).prop_map(|(l, t)| Mutation::ReplaceValue(l, t)),
        6 => (any::<Index>(), any::<Index>(), token())
            .prop_map(|(l, i, t)| Mutation::ReplaceToken(l, i, t)),
        3 => (any::<Index>(), any::<Index>(), select(UNIT_SYMBOLS))
            .prop_map(|(l, i, u)| Mutation::ChangeUnit(l, i, u.to_string())),
        3 => (any::<Index>(), any::<Index>(), typo())
            .prop_map(|(l, i, t)| Mutation::MisspellKey(l, i, t)),
        1 => any::<Index>().prop_map(Mutation::Truncate),
        2 => (any::<Index>(), insertion()).prop_map(|(a, s)| Mutation::Insert(a, s)),
    ]
    .boxed()
}

fn scene_case() -> BoxedStrategy<SceneCase> {
    (any::<Index>(), vec(mutation(), 1..=3))
        .prop_map(|(demo, mutations)| SceneCase { demo, mutations })
        .boxed()
}

fn check_scene_case(c: &SceneCase) -> Result<(), String> {
    check_parse(&c.demo().path, &c.text())
}

// ---------------------------------------------------------------------------------
// Scene properties
// ---------------------------------------------------------------------------------

const RANDOM_NAME: &str = "fuzz.toml";

/// The demo scenes themselves load, and the mutation machinery changes them.
#[test]
fn demo_scenes_load_and_mutations_apply() {
    for d in demos() {
        match parse_scene(&d.path, &d.text) {
            Ok(Some((Ok(scene), _))) => {
                check_scene(&scene).unwrap_or_else(|w| panic!("{}: {w}", d.file));
            }
            Ok(Some((Err(e), _))) => panic!("{} does not load: {e}", d.file),
            Ok(None) => panic!("not a forked run: every parse runs"),
            Err(why) => panic!("{}: {why}", d.file),
        }
        let (values, keys) = d
            .text
            .lines()
            .map(scan_line)
            .fold((0, 0), |(v, k), (a, b)| (v + a.len(), k + b.len()));
        assert!(
            values > 5 && keys > 5,
            "{}: scan found {values} values, {keys} keys",
            d.file
        );
    }
    let line = "current = { frequency = \"250 kHz\", peak = \"0.4863 A\" }";
    let (values, keys) = scan_line(line);
    let show = |r: Vec<(usize, usize)>| r.iter().map(|&(a, b)| &line[a..b]).collect::<Vec<_>>();
    assert_eq!(show(values), ["\"250 kHz\"", "\"0.4863 A\""]);
    assert_eq!(show(keys), ["current", "frequency", "peak"]);
    assert_eq!(unit_range("\"250 kHz\""), Some((5, 8)));
    assert_eq!(scan_line("[[source]]").1, [(2, 8)]);
}

#[test]
fn scene_loader_on_random_text() {
    run_property(
        "scene_loader_on_random_text",
        config(
            30_000,
            Some(concat!(module_path!(), "::scene_loader_on_random_text")),
        ),
        4,
        random_text(),
        |t| verdict(check_parse(RANDOM_NAME, &t.0)),
    );
}

#[test]
fn scene_loader_on_generated_scenes() {
    run_property(
        "scene_loader_on_generated_scenes",
        config(
            15_000,
            Some(concat!(
                module_path!(),
                "::scene_loader_on_generated_scenes"
            )),
        ),
        5,
        generated_scene(),
        |t| verdict(check_parse(RANDOM_NAME, &t.0)),
    );
}

#[test]
fn scene_loader_on_mutated_demo_scenes() {
    run_property(
        "scene_loader_on_mutated_demo_scenes",
        config(
            12_000,
            Some(concat!(
                module_path!(),
                "::scene_loader_on_mutated_demo_scenes"
            )),
        ),
        6,
        scene_case(),
        |c| verdict(check_scene_case(&c)),
    );
}

#[test]
fn scene_loader_is_deterministic() {
    run_property(
        "scene_loader_is_deterministic",
        config(
            1_500,
            Some(concat!(module_path!(), "::scene_loader_is_deterministic")),
        ),
        7,
        prop_oneof![
            scene_case().prop_map(|c| (c.demo().path.clone(), TomlText(c.text()))),
            generated_scene().prop_map(|t| (RANDOM_NAME.to_string(), t)),
        ],
        |(name, t)| verdict(check_twice(&name, &t.0)),
    );
}

/// The checks themselves refuse what they must refuse (so the properties can fail).
#[test]
fn the_checks_catch_bad_results() {
    let text = "[scene]\ntitle = \"x\"\n";
    let error = |line, col, key: &str, reason: &str| InputError {
        file: "t.toml".into(),
        line,
        col,
        key: key.into(),
        reason: reason.into(),
    };
    assert!(check_error(&error(2, 1, "scene.title", "bad"), "t.toml", text).is_ok());
    assert!(
        check_error(
            &error(2, 1, "source[2].lines[1].peak", "bad"),
            "t.toml",
            text
        )
        .is_ok()
    );
    for (bad, why) in [
        (error(0, 1, "", "bad"), "line 0"),
        (error(4, 1, "", "bad"), "line past the end"),
        (error(2, 0, "", "bad"), "column 0"),
        (error(2, 13, "", "bad"), "column past the end"),
        (error(2, 1, "", " "), "empty reason"),
        (error(2, 1, "scene..title", "bad"), "empty key part"),
        (error(2, 1, "source[0].radius", "bad"), "zero-based index"),
        (error(2, 1, "a b", "bad"), "not a key path"),
        (
            InputError {
                file: "/nonexistent/t.toml".into(),
                ..error(1, 1, "", "bad")
            },
            "unknown file",
        ),
    ] {
        assert!(check_error(&bad, "t.toml", text).is_err(), "{why}: {bad:?}");
    }
    assert!(check_quantity("3 mm", Dimension::Length, Expect::Value(3e-3)).is_ok());
    assert!(check_quantity("3 mm", Dimension::Length, Expect::Value(3e-2)).is_err());
    assert!(check_quantity("3 mm", Dimension::Length, Expect::Error).is_err());
    assert!(check_quantity("3 mm", Dimension::Frequency, Expect::Value(3e-3)).is_err());
    assert!(unit_message_line_rule("3 furlong", Dimension::Length).is_ok());
    let near = |text: &str, dim| {
        let (num, rest) = text.split_at(text.find(' ').unwrap_or(text.len()));
        expectation(num.parse().ok(), rest, dim)
    };
    assert!(matches!(near("2 kin", Dimension::Length), Expect::Error));
    assert!(matches!(near("2 mm2", Dimension::Area), Expect::Value(v) if (v - 2e-6).abs() < 1e-20));
    assert!(
        matches!(near("-20 dBuV", Dimension::Voltage), Expect::Value(v) if (v - 1e-7).abs() < 1e-20)
    );
    let mut scene = Scene::parse("t.toml", &demos()[0].text).expect("a demo scene loads");
    assert!(check_scene(&scene).is_ok());
    scene.sources[0].lines[0].frequency = f64::NAN;
    assert!(check_scene(&scene).is_err());
}

// ---------------------------------------------------------------------------------
// Long run
// ---------------------------------------------------------------------------------

#[derive(Debug, Clone)]
enum AnyCase {
    Quantity(QuantityCase),
    QuantityText(String, Dimension),
    Text(TomlText),
    Generated(TomlText),
    Mutated(SceneCase),
    Twice(SceneCase),
}

fn check_any(c: &AnyCase) -> Result<(), String> {
    match c {
        AnyCase::Quantity(q) => check_quantity(&q.text, q.dim, q.expect),
        AnyCase::QuantityText(t, d) => check_quantity(t, *d, Expect::Either),
        AnyCase::Text(t) => check_parse(RANDOM_NAME, &t.0),
        AnyCase::Generated(t) => check_parse(RANDOM_NAME, &t.0),
        AnyCase::Mutated(s) => check_scene_case(s),
        AnyCase::Twice(s) => check_twice(&s.demo().path, &s.text()),
    }
}

fn env_number(name: &str, default: u64) -> u64 {
    match std::env::var(name) {
        Ok(v) => v
            .replace('_', "")
            .parse()
            .unwrap_or_else(|_| panic!("{name}={v:?} is not a whole number")),
        Err(_) => default,
    }
}

/// Every property mixed, STRAYFLUX_FUZZ_CASES cases (default 1 000 000).
#[test]
#[ignore = "long fuzz run: STRAYFLUX_FUZZ_CASES=1000000 cargo test --test fuzz_scenes -- --ignored"]
fn long_fuzz_run() {
    let cases = env_number("STRAYFLUX_FUZZ_CASES", 1_000_000);
    let seed = env_number("STRAYFLUX_FUZZ_SEED", 20_240_601);
    let cases = u32::try_from(cases).expect("STRAYFLUX_FUZZ_CASES fits in u32");
    let start = Instant::now();
    run_property(
        "long_fuzz_run",
        config(cases, Some(concat!(module_path!(), "::long_fuzz_run"))),
        seed,
        prop_oneof![
            30 => near_valid_quantity().prop_map(AnyCase::Quantity),
            20 => (quantity_text(), select(DIMENSIONS))
                .prop_map(|(t, d)| AnyCase::QuantityText(t, d)),
            20 => random_text().prop_map(AnyCase::Text),
            10 => generated_scene().prop_map(AnyCase::Generated),
            17 => scene_case().prop_map(AnyCase::Mutated),
            3 => scene_case().prop_map(AnyCase::Twice),
        ],
        |c| verdict(check_any(&c)),
    );
    eprintln!(
        "long_fuzz_run: {cases} cases (seed {seed}) passed in {:.1?}",
        start.elapsed()
    );
}
