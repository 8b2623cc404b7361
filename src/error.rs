//! Errors: bad input and placements the models cannot solve (exit status 2), and
//! everything else (exit status 1). [`Error::exit_code`] is the one place that maps them to statuses.

use std::fmt;

/// A problem with the user's input, located in a file. Displays as one line:
/// `FILE:LINE:COL: key: reason`.
#[derive(Clone, Debug, PartialEq)]
pub struct InputError {
    /// The file as the user named it (or `<command line>` for arguments).
    pub file: String,
    /// One-based line.
    pub line: usize,
    /// One-based column, in characters.
    pub col: usize,
    /// Dotted key path (`source[2].radius`), empty for the file as a whole.
    pub key: String,
    /// What is wrong and, where we can tell, how to fix it.
    pub reason: String,
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // One line whatever the input held: line breaks in the reason become spaces,
        // other control characters (a quoted key may hold them) are shown escaped.
        let one_line = |s: &str| -> String {
            s.replace('\n', " ")
                .chars()
                .flat_map(|c| {
                    if c.is_control() {
                        c.escape_debug().collect::<Vec<_>>()
                    } else {
                        vec![c]
                    }
                })
                .collect()
        };
        let reason = one_line(&self.reason);
        if self.key.is_empty() {
            write!(f, "{}:{}:{}: {}", self.file, self.line, self.col, reason)
        } else {
            let key = self
                .key
                .chars()
                .flat_map(|c| c.escape_debug())
                .collect::<String>();
            let key = if self.key.chars().any(char::is_control) {
                key
            } else {
                self.key.clone()
            };
            write!(
                f,
                "{}:{}:{}: {}: {}",
                self.file, self.line, self.col, key, reason
            )
        }
    }
}

impl std::error::Error for InputError {}

/// Any failure of a command.
#[derive(Debug)]
pub enum Error {
    /// Bad scene or arguments: exit status 2.
    Input(InputError),
    /// A bad command-line argument that has no file location: exit status 2.
    Usage(String),
    /// A placement the scene asks for that the models cannot solve (a sheet cutting a
    /// victim at some sweep step): exit status 2, since the fix is in the scene.
    Solve(SolveError),
    /// Anything else (I/O, a result the solver could not reach): exit status 1.
    Run(String),
}

/// Why a solve could not finish. The scene was valid, but this placement (often one
/// step of a sweep or one tilt of an orientation search) is outside what the shield
/// model can compute.
#[derive(Clone, Debug, PartialEq)]
pub enum SolveError {
    /// A source or victim straddles, touches or lies inside a shield sheet, or the
    /// sheet's spectral plan cannot meet the tolerance for this placement.
    Shield(String),
    /// A sweep's design option (`compare`) cannot be fitted alone.
    Alternative(String),
    /// A sum of EMF lines that does not converge (a waveform with an ideal edge) was
    /// asked for where no result can stand without it (a sweep of totals).
    Diverges(String),
}

impl fmt::Display for SolveError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SolveError::Shield(m) | SolveError::Alternative(m) | SolveError::Diverges(m) => {
                f.write_str(m)
            }
        }
    }
}

impl std::error::Error for SolveError {}

impl From<SolveError> for Error {
    fn from(e: SolveError) -> Self {
        Error::Solve(e)
    }
}

impl Error {
    /// The process exit status for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_) | Error::Usage(_) | Error::Solve(_) => 2,
            Error::Run(_) => 1,
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Input(e) => e.fmt(f),
            Error::Solve(e) => e.fmt(f),
            Error::Usage(m) | Error::Run(m) => f.write_str(m),
        }
    }
}

impl std::error::Error for Error {}

impl From<InputError> for Error {
    fn from(e: InputError) -> Self {
        Error::Input(e)
    }
}
