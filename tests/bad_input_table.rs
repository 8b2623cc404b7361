//! The README's bad-input table, row by row: each row has one case here that runs the
//! binary on the bad input and checks exit status 2, nothing on stdout, exactly one line
//! on stderr, the `FILE:LINE:COL: ` location (for file input) and the words the README
//! promises. `every_readme_row_has_a_case` fails when a row is added without a case.

mod cli_support;

use cli_support::run;
use std::path::PathBuf;

/// An 8 mm loop source (tests/fixtures/README.md).
const SOURCE: &str = include_str!("fixtures/loop-source.toml");

const VICTIM: &str = r#"
[[victim]]
id = "pickup"
kind = "loop"
radius = "5 mm"
position = [0, 0, "20 mm"]
"#;

fn plate(z_mm: f64, extra: &str) -> String {
    format!(
        "\n[[shield]]\nid = \"plate\"\nmaterial = \"copper\"\nthickness = \"1 mm\"\n\
         position = [0, 0, \"{z_mm} mm\"]\naxis = [0, 0, 1]\n{extra}"
    )
}

/// One row: the scene text (or raw bytes), extra files beside it, the command
/// (`{scene}` and `{dir}` are substituted), the file the location must name (the scene
/// unless given), and words of the message.
struct Case {
    row: &'static str,
    scene: Vec<u8>,
    extra: Vec<(&'static str, String)>,
    args: &'static [&'static str],
    located_in: Option<&'static str>,
    words: &'static str,
}

fn case(row: &'static str, scene: String, words: &'static str) -> Case {
    Case {
        row,
        scene: scene.into_bytes(),
        extra: vec![],
        args: &["check", "{scene}"],
        located_in: Some("{scene}"),
        words,
    }
}

fn cases() -> Vec<Case> {
    let sv = format!("{SOURCE}{VICTIM}");
    vec![
        case("misspelt or unknown key", SOURCE.replace("radius", "radus"), "did you mean `radius`"),
        case("missing key", SOURCE.replace("radius = \"8 mm\"\n", ""), "missing key `radius`"),
        case("wrong unit", SOURCE.replace("\"8 mm\"", "\"8 kHz\""), "is a frequency, expected a length"),
        case("wrong type", SOURCE.replace("\"8 mm\"", "true"), "found a boolean"),
        case("NaN or infinity", SOURCE.replace("\"8 mm\"", "nan"), "not a finite number"),
        case("zero or negative size", SOURCE.replace("\"8 mm\"", "\"-8 mm\""), "must be greater than zero"),
        case(
            "zero direction",
            format!("{SOURCE}axis = [0, 0, 0]\n"),
            "the zero vector has no direction",
        ),
        case(
            "reference along the axis",
            format!("{SOURCE}axis = [0, 0, 1]\nreference = [0, 0, 2]\n"),
            "is parallel to `axis`",
        ),
        case("duplicate id", format!("{SOURCE}{}", SOURCE), "is already used"),
        case(
            "reference to an unknown id",
            format!(
                "{sv}\n[[sweep]]\nid = \"sw\"\nvictim = \"pickupp\"\nvary = \"distance\"\n\
                 along = [0, 0, 1]\nfrom = \"1 mm\"\nto = \"10 mm\"\nsteps = 3\n"
            ),
            "no victim has id \"pickupp\"",
        ),
        case(
            "a winding too large",
            "[[source]]\nid = \"c\"\nkind = \"helix\"\nradius = \"10 mm\"\nlength = \"40 mm\"\n\
             turns = 100000000\ncurrent = { frequency = \"1 kHz\", peak = \"1 A\" }\n"
                .to_string(),
            "turns, got 100000000",
        ),
        case(
            "an absurd length",
            SOURCE.replace("\"8 mm\"", "1e200"),
            "is more than 1000 km",
        ),
        Case {
            row: "a `file` source with a bad row",
            scene: "[[source]]\nid = \"c\"\nkind = \"file\"\npath = \"route.csv\"\n\
                    current = { frequency = \"1 kHz\", peak = \"1 A\" }\n"
                .into(),
            extra: vec![("route.csv", "x,y,z\n0,0,0\n1,0,0\n1,abc,0\n".into())],
            args: &["check", "{scene}"],
            located_in: Some("{dir}/route.csv"),
            words: "\"abc\" is not a number",
        },
        case(
            "degenerate polygon",
            SOURCE
                .replace("kind = \"loop\"", "kind = \"polygon\"")
                .replace("radius = \"8 mm\"", "vertices = [[0, 0, 0], [0.01, 0, 0], [0.02, 0, 0]]"),
            "colinear",
        ),
        case(
            "zero-length segment",
            SOURCE
                .replace("kind = \"loop\"", "kind = \"polygon\"")
                .replace(
                    "radius = \"8 mm\"",
                    "vertices = [[0, 0, 0], [0.01, 0, 0], [0.01, 0, 0], [0, 0.01, 0]]",
                ),
            "zero-length segment",
        ),
        case(
            "wire thicker than the shape",
            SOURCE.replace("\"8 mm\"", "\"0.1 mm\"\nwire_radius = \"0.2 mm\""),
            "wire diameter",
        ),
        case(
            "two amplitudes",
            SOURCE.replace("peak = \"1 A\"", "peak = \"1 A\", rms = \"0.7 A\""),
            "give only one of",
        ),
        case(
            "trapezoid edges that do not fit",
            SOURCE.replace(
                "waveform = \"sine\", peak = \"1 A\", frequency = \"50 Hz\"",
                "waveform = \"trapezoid\", peak = \"1 A\", frequency = \"1 MHz\", rise = \"0.6 us\", fall = \"0.5 us\"",
            ),
            "is longer than the period",
        ),
        case("not TOML / not UTF-8", "[[source]\nid = 1\n".to_string(), "not valid TOML"),
        case(
            "unknown material",
            format!("{sv}{}", plate(8.0, "").replace("\"copper\"", "\"copperr\"")),
            "did you mean \"copper\"",
        ),
        case(
            "zero shield thickness",
            format!("{sv}{}", plate(8.0, "").replace("\"1 mm\"", "\"0 mm\"")),
            "must be greater than zero",
        ),
        case(
            "a sheet through a source or victim",
            format!("{sv}{}", plate(-0.5, "")),
            "a sheet may not cut a source",
        ),
        case(
            "sheets that are not parallel, or overlap",
            format!(
                "{sv}{}{}",
                plate(8.0, ""),
                plate(12.0, "").replace("\"plate\"", "\"b\"").replace("[0, 0, 1]", "[0, 0.2, 1]")
            ),
            "not parallel",
        ),
        case(
            "a sweep that passes through a sheet",
            format!(
                "{sv}{}\n[[sweep]]\nid = \"sw\"\nvictim = \"pickup\"\nvary = \"distance\"\n\
                 along = [0, 0, -1]\nfrom = \"1 mm\"\nto = \"15 mm\"\nsteps = 5\n",
                plate(8.0, "")
            ),
            "end the sweep before the sheet",
        ),
        case(
            "map points inside a sheet",
            format!(
                "{sv}{}\n[[map]]\nid = \"m\"\nkind = \"plane\"\nmin = [\"-5 mm\", 0, \"0 mm\"]\n\
                 max = [\"5 mm\", 0, \"12 mm\"]\nstep = \"1 mm\"\n",
                plate(8.0, "")
            ),
            "has grid points inside shield",
        ),
        case(
            "a victim outside its enclosure",
            format!(
                "{sv}\n[[enclosure]]\nid = \"can\"\nsize = [\"4 mm\", \"4 mm\", \"4 mm\"]\n\
                 position = [0, 0, \"20 mm\"]\nmaterial = \"steel\"\nthickness = \"0.3 mm\"\n\
                 contains = [\"pickup\"]\n"
            ),
            "is not inside enclosure",
        ),
        case(
            "a sweep or map that cannot run",
            format!(
                "{sv}\n[[sweep]]\nid = \"sw\"\nvictim = \"pickup\"\nvary = \"distance\"\n\
                 along = [1, 0, 0]\nfrom = \"1 mm\"\nto = \"1 mm\"\nsteps = 3\n"
            ),
            "the sweep would cover no range",
        ),
        Case {
            row: "a map too large for memory",
            scene: format!(
                "{SOURCE}\n[[map]]\nid = \"m\"\nkind = \"box\"\nmin = [\"-1 m\", \"-1 m\", \"-1 m\"]\n\
                 max = [\"1 m\", \"1 m\", \"1 m\"]\ncells = [600, 600, 600]\n"
            )
            .into_bytes(),
            extra: vec![],
            args: &["map", "{scene}", "--out", "{dir}/out", "--max-memory", "1 GiB"],
            located_in: None,
            words: "of memory, more than the limit",
        },
        Case {
            row: "probe point on a wire",
            scene: SOURCE.as_bytes().to_vec(),
            extra: vec![],
            args: &["probe", "{scene}", "--at", "8,0,0 mm"],
            located_in: None,
            words: "lies inside the wire of source \"s\"",
        },
        Case {
            row: "bad `--at` or CSV row",
            scene: SOURCE.as_bytes().to_vec(),
            extra: vec![],
            args: &["probe", "{scene}", "--at", "1,2"],
            located_in: None,
            words: "expected three coordinates",
        },
    ]
}

