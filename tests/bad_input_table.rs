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
    ]
}

#[test]
fn further_bad_scenes_give_exit_two_and_one_line_at_the_key() {
    let dir = std::env::temp_dir().join(format!("strayflux-located-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for (i, c) in located_cases().into_iter().enumerate() {
        let path = dir.join(format!("case{i}.toml"));
        std::fs::write(&path, &c.scene).unwrap();
        let out = run(&["check", path.to_str().unwrap()]);
        let name = c.name;
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{name}: {err}");
        assert!(out.stdout.is_empty(), "{name}: stdout not empty");
        assert_eq!(err.trim_end().lines().count(), 1, "{name}: {err}");
        assert!(!err.contains("panicked"), "{name}: {err}");
        match c.col {
            Some(col) => {
                let prefix = format!("{}:{}:{col}: {}", path.display(), c.line, c.key);
                assert!(
                    err.starts_with(&prefix),
                    "{name}: expected `{prefix}`, got `{err}`"
                );
            }
            None => {
                let prefix = format!("{}:{}:", path.display(), c.line);
                assert!(
                    err.starts_with(&prefix),
                    "{name}: expected `{prefix}`, got `{err}`"
                );
                assert!(
                    err.contains(&format!(": {}: ", c.key)),
                    "{name}: key {} in `{err}`",
                    c.key
                );
            }
        }
        assert!(
            err.contains(c.words),
            "{name}: expected `{}` in `{err}`",
            c.words
        );
    }
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
