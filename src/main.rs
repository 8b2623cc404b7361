//! The `strayflux` command: parse flags, run a command from the library, print, and set
//! the exit status (0 done, 1 failure, 2 bad input, 3 over the limit with --strict, 130
//! interrupted by Ctrl-C).

use clap::{Parser, Subcommand};
use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;
use strayflux::app;
use strayflux::app::CAUTIONS;

/// Magnetic coupling from a source (transformer, inductor, coil, cable pair) into a
/// victim loop: mutual inductance and induced EMF at every spectral line.
#[derive(Parser)]
#[command(name = "strayflux", version, about, after_help = CAUTIONS)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Parse and validate a scene; summarise every source, victim and spectral line.
    #[command(after_help = CAUTIONS)]
    Check {
        /// Scene file (TOML).
        scene: PathBuf,
        /// Print one JSON document instead of the summary.
        #[arg(long)]
        json: bool,
    },
    /// Mutual inductance and induced EMF of every source in every victim, with totals,
    /// limits and margins.
    #[command(after_help = CAUTIONS)]
    Couple {
        /// Scene file (TOML).
        scene: PathBuf,
        /// Print one JSON document instead of the tables.
        #[arg(long)]
        json: bool,
        /// Exit with status 3 when any victim exceeds its limit.
        #[arg(long)]
        strict: bool,
        /// Also write each victim's EMF spectrum as DIR/<victim>-spectrum.svg.
        #[arg(long, value_name = "DIR")]
        plot: Option<PathBuf>,
    },
    /// Write field maps for ParaView: DIR/<id>.vti per map (one per line and a .pvd
    /// with line = "all"), DIR/scene.vtp with the conductors and victims, and a
    /// quick-look DIR/<id>.svg for plane maps.
    #[command(after_help = CAUTIONS)]
    Map {
        /// Scene file (TOML).
        scene: PathBuf,
        /// Write only the map with this id.
        #[arg(long, value_name = "ID")]
        only: Option<String>,
        /// Folder for the output files (created if missing).
        #[arg(long, value_name = "DIR", default_value = "out")]
        out: PathBuf,
        /// Refuse maps whose estimated memory exceeds this ("4 GiB", "500 MB", bytes);
        /// default: half the machine's memory.
        #[arg(long, value_name = "SIZE")]
        max_memory: Option<String>,
        /// Sum every field directly over all segments; by default the field far from a
        /// large source (64 segments or more) comes from its multipole expansion where
        /// that is proven within the tolerance and cheaper.
        #[arg(long)]
        exact: bool,
    },
    /// Run the scene's sweeps (distance, angle, frequency): write DIR/<id>.csv and
    /// DIR/<id>.svg and print the safe distance.
    #[command(after_help = CAUTIONS)]
    Sweep {
        /// Scene file (TOML).
        scene: PathBuf,
        /// Run only the sweep with this id.
        #[arg(long, value_name = "ID")]
        only: Option<String>,
        /// Folder for the CSV and SVG files (created if missing).
        #[arg(long, value_name = "DIR", default_value = "out")]
        out: PathBuf,
        /// Print one JSON document instead of the summary.
        #[arg(long)]
        json: bool,
        /// Sum every flux directly over all segments; by default a victim placed far
        /// from a large source (64 segments or more) takes its flux from the source's
        /// multipole expansion where that is proven within the tolerance and cheaper.
        #[arg(long)]
        exact: bool,
    },
    /// Write DIR/report.html: one self-contained page for a design review (the scene
    /// drawn, every victim's margin, lines and spectrum, every sweep, shield options,
    /// warnings and cautions), ready to open in a browser or print on A4. The date is
    /// today's (UTC), or SOURCE_DATE_EPOCH (seconds since 1970) when that is set.
    #[command(after_help = CAUTIONS)]
    Report {
        /// Scene file (TOML).
        scene: PathBuf,
        /// Folder for report.html (created if missing).
        #[arg(long, value_name = "DIR", default_value = "out")]
        out: PathBuf,
    },
    /// The built-in shield materials: conductivity, relative permeability and skin
    /// depth, with the source of each value.
    #[command(after_help = CAUTIONS)]
    Materials {
        /// Give the skin depth at this frequency ("60 Hz", "1 MHz"; a bare number is in
        /// Hz); default: at 50 Hz, 1 kHz, 100 kHz and 1 MHz.
        #[arg(long, value_name = "F", allow_hyphen_values = true)]
        frequency: Option<String>,
        /// Print one JSON document instead of the table (the skin depth only with
        /// --frequency).
        #[arg(long)]
        json: bool,
    },
    /// The B phasor of every spectral line at given points.
    #[command(after_help = CAUTIONS)]
    Probe {
        /// Scene file (TOML).
        scene: PathBuf,
        /// A point X,Y,Z in metres, or with one unit after the last number: "10,0,5 mm".
        /// Repeat for more points.
        #[arg(long, value_name = "X,Y,Z", allow_hyphen_values = true)]
        at: Vec<String>,
        /// A CSV of points, one x,y,z per row; a header such as x_mm,y_mm,z_mm sets the
        /// unit (metres otherwise).
        #[arg(long, value_name = "FILE.csv")]
        points: Option<PathBuf>,
        /// Print one JSON document instead of the tables.
        #[arg(long)]
        json: bool,

        /// Sum every field directly over all segments; by default the field far from a
        /// large source (64 segments or more) comes from its multipole expansion where
        /// that is proven within the tolerance and cheaper.
        #[arg(long)]
        exact: bool,
    },
}