fn readme_rows() -> Vec<String> {
    let readme =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).unwrap();
    let mut rows = Vec::new();
    let mut inside = false;
    for line in readme.lines() {
        if line.starts_with("| bad input | example message |") {
            inside = true;
            continue;
        }
        if inside {
            if !line.starts_with('|') {
                break;
            }
            if line.starts_with("|---") {
                continue;
            }
            rows.push(line.split('|').nth(1).unwrap().trim().to_string());
        }
    }
    rows
}

#[test]
fn every_readme_row_has_a_case() {
    let rows = readme_rows();
    assert!(
        rows.len() >= 20,
        "the README table was not found ({} rows)",
        rows.len()
    );
    let cases = cases();
    for r in &rows {
        assert!(
            cases.iter().any(|c| c.row == r),
            "README row `{r}` has no case"
        );
    }
    for c in &cases {
        assert!(
            rows.iter().any(|r| r == c.row),
            "case `{}` is not a README row",
            c.row
        );
    }
}

#[test]
fn every_row_gives_exit_two_and_one_located_line() {
    let base = std::env::temp_dir().join(format!("strayflux-table-{}", std::process::id()));
    for (i, c) in cases().into_iter().enumerate() {
        let dir: PathBuf = base.join(format!("case{i}"));
        std::fs::create_dir_all(&dir).unwrap();
        let scene = dir.join("scene.toml");
        std::fs::write(&scene, &c.scene).unwrap();
        for (name, text) in &c.extra {
            std::fs::write(dir.join(name), text).unwrap();
        }
        let sub = |a: &str| {
            a.replace("{scene}", scene.to_str().unwrap())
                .replace("{dir}", dir.to_str().unwrap())
        };
        let args: Vec<String> = c.args.iter().map(|a| sub(a)).collect();
        let argv: Vec<&str> = args.iter().map(String::as_str).collect();
        let out = run(&argv);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{}: {err}", c.row);
        assert!(out.stdout.is_empty(), "{}: stdout not empty", c.row);
        assert_eq!(err.trim_end().lines().count(), 1, "{}: {err}", c.row);
        assert!(
            err.contains(c.words),
            "{}: expected `{}` in `{err}`",
            c.row,
            c.words
        );
        assert!(!err.contains("panicked"), "{}: {err}", c.row);
        if let Some(file) = c.located_in {
            let prefix = format!("{}:", sub(file));
            assert!(
                err.starts_with(&prefix),
                "{}: expected `{prefix}LINE:COL:` in `{err}`",
                c.row
            );
            let rest = &err[prefix.len()..];
            let mut parts = rest.splitn(3, ':');
            let line: usize = parts.next().unwrap().parse().unwrap_or(0);
            let col: usize = parts.next().unwrap_or("").parse().unwrap_or(0);
            assert!(line >= 1 && col >= 1, "{}: no LINE:COL in `{err}`", c.row);
        }
        assert!(
            !dir.join("out").exists(),
            "{}: an output folder was created",
            c.row
        );
    }
}

