//! The library's error type, shaped like the csv crate's: a boxed kind so the
//! error is cheap to move, with every input variant carrying the file and the
//! physical, 1-based line so the message can say where the problem is.
//!
//! `Display` prints `path:line: message` (or `path: message` when no line
//! applies); the CLI prefixes the program name and maps every error to exit
//! code 2.
//!
//! `Display` is the whole message, the operating system's text of an I/O
//! error included, so [`Error`] reports no `source()`: the CLI prints errors
//! with their source chain (`{:#}`), and a source would repeat that text
//! ("No such file or directory (os error 2)" twice). The underlying
//! `std::io::Error` stays reachable through [`Error::io_error`].

use std::fmt;
use std::path::{Path, PathBuf};

/// A specialised `Result` for postassay's library.
pub type Result<T> = std::result::Result<T, Error>;

/// Maximum number of bad lines listed for one file before the rest are
/// summarised as a count (STYLE.md: validate a whole file, list every bad
/// line, capped).
pub const MAX_LISTED_PROBLEMS: usize = 20;

/// An error of postassay's library.
#[derive(Debug)]
pub struct Error(Box<ErrorKind>);

/// One problem at one place of an input file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    /// Physical 1-based line number (a header is line 1), when one applies.
    pub line: Option<u64>,
    /// What was expected and what was found.
    pub message: String,
}

/// The kinds of error.
#[derive(Debug)]
#[non_exhaustive]
pub enum ErrorKind {
    /// One or more problems in an input file (bad values, bad layout, duplicates).
    Input {
        /// The file that holds the problems.
        path: PathBuf,
        /// Problems in file order, at most [`MAX_LISTED_PROBLEMS`].
        problems: Vec<Problem>,
        /// How many further problems were found but not listed.
        more: usize,
    },
    /// An I/O error reading or writing a path.
    Io {
        /// The path being read or written.
        path: PathBuf,
        /// The underlying error.
        err: std::io::Error,
    },
    /// A bad combination of settings or flags (not tied to a file).
    Usage(String),
    /// A chain or analysis definition that cannot be built.
    Chain(String),
    /// An error reported by the search engine library.
    Index(String),
    /// A search endpoint that failed or answered unexpectedly (`fetch`).
    Remote(String),
}

impl Error {
    /// Build an error from its kind.
    pub fn new(kind: ErrorKind) -> Error {
        Error(Box::new(kind))
    }

    /// The kind of this error.
    pub fn kind(&self) -> &ErrorKind {
        &self.0
    }

    /// The underlying I/O error of an [`ErrorKind::Io`], if this is one
    /// (for callers that act on its kind, such as a broken pipe).
    pub fn io_error(&self) -> Option<&std::io::Error> {
        match &*self.0 {
            ErrorKind::Io { err, .. } => Some(err),
            _ => None,
        }
    }

    /// One problem at one line of a file.
    pub fn at_line(path: &Path, line: u64, message: impl Into<String>) -> Error {
        Error::new(ErrorKind::Input {
            path: path.to_path_buf(),
            problems: vec![Problem { line: Some(line), message: message.into() }],
            more: 0,
        })
    }

    /// One problem with a whole file (no line applies).
    pub fn in_file(path: &Path, message: impl Into<String>) -> Error {
        Error::new(ErrorKind::Input {
            path: path.to_path_buf(),
            problems: vec![Problem { line: None, message: message.into() }],
            more: 0,
        })
    }

    /// An I/O error on a path.
    pub fn io(path: &Path, err: std::io::Error) -> Error {
        Error::new(ErrorKind::Io { path: path.to_path_buf(), err })
    }

    /// A usage error.
    pub fn usage(message: impl Into<String>) -> Error {
        Error::new(ErrorKind::Usage(message.into()))
    }

    /// A chain definition error.
    pub fn chain(message: impl Into<String>) -> Error {
        Error::new(ErrorKind::Chain(message.into()))
    }

    /// A search-engine error.
    pub fn index(message: impl Into<String>) -> Error {
        Error::new(ErrorKind::Index(message.into()))
    }