fn run_map(
    scene: &std::path::Path,
    only: Option<&str>,
    out: &std::path::Path,
    max_memory: Option<&str>,
    exact: bool,
) -> Result<app::Outcome, strayflux::Error> {
    let limit = match max_memory {
        Some(text) => strayflux::run::map::parse_memory(text).ok_or_else(|| {
            strayflux::Error::Usage(format!(
                "--max-memory \"{text}\": expected a size such as \"4 GiB\" or \"500 MB\""
            ))
        })?,
        None => strayflux::run::map::default_memory_limit(),
    };
    with_progress(|progress| app::map(scene, only, out, limit, exact, progress))
}

/// Runs `work` with a progress callback `(done, total)` that drives a bar on stderr
/// when stderr is a terminal; the bar is cleared afterwards.
fn with_progress<T>(work: impl FnOnce(&(dyn Fn(usize, usize) + Sync)) -> T) -> T {
    let bar = progress_bar();
    let result = work(&|done, total| {
        if let Some(b) = &bar {
            b.set_length(total as u64);
            b.set_position(done as u64);
        }
    });
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    result
}

/// A progress bar on stderr when stderr is a terminal; none otherwise.
fn progress_bar() -> Option<indicatif::ProgressBar> {
    use std::io::IsTerminal;
    if !std::io::stderr().is_terminal() {
        return None;
    }
    let bar = indicatif::ProgressBar::new(0);
    let style = indicatif::ProgressStyle::with_template(
        "{spinner} {wide_bar} {pos}/{len}, {elapsed} elapsed, about {eta} left",
    )
    .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar());
    bar.set_style(style);
    // Keep the spinner and the elapsed time moving through long single steps (a
    // shielded solve, the orientation search after a sweep's steps).
    bar.enable_steady_tick(std::time::Duration::from_millis(250));
    Some(bar)
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    if let Ok(value) = std::env::var("STRAYFLUX_SIMD")
        && strayflux::field::Simd::from_name(&value).is_none()
    {
        eprintln!(
            "strayflux: STRAYFLUX_SIMD={value:?}: expected one of {} (or leave it unset)",
            strayflux::field::Simd::NAMES.join(", ")
        );
        return ExitCode::from(2);
    }
    // Ctrl-C: drop any half-written temporary file (final names hold either the earlier
    // result or a complete new one) and stop with the conventional status 130.
    let _ = ctrlc::set_handler(|| {
        strayflux::output::files::remove_pending();
        eprintln!("strayflux: interrupted; no partial output was left under a final name");
        std::process::exit(130);
    });
    finish(dispatch(&cli.command))
}

/// Runs one command.
fn dispatch(command: &Command) -> Result<app::Outcome, strayflux::Error> {
    match command {
        Command::Check { scene, json } => app::check(scene, *json),
        Command::Couple {
            scene,
            json,
            strict,
            plot,
        } => {
            with_progress(|progress| app::couple(scene, *json, *strict, plot.as_deref(), progress))
        }
        Command::Map {
            scene,
            only,
            out,
            max_memory,
            exact,
        } => run_map(scene, only.as_deref(), out, max_memory.as_deref(), *exact),
        Command::Sweep {
            scene,
            only,
            out,
            json,
            exact,
        } => with_progress(|progress| {
            app::sweep(scene, only.as_deref(), out, *json, *exact, progress)
        }),
        Command::Probe {
            scene,
            at,
            points,
            json,
            exact,
        } => app::probe_points(scene, at, points.as_deref(), *json, *exact),
        Command::Report { scene, out } => {
            with_progress(|progress| app::report(scene, out, progress))
        }
        Command::Materials { frequency, json } => app::materials(frequency.as_deref(), *json),
    }
}

/// Prints a command's warnings and output, or its error, and gives the exit status.
fn finish(result: Result<app::Outcome, strayflux::Error>) -> ExitCode {
    match result {
        Ok(outcome) => {
            for w in &outcome.warnings {
                eprintln!("warning: {w}");
            }
            let mut out = std::io::stdout().lock();
            if out.write_all(outcome.stdout.as_bytes()).is_err() || out.flush().is_err() {
                return ExitCode::from(1);
            }
            ExitCode::from(outcome.exit as u8)
        }
        Err(e) => {
            match &e {
                strayflux::Error::Input(_) => eprintln!("{e}"),
                _ => eprintln!("strayflux: {e}"),
            }
            ExitCode::from(e.exit_code() as u8)
        }
    }
}