// ---------------------------------------------------------------------------------------
// Further bad input, beyond the README's rows: each case names the exact line (and,
// where known, column) and the dotted key that the one-line message must start with.
// Gathered here from the CLI tests so that every bad-input case is in one table.

/// A loop source on its own (the CLI tests' `GOOD_SOURCE`).
const GOOD_SOURCE: &str = SOURCE;

/// A 10 mm loop at the origin driven at 100 kHz, a victim loop 20 mm above it (the
/// shield cases' base scene; tests/fixtures/README.md).
const SHIELD_BASE: &str = include_str!("fixtures/coil-over-pickup.toml");

fn sheet(id: &str, material: &str, thickness: &str, z_mm: f64, axis: &str) -> String {
    format!(
        "\n[[shield]]\nid = \"{id}\"\nmaterial = {material}\nthickness = \"{thickness}\"\n\
         position = [0, 0, \"{z_mm} mm\"]\naxis = {axis}\n"
    )
}

/// One `check` case: the scene, the line and column (when pinned) of the location and
/// the key and words the message must carry.
struct Located {
    name: &'static str,
    scene: String,
    line: usize,
    col: Option<usize>,
    key: &'static str,
    words: &'static str,
}

fn at(
    name: &'static str,
    scene: impl Into<String>,
    (line, col): (usize, Option<usize>),
    key: &'static str,
    words: &'static str,
) -> Located {
    Located {
        name,
        scene: scene.into(),
        line,
        col,
        key,
        words,
    }
}