    /// A search endpoint's failure or unexpected answer.
    pub fn remote(message: impl Into<String>) -> Error {
        Error::new(ErrorKind::Remote(message.into()))
    }
}

/// Collects the problems of one input file, keeping the first
/// [`MAX_LISTED_PROBLEMS`] and counting the rest, so a reader can validate a
/// whole file and report every bad line at once.
#[derive(Debug)]
pub struct Problems {
    path: PathBuf,
    listed: Vec<Problem>,
    more: usize,
}

impl Problems {
    /// Start collecting problems for `path`.
    pub fn new(path: &Path) -> Problems {
        Problems { path: path.to_path_buf(), listed: Vec::new(), more: 0 }
    }

    /// Record a problem at a line.
    pub fn push(&mut self, line: u64, message: impl Into<String>) {
        self.push_problem(Problem { line: Some(line), message: message.into() });
    }

    /// Record a problem that concerns the whole file.
    pub fn push_file(&mut self, message: impl Into<String>) {
        self.push_problem(Problem { line: None, message: message.into() });
    }

    fn push_problem(&mut self, p: Problem) {
        if self.listed.len() < MAX_LISTED_PROBLEMS {
            self.listed.push(p);
        } else {
            self.more += 1;
        }
    }

    /// True when no problem was recorded.
    pub fn is_empty(&self) -> bool {
        self.listed.is_empty()
    }

    /// `Ok(value)` when no problem was recorded, else the collected error.
    pub fn finish<T>(self, value: T) -> Result<T> {
        if self.listed.is_empty() {
            Ok(value)
        } else {
            Err(Error::new(ErrorKind::Input {
                path: self.path,
                problems: self.listed,
                more: self.more,
            }))
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &*self.0 {
            ErrorKind::Input { path, problems, more } => {
                for (i, p) in problems.iter().enumerate() {
                    if i > 0 {
                        writeln!(f)?;
                    }
                    match p.line {
                        Some(line) => write!(f, "{}:{}: {}", path.display(), line, p.message)?,
                        None => write!(f, "{}: {}", path.display(), p.message)?,
                    }
                }
                if *more > 0 {
                    write!(f, "\n{}: … and {} more problems", path.display(), more)?;
                }
                Ok(())
            }
            ErrorKind::Io { path, err } => write!(f, "{}: {}", path.display(), err),
            ErrorKind::Usage(m) => write!(f, "{m}"),
            ErrorKind::Chain(m) => write!(f, "{m}"),
            ErrorKind::Index(m) => write!(f, "search engine: {m}"),
            ErrorKind::Remote(m) => write!(f, "{m}"),
        }
    }
}

/// No `source()`: `Display` already ends with the I/O error's own text (see
/// the module docs), and printing both would say it twice.
impl std::error::Error for Error {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn problems_are_capped_and_counted() {
        let mut p = Problems::new(Path::new("q.csv"));
        for i in 0..25 {
            p.push(i + 2, "bad");
        }
        let err = p.finish(()).unwrap_err();
        let text = err.to_string();
        assert_eq!(text.lines().count(), MAX_LISTED_PROBLEMS + 1);
        assert!(text.starts_with("q.csv:2: bad"));
        assert!(text.ends_with("… and 5 more problems"));
    }

    #[test]
    fn io_error_says_the_os_text_once_with_its_source_chain() {
        let os = std::io::Error::new(std::io::ErrorKind::NotFound, "no such file");
        let err = Error::io(Path::new("q.csv"), os);
        assert_eq!(err.to_string(), "q.csv: no such file");
        // The CLI prints the message and then its source chain: no source,
        // so the OS text appears once.
        assert!(std::error::Error::source(&err).is_none());
        let err = Error::io(Path::new("q.csv"), std::io::ErrorKind::BrokenPipe.into());
        assert_eq!(err.io_error().map(std::io::Error::kind), Some(std::io::ErrorKind::BrokenPipe));
        assert!(Error::usage("x").io_error().is_none());
    }
}