fn located_cases() -> Vec<Located> {
    let g = GOOD_SOURCE;
    let colinear = r#"[[source]]
id = "p"
kind = "polygon"
vertices = [[0, 0, 0], ["1 mm", 0, 0], ["2 mm", 0, 0]]
current = { peak = "1 A", frequency = "50 Hz" }
"#;
    let b = SHIELD_BASE;
    let plate = |z: f64| sheet("plate", "\"copper\"", "1 mm", z, "[0, 0, 1]");
    vec![
        // Scene keys and values (formerly tests/cli.rs).
        at(
            "misspelt",
            g.replace("radius", "radus"),
            (4, Some(1)),
            "source[1].radus",
            "did you mean `radius`",
        ),
        at(
            "unknown",
            format!("{g}colour = \"red\"\n"),
            (6, Some(1)),
            "source[1].colour",
            "unknown key",
        ),
        at(
            "missing",
            g.replace("radius = \"8 mm\"\n", ""),
            (1, Some(1)),
            "source[1].radius",
            "missing key",
        ),
        at(
            "unit",
            g.replace("\"8 mm\"", "\"8 kHz\""),
            (4, Some(10)),
            "source[1].radius",
            "frequency",
        ),
        at(
            "nan",
            g.replace("\"8 mm\"", "nan"),
            (4, Some(10)),
            "source[1].radius",
            "not a finite number",
        ),
        at(
            "inf",
            g.replace("\"8 mm\"", "inf"),
            (4, Some(10)),
            "source[1].radius",
            "not a finite number",
        ),
        at(
            "axis",
            format!("{g}axis = [0, 0, 0]\n"),
            (6, Some(8)),
            "source[1].axis",
            "zero vector",
        ),
        at(
            "neg",
            g.replace("\"8 mm\"", "\"-8 mm\""),
            (4, Some(10)),
            "source[1].radius",
            "greater than zero",
        ),
        at(
            "type",
            g.replace("\"8 mm\"", "true"),
            (4, Some(10)),
            "source[1].radius",
            "found a boolean",
        ),
        at(
            "dup",
            format!("{g}[[victim]]\nid = \"s\"\nkind = \"loop\"\nradius = \"5 mm\"\n"),
            (7, Some(1)),
            "victim[1].id",
            "already used",
        ),
        at(
            "colinear",
            colinear,
            (4, Some(12)),
            "source[1].vertices",
            "colinear",
        ),
        at(
            "zeroseg",
            colinear.replace("[\"2 mm\", 0, 0]", "[\"1 mm\", 0, 0]"),
            (4, Some(40)),
            "source[1].vertices[3]",
            "zero-length",
        ),
        at(
            "nottoml",
            "[[source]\nid = 1\n",
            (1, Some(10)),
            "",
            "not valid TOML",
        ),
        at(
            "kind",
            g.replace("\"loop\"", "\"lop\""),
            (3, Some(8)),
            "source[1].kind",
            "did you mean \"loop\"",
        ),
        at(
            "both",
            g.replace("peak = \"1 A\"", "peak = \"1 A\", rms = \"1 A\""),
            (5, Some(46)),
            "source[1].current.rms",
            "only one of",
        ),
        at(
            "wire",
            g.replace("\"8 mm\"", "\"0.1 mm\""),
            (4, Some(10)),
            "source[1].radius",
            "wire diameter",
        ),
        at(
            "freq",
            g.replace("\"50 Hz\"", "\"0 Hz\""),
            (5, Some(58)),
            "source[1].current.frequency",
            "greater than zero",
        ),
        at(
            "badid",
            g.replace("id = \"s\"", "id = \"my coil\""),
            (2, Some(6)),
            "source[1].id",
            "not a valid id",
        ),
        at(
            "shieldpos",
            format!("{g}[[shield]]\nid = \"plate\"\n"),
            (6, Some(1)),
            "shield[1].position",
            "missing key `position`",
        ),
        at(
            "nosource",
            "[scene]\ntitle = \"empty\"\n",
            (1, Some(1)),
            "",
            "no [[source]]",
        ),
        at(
            "toptypo",
            g.replace("[[source]]", "[[sources]]"),
            (1, Some(3)),
            "sources",
            "did you mean `source`",
        ),
        at(
            "ref",
            format!("{g}reference = [0, 0, 2]\n"),
            (6, Some(13)),
            "source[1].reference",
            "parallel",
        ),
        // Shields (formerly tests/cli_shields.rs).
        at(
            "unknown material names the near miss",
            format!(
                "{b}{}",
                sheet("plate", "\"copperr\"", "1 mm", 8.0, "[0, 0, 1]")
            ),
            (16, None),
            "shield[1].material",
            "did you mean \"copper\"",
        ),
        at(
            "zero thickness",
            format!(
                "{b}{}",
                sheet("plate", "\"copper\"", "0 mm", 8.0, "[0, 0, 1]")
            ),
            (17, None),
            "shield[1].thickness",
            "greater than zero",
        ),
        // The sheet fills z = -0.5 .. 0.5 mm: the source loop lies in it.
        at(
            "a sheet through the source",
            format!("{b}{}", plate(-0.5)),
            (18, None),
            "shield[1].position",
            "source \"coil\"",
        ),
        at(
            "a sheet through the victim",
            format!("{b}{}", plate(19.5)),
            (18, None),
            "shield[1].position",
            "victim \"pickup\"",
        ),
        at(
            "sheets must be parallel",
            format!(
                "{b}{}{}",
                sheet("a", "\"copper\"", "1 mm", 8.0, "[0, 0, 1]"),
                sheet("b", "\"copper\"", "1 mm", 12.0, "[0, 0.1, 1]")
            ),
            (26, None),
            "shield[2].axis",
            "not parallel",
        ),
        at(
            "sheets must not overlap",
            format!(
                "{b}{}{}",
                sheet("a", "\"copper\"", "2 mm", 8.0, "[0, 0, 1]"),
                sheet("b", "\"copper\"", "1 mm", 9.0, "[0, 0, 1]")
            ),
            (26, None),
            "shield[2].axis",
            "overlaps",
        ),
        at(
            "a custom material below unit permeability",
            format!(
                "{b}{}",
                sheet(
                    "plate",
                    "{ conductivity = \"1e7 S/m\", relative_permeability = 0.5 }",
                    "1 mm",
                    8.0,
                    "[0, 0, 1]"
                )
            ),
            (16, None),
            "shield[1].material.relative_permeability",
            "at least 1",
        ),
        at(
            "a sweep through the sheet",
            format!(
                "{b}{}\n[[sweep]]\nid = \"s\"\nvictim = \"pickup\"\nvary = \"distance\"\n\
                 along = [0, 0, -1]\nfrom = \"1 mm\"\nto = \"15 mm\"\nsteps = 5\n",
                plate(8.0)
            ),
            (27, None),
            "sweep[1].to",
            "shield",
        ),
        at(
            "map points inside a sheet",
            format!(
                "{b}{}\n[[map]]\nid = \"m\"\nkind = \"plane\"\nmin = [\"-5 mm\", 0, \"0 mm\"]\n\
                 max = [\"5 mm\", 0, \"12 mm\"]\nstep = \"1 mm\"\n",
                plate(8.0)
            ),
            (21, None),
            "map[1]",
            "inside shield \"plate\"",
        ),
        at(
            "a victim outside its enclosure",
            format!(
                "{b}\n[[enclosure]]\nid = \"can\"\nsize = [\"4 mm\", \"4 mm\", \"4 mm\"]\n\
                 position = [0, 0, \"20 mm\"]\nmaterial = \"steel\"\nthickness = \"0.3 mm\"\n\
                 contains = [\"pickup\"]\n"
            ),
            (20, None),
            "enclosure[1].contains",
            "not inside enclosure",
        ),
        at(
            "compare with an unknown shield names the near miss",
            format!(
                "{b}{}\n[[sweep]]\nid = \"s\"\nvictim = \"pickup\"\nvary = \"frequency\"\n\
                 from = \"1 kHz\"\nto = \"1 MHz\"\nsteps = 4\ncompare = [\"none\", \"plait\"]\n",
                plate(8.0)
            ),
            (28, None),
            "sweep[1].compare[2]",
            "did you mean \"plate\"",
        ),
        // A magnetic core is a known feature the tool does not model: the message says so
        // and points to `calibrate` and the dipole kind, not "unknown key".
        at(
            "core on a source",
            format!("{g}core = \"ferrite\"\n"),
            (6, Some(1)),
            "source[1].core",
            "magnetic cores are not modelled",
        ),
        at(
            "core permeability on a source points to calibrate",
            format!("{g}mu_r = 2000\n"),
            (6, Some(1)),
            "source[1].mu_r",
            "calibrate",
        ),
        at(
            "core gap on a source points to the dipole kind",
            g.replace("kind = \"loop\"", "air_gap = \"0.5 mm\"\nkind = \"loop\""),
            (3, Some(1)),
            "source[1].air_gap",
            "kind = \"dipole\"",
        ),
        at(
            "core material before a missing key still names the core",
            format!(
                "{}permeability = 3000\n",
                g.replace("radius = \"8 mm\"\n", "")
            ),
            (5, Some(1)),
            "source[1].permeability",
            "not modelled",
        ),
    ]
}

/// The checks every located case passes: exit status 2, nothing on stdout, one line on
/// stderr starting with `FILE:LINE:COL: key` (or `FILE:LINE:` and carrying `: key: `
/// when the column is not pinned), the promised words, and no panic.
fn check_located(
    name: &str,
    path: &std::path::Path,
    out: &std::process::Output,
    (line, col): (usize, Option<usize>),
    key: &str,
    words: &str,
) -> Result<(), String> {
    let err = String::from_utf8_lossy(&out.stderr);
    if out.status.code() != Some(2) {
        return Err(format!(
            "{name}: exit {:?}, stderr `{err}`",
            out.status.code()
        ));
    }
    if !out.stdout.is_empty() || err.trim_end().lines().count() != 1 || err.contains("panicked") {
        return Err(format!(
            "{name}: not one clean line on stderr and none on stdout: `{err}`"
        ));
    }
    let (prefix, has_key) = match col {
        Some(c) => (format!("{}:{line}:{c}: {key}", path.display()), true),
        None => (
            format!("{}:{line}:", path.display()),
            err.contains(&format!(": {key}: ")),
        ),
    };
    if !err.starts_with(&prefix) || !has_key || !err.contains(words) {
        return Err(format!(
            "{name}: expected `{prefix}` with key `{key}` and `{words}`, got `{}`",
            err.trim_end()
        ));
    }
    Ok(())
}

#[test]
fn further_bad_scenes_give_exit_two_and_one_line_at_the_key() {
    let dir = std::env::temp_dir().join(format!("strayflux-located-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut failures = Vec::new();
    for (i, c) in located_cases().into_iter().enumerate() {
        let path = dir.join(format!("case{i}.toml"));
        std::fs::write(&path, &c.scene).unwrap();
        let out = run(&["check", path.to_str().unwrap()]);
        if let Err(why) = check_located(c.name, &path, &out, (c.line, c.col), c.key, c.words) {
            failures.push(why);
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

// ---------------------------------------------------------------------------------------
// Unreadable files and bad arguments (formerly tests/cli.rs): exit 2 and a message that
// names the file and place, or the argument.

/// One case: the command (`{scene}` is a good scene with a 10 mm loop source, `{dir}`
/// the case's folder), a file to write first (name, bytes), and what stderr must start
/// with (after substitution) or contain.
struct ArgCase {
    name: &'static str,
    args: Vec<String>,
    file: Option<(&'static str, Vec<u8>)>,
    starts_with: Option<&'static str>,
    contains: &'static str,
}

fn arg_cases() -> Vec<ArgCase> {
    let argv = |a: &[&str]| a.iter().map(|s| s.to_string()).collect::<Vec<_>>();
    let mut cases = vec![
        ArgCase {
            name: "a scene file that does not exist",
            args: argv(&["check", "/nonexistent/scene.toml"]),
            file: None,
            starts_with: Some("/nonexistent/scene.toml:1:1:"),
            contains: "",
        },
        ArgCase {
            name: "a scene file that is not UTF-8",
            args: argv(&["check", "{dir}/latin1.toml"]),
            file: Some(("latin1.toml", b"[scene]\ntitle = \"caf\xe9\"\n".to_vec())),
            starts_with: None,
            contains: ":2:1: the scene file is not UTF-8",
        },
        // A point on the source wire is refused rather than answered with a huge number.
        ArgCase {
            name: "probe on the source wire",
            args: argv(&["probe", "{scene}", "--at", "10,0,0 mm"]),
            file: None,
            starts_with: None,
            contains: "inside the wire",
        },
        ArgCase {
            name: "a bad row in a --points file",
            args: argv(&["probe", "{scene}", "--points", "{dir}/bad.csv"]),
            file: Some(("bad.csv", b"x,y,z\n0,0,0.01\n0,zero,0\n".to_vec())),
            starts_with: Some("{dir}/bad.csv:3:3:"),
            contains: "",
        },
    ];
    for at in ["1,2", "a,b,c", "1,2,3 furlong", "1,2,nan"] {
        cases.push(ArgCase {
            name: "a bad --at",
            args: argv(&["probe", "{scene}", "--at", at]),
            file: None,
            starts_with: None,
            contains: "--at",
        });
    }
    cases
}

#[test]
fn unreadable_files_and_bad_arguments_exit_two() {
    let base = std::env::temp_dir().join(format!("strayflux-args-{}", std::process::id()));
    for (i, c) in arg_cases().into_iter().enumerate() {
        let dir = base.join(format!("case{i}"));
        std::fs::create_dir_all(&dir).unwrap();
        let scene = dir.join("good.toml");
        std::fs::write(&scene, SHIELD_BASE).unwrap();
        if let Some((name, bytes)) = &c.file {
            std::fs::write(dir.join(name), bytes).unwrap();
        }
        let sub = |a: &str| {
            a.replace("{scene}", scene.to_str().unwrap())
                .replace("{dir}", dir.to_str().unwrap())
        };
        let args: Vec<String> = c.args.iter().map(|a| sub(a)).collect();
        let argv: Vec<&str> = args.iter().map(String::as_str).collect();
        let out = run(&argv);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{} {args:?}: {err}", c.name);
        assert!(!err.contains("panicked"), "{}: {err}", c.name);
        if let Some(prefix) = c.starts_with {
            let prefix = sub(prefix);
            assert!(
                err.starts_with(&prefix),
                "{}: expected `{prefix}` in `{err}`",
                c.name
            );
        }
        assert!(
            err.contains(c.contains),
            "{}: expected `{}` in `{err}`",
            c.name,
            c.contains
        );
    }
}

// ---------------------------------------------------------------------------------------
// Windings, `file` sources and `calibrate` (formerly tests/cli_windings.rs): the
// locations are found in the scene text (`value_of`, `locate`), so each case keeps its
// own small scene; every case goes through the same checks as the table above.

mod windings {
    use super::cli_support::run;
    use std::path::PathBuf;

    /// The test's scratch folder.
    fn scratch() -> PathBuf {
        let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("bad-input-windings");
        std::fs::create_dir_all(&dir).unwrap();
        dir
    }

    /// Writes `text` to a fresh file named `name` in the scratch folder.
    fn write(name: &str, text: &str) -> PathBuf {
        let path = scratch().join(name);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent).unwrap();
        }
        std::fs::write(&path, text).unwrap();
        path
    }

    /// One-based line and column (in characters) where `needle` starts in `text`, plus
    /// `skip` characters (to step from `key = ` to the value). Panics if absent.
    fn locate(text: &str, needle: &str, skip: usize) -> (usize, usize) {
        let at = text
            .find(needle)
            .unwrap_or_else(|| panic!("`{needle}` not in scene"));
        let before = &text[..at];
        let line = before.matches('\n').count() + 1;
        let start = before.rfind('\n').map_or(0, |i| i + 1);
        (line, text[start..at].chars().count() + 1 + skip)
    }

    /// Where the value of `key = value` starts, for the first `needle` that begins with the
    /// key (e.g. `turns = 0`).
    fn value_of(text: &str, needle: &str) -> (usize, usize) {
        let eq = needle.find("= ").expect("needle has `= `") + 2;
        locate(text, needle, needle[..eq].chars().count())
    }

    /// Runs `check` on a bad scene; asserts exit 2, one line on stderr, nothing on stdout,
    /// and that the line starts with `FILE:LINE:COL: key` and contains `words` (the pattern
    /// of `assert_bad` in tests/cli.rs).
    fn assert_bad(name: &str, text: &str, at: (usize, usize), key: &str, words: &str) {
        if let Err(why) = check_bad(name, text, at, key, words) {
            panic!("{why}");
        }
    }

    /// [`assert_bad`] as a result, for tests that report every failing case at once.
    fn check_bad(
        name: &str,
        text: &str,
        (line, col): (usize, usize),
        key: &str,
        words: &str,
    ) -> Result<(), String> {
        let path = write(name, text);
        let out = run(&["check", path.to_str().unwrap()]);
        super::check_located(name, &path, &out, (line, Some(col)), key, words)
    }

    const CURRENT: &str =
        "current = { waveform = \"sine\", peak = \"1 A\", frequency = \"50 Hz\" }\n";

    fn helix_scene(body: &str) -> String {
        format!("[[source]]\nid = \"coil\"\nkind = \"helix\"\n{body}{CURRENT}")
    }

    fn kind_scene(kind: &str, body: &str) -> String {
        format!("[[source]]\nid = \"w\"\nkind = \"{kind}\"\n{body}{CURRENT}")
    }

    #[test]
    fn bad_winding_geometry_gives_exit_two_and_a_located_line() {
        // Non-positive turns.
        let t = helix_scene("radius = \"8 mm\"\nlength = \"12 mm\"\nturns = 0\n");
        assert_bad(
            "helix-turns0.toml",
            &t,
            value_of(&t, "turns = 0"),
            "source[1].turns",
            "must be between 0 and 1e6 turns",
        );
        let t = helix_scene("radius = \"8 mm\"\nlength = \"12 mm\"\nturns = -4.5\n");
        assert_bad(
            "helix-turns-neg.toml",
            &t,
            value_of(&t, "turns = -4.5"),
            "source[1].turns",
            "must be between 0 and 1e6 turns",
        );
        let t = kind_scene(
            "toroid",
            "major_radius = \"20 mm\"\nminor_radius = \"5 mm\"\nturns = 0\n",
        );
        assert_bad(
            "toroid-turns0.toml",
            &t,
            value_of(&t, "turns = 0"),
            "source[1].turns",
            "must be at least 1",
        );
        let t = kind_scene(
            "toroid",
            "major_radius = \"20 mm\"\nminor_radius = \"5 mm\"\nturns = 12.5\n",
        );
        assert_bad(
            "toroid-turns-frac.toml",
            &t,
            value_of(&t, "turns = 12.5"),
            "source[1].turns",
            "whole number",
        );
        // Radii in the wrong order.
        let t = kind_scene(
            "spiral",
            "inner_radius = \"6 mm\"\nouter_radius = \"6 mm\"\nturns = 3\n",
        );
        assert_bad(
            "spiral-radii.toml",
            &t,
            value_of(&t, "outer_radius = \"6 mm\""),
            "source[1].outer_radius",
            "must be larger than inner_radius",
        );
        let t = kind_scene(
            "toroid",
            "major_radius = \"20 mm\"\nminor_radius = \"25 mm\"\nturns = 10\n",
        );
        assert_bad(
            "toroid-radii.toml",
            &t,
            value_of(&t, "minor_radius = \"25 mm\""),
            "source[1].minor_radius",
            "must be smaller than major_radius",
        );
        // A twist pitch that is not positive.
        for (name, pitch) in [
            ("pair-pitch0.toml", "\"0 mm\""),
            ("pair-pitchneg.toml", "-0.01"),
        ] {
            let t = kind_scene(
                "pair",
                &format!("length = \"1 m\"\nseparation = \"2 mm\"\ntwist_pitch = {pitch}\n"),
            );
            assert_bad(
                name,
                &t,
                value_of(&t, &format!("twist_pitch = {pitch}")),
                "source[1].twist_pitch",
                "must be greater than zero",
            );
        }
        let t = kind_scene("pair", "length = \"5 mm\"\nseparation = \"5 mm\"\n");
        assert_bad(
            "pair-sep.toml",
            &t,
            value_of(&t, "separation = \"5 mm\""),
            "source[1].separation",
            "smaller than the cable length",
        );
        // Saddle openings of 180° or more make the two coils overlap.
        for (name, opening) in [
            ("saddle-180.toml", "180 deg"),
            ("saddle-200.toml", "200 deg"),
        ] {
            let t = kind_scene(
                "saddle",
                &format!(
                    "radius = \"30 mm\"\nlength = \"80 mm\"\nopening = \"{opening}\"\nturns = 10\n"
                ),
            );
            assert_bad(
                name,
                &t,
                value_of(&t, &format!("opening = \"{opening}\"")),
                "source[1].opening",
                "must be between 0 and 180 deg",
            );
        }
        // Unknown shape and leads strings.
        let t = kind_scene(
            "spiral",
            "inner_radius = \"2 mm\"\nouter_radius = \"9 mm\"\nturns = 4\nshape = \"hexagon\"\n",
        );
        assert_bad(
            "spiral-shape.toml",
            &t,
            value_of(&t, "shape = \"hexagon\""),
            "source[1].shape",
            "unknown shape \"hexagon\"",
        );
        let t =
            helix_scene("radius = \"8 mm\"\nlength = \"12 mm\"\nturns = 10\nleads = \"radial\"\n");
        assert_bad(
            "helix-leads.toml",
            &t,
            value_of(&t, "leads = \"radial\""),
            "source[1].leads",
            "unknown leads \"radial\"",
        );
        // A misspelt key.
        let t = kind_scene(
            "pair",
            "length = \"1 m\"\nseparation = \"2 mm\"\ntwist_pich = \"25 mm\"\n",
        );
        assert_bad(
            "pair-typo.toml",
            &t,
            locate(&t, "twist_pich", 0),
            "source[1].twist_pich",
            "did you mean `twist_pitch`",
        );
    }

    #[test]
    fn misspelt_and_missing_winding_keys_name_the_right_key() {
        // A misspelt key is the one named, not a correctly spelt sibling that looks like the
        // missing key (major_radius is a near-spelling of minor_radius, inner_radius of
        // outer_radius); and a key left out is "missing" at the table (as for `loop` in
        // tests/cli.rs), even when such a sibling is present. Every case is run and the
        // failures are listed together.
        let mut fails = Vec::new();
        for (kind, body, typo, want) in [
            (
                "toroid",
                "major_radius = \"20 mm\"\nminr_radius = \"5 mm\"\nturns = 10\n",
                "minr_radius",
                "minor_radius",
            ),
            (
                "spiral",
                "inner_radius = \"2 mm\"\nouter_radus = \"9 mm\"\nturns = 4\n",
                "outer_radus",
                "outer_radius",
            ),
            (
                "spiral",
                "iner_radius = \"2 mm\"\nouter_radius = \"9 mm\"\nturns = 4\n",
                "iner_radius",
                "inner_radius",
            ),
            (
                "helix",
                "radius = \"8 mm\"\nlenght = \"9 mm\"\nturns = 4\n",
                "lenght",
                "length",
            ),
        ] {
            let t = kind_scene(kind, body);
            fails.extend(
                check_bad(
                    &format!("{kind}-typo-{typo}.toml"),
                    &t,
                    locate(&t, typo, 0),
                    &format!("source[1].{typo}"),
                    &format!("did you mean `{want}`"),
                )
                .err(),
            );
        }
        for (kind, body, key) in [
            (
                "toroid",
                "major_radius = \"20 mm\"\nturns = 10\n",
                "minor_radius",
            ),
            (
                "toroid",
                "minor_radius = \"5 mm\"\nturns = 10\n",
                "major_radius",
            ),
            (
                "spiral",
                "inner_radius = \"2 mm\"\nturns = 4\n",
                "outer_radius",
            ),
            (
                "spiral",
                "outer_radius = \"9 mm\"\nturns = 4\n",
                "inner_radius",
            ),
            ("helix", "radius = \"8 mm\"\nturns = 4\n", "length"),
            (
                "saddle",
                "radius = \"8 mm\"\nlength = \"20 mm\"\nturns = 4\n",
                "opening",
            ),
            ("pair", "length = \"1 m\"\n", "separation"),
            ("file", "", "path"),
        ] {
            let t = kind_scene(kind, body);
            fails.extend(
                check_bad(
                    &format!("{kind}-no-{key}.toml"),
                    &t,
                    (1, 1),
                    &format!("source[1].{key}"),
                    &format!("missing key `{key}`"),
                )
                .err(),
            );
        }
        assert!(
            fails.is_empty(),
            "{} failing cases:\n{}",
            fails.len(),
            fails.join("\n")
        );
    }

    #[test]
    fn windings_whose_turns_would_overlap_are_refused() {
        // Pitch smaller than the wire diameter (default wire radius 0.1 mm, so 0.2 mm): 40
        // turns on 5 mm of helix is 0.125 mm per turn.
        let t = helix_scene("radius = \"8 mm\"\nlength = \"5 mm\"\nturns = 40\n");
        assert_bad(
            "helix-overlap.toml",
            &t,
            value_of(&t, "length = \"5 mm\""),
            "source[1].length",
            "overlap",
        );
        // The same turns pass with a thinner wire: 2 × 0.05 mm < 0.125 mm.
        let ok = write(
            "helix-thin.toml",
            &helix_scene(
                "radius = \"8 mm\"\nlength = \"5 mm\"\nturns = 40\nwire_radius = \"0.05 mm\"\n",
            ),
        );
        assert_eq!(run(&["check", ok.to_str().unwrap()]).status.code(), Some(0));
        // A spiral whose radial pitch (3 mm − 1 mm)/20 = 0.1 mm is below the wire diameter.
        let t = kind_scene(
            "spiral",
            "inner_radius = \"1 mm\"\nouter_radius = \"3 mm\"\nturns = 20\n",
        );
        assert_bad(
            "spiral-overlap.toml",
            &t,
            value_of(&t, "outer_radius = \"3 mm\""),
            "source[1].outer_radius",
            "overlap",
        );
        // A toroid whose turns cannot fit on the inside of the core: 400 turns on the inner
        // circumference 2π(10 mm − 4 mm) = 37.7 mm is 0.094 mm per turn, below the 0.2 mm
        // wire diameter (same rule as the helix and spiral; expected at `turns`).
        let t = kind_scene(
            "toroid",
            "major_radius = \"10 mm\"\nminor_radius = \"4 mm\"\nturns = 400\n",
        );
        assert_bad(
            "toroid-overlap.toml",
            &t,
            value_of(&t, "turns = 400"),
            "source[1].turns",
            "overlap",
        );
    }

    #[test]
    fn file_source_rows_and_paths_are_located_in_their_own_files() {
        // A bad row is reported at the CSV's own file, line and column.
        let dir = scratch().join("file-kind");
        std::fs::create_dir_all(dir.join("paths")).unwrap();
        let csv = dir.join("paths/bad.csv");
        std::fs::write(
            &csv,
            "x_mm,y_mm,z_mm\n-10,-10,0\n10,ten,0\n10,10,0\n-10,-10,0\n",
        )
        .unwrap();
        let scene_text = "[[source]]\nid = \"drawn\"\nkind = \"file\"\npath = \"paths/bad.csv\"\n\
                          current = { peak = 1, frequency = 1000 }\n";
        let scene = dir.join("bad-row.toml");
        std::fs::write(&scene, scene_text).unwrap();
        let out = run(&["check", scene.to_str().unwrap()]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{err}");
        assert!(out.stdout.is_empty());
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
        let (line, col) = locate(&std::fs::read_to_string(&csv).unwrap(), "ten", 0);
        assert!(
            err.starts_with(&format!("{}:{line}:{col}:", csv.display())),
            "expected {}:{line}:{col}:, got {err}",
            csv.display()
        );
        assert!(err.contains("\"ten\" is not a number"), "{err}");

        // A row with two values, and a repeated point (a zero-length segment).
        for (name, body, bad_line) in [
            ("short.csv", "x,y,z\n0,0,0\n0.01,0\n", 3),
            (
                "repeat.csv",
                "x,y,z\n0,0,0\n0.01,0,0\n0.01,0,0\n0,0.01,0\n",
                4,
            ),
        ] {
            std::fs::write(dir.join("paths").join(name), body).unwrap();
            let scene = dir.join(format!("{name}.toml"));
            std::fs::write(&scene, scene_text.replace("bad.csv", name)).unwrap();
            let out = run(&["check", scene.to_str().unwrap()]);
            let err = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{name}: {err}");
            let csv = dir.join("paths").join(name);
            assert!(
                err.starts_with(&format!("{}:{bad_line}:", csv.display())),
                "{name}: {err}"
            );
        }

        // A missing CSV is reported at the scene's `path` key.
        let missing = scene_text.replace("bad.csv", "nowhere.csv");
        let scene = dir.join("missing.toml");
        std::fs::write(&scene, &missing).unwrap();
        let out = run(&["check", scene.to_str().unwrap()]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{err}");
        let (line, col) = value_of(&missing, "path = \"paths/nowhere.csv\"");
        assert!(
            err.starts_with(&format!(
                "{}:{line}:{col}: source[1].path:",
                scene.display()
            )),
            "{err}"
        );
        assert!(err.contains("nowhere.csv"), "{err}");
    }

    #[test]
    fn bad_calibrate_tables_are_located() {
        let base = "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = \"8 mm\"\n\
                    current = { waveform = \"sine\", frequency = \"50 Hz\" }\n";
        let on_wire = format!("{base}calibrate = {{ at = [\"8 mm\", 0, 0], field = \"12 uT\" }}\n");
        assert_bad(
            "cal-wire.toml",
            &on_wire,
            value_of(&on_wire, "at = ["),
            "source[1].calibrate.at",
            "lies on the source's conductor",
        );
        let unit = format!("{base}calibrate = {{ at = [\"20 mm\", 0, 0], field = \"12 mA\" }}\n");
        assert_bad(
            "cal-unit.toml",
            &unit,
            value_of(&unit, "field = \"12 mA\""),
            "source[1].calibrate.field",
            "current",
        );
        let typo = format!("{base}calibrate = {{ at = [\"20 mm\", 0, 0], feild = \"12 uT\" }}\n");
        assert_bad(
            "cal-typo.toml",
            &typo,
            locate(&typo, "feild", 0),
            "source[1].calibrate.feild",
            "did you mean `field`",
        );
        let missing = format!("{base}calibrate = {{ at = [\"20 mm\", 0, 0] }}\n");
        assert_bad(
            "cal-missing.toml",
            &missing,
            value_of(&missing, "calibrate = {"),
            "source[1].calibrate.field",
            "missing key `field`",
        );
        // Without calibrate a waveform needs its amplitude.
        let no_amp = base.to_string();
        assert_bad(
            "cal-noamp.toml",
            &no_amp,
            value_of(&no_amp, "current = {"),
            "source[1].current",
            "peak",
        );
    }
}
