//! `postassay judge`: grade pooled pairs in the terminal, one key per grade.
//! The session logic and the crash-safe appending are the library's
//! (`postassay::judge`); this file is the front end: raw single-key input on
//! a terminal (no Enter needed, no mouse), one key per line when stdin is
//! not a terminal (so sessions can be scripted), and colour only on a
//! terminal without `NO_COLOR`.

use std::io::{BufRead, IsTerminal, Read, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;

use postassay::judge::{script_keys, JudgmentsAppender, Key, Session, Step};
use postassay::pool::read_pool;

use super::common::check_file_flag;

#[derive(Debug, Args)]
pub struct JudgeArgs {
    /// The pool to judge (as `postassay pool` writes it).
    #[arg(long, value_name = "FILE")]
    pool: PathBuf,
    /// The judgments file grades are appended to (created with a header when
    /// missing); pairs it already holds are skipped.
    #[arg(long, value_name = "FILE")]
    judgments: PathBuf,
}

pub fn execute(args: JudgeArgs) -> anyhow::Result<ExitCode> {
    check_file_flag("--pool", &args.pool)?;
    check_file_flag("--judgments", &args.judgments)?;
    let items = read_pool(&args.pool)?;
    let (appender, judged) = JudgmentsAppender::open(&args.judgments)?;
    let mut session = Session::new(items, appender, &judged);
    let mut out = std::io::stdout();
    // https://no-color.org: colour off when NO_COLOR is set and not empty.
    let color = out.is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty());
    writeln!(out, "{}", session.opening())?;
    let stdin = std::io::stdin();
    if stdin.is_terminal() {
        interactive(&mut session, &mut out, color)?;
    } else {
        scripted(&mut session, stdin.lock(), &mut out, color)?;
    }
    writeln!(out, "{}", session.closing())?;
    out.flush()?;
    Ok(ExitCode::SUCCESS)
}

/// One key per line from a pipe or file. A line that is not a key ends the
/// session (the grades before it are saved) with an error naming the line,
/// since a script that goes on after a typo would grade the wrong pairs.
fn scripted(
    session: &mut Session,
    input: impl BufRead,
    out: &mut impl Write,
    color: bool,
) -> anyhow::Result<()> {
    write!(out, "{}", session.render("", color))?;
    out.flush()?;
    for key in script_keys(input) {
        let (_, key) = key?;
        match session.apply(key)? {
            Step::Finished => return Ok(()),
            Step::Continue(note) => {
                write!(out, "{}", session.render(&note, color))?;
                out.flush()?;
            }
        }
    }
    Ok(())
}

/// Single keys from the terminal in raw mode.
fn interactive(session: &mut Session, out: &mut impl Write, color: bool) -> anyhow::Result<()> {
    let _raw = raw::RawMode::enter()?;
    write!(out, "{}", session.render("", color))?;
    out.flush()?;
    let mut stdin = std::io::stdin().lock();
    let mut byte = [0u8; 1];
    let mut escape = Escape::None;
    loop {
        if stdin.read(&mut byte)? == 0 {
            return Ok(());
        }
        let b = byte[0];
        // Swallow escape sequences (arrow and function keys, Alt+key).
        match (escape, b) {
            (Escape::None, 0x1b) => {
                escape = Escape::Started;
                continue;
            }
            (Escape::Started, b'[' | b'O') => {
                escape = Escape::Sequence;
                continue;
            }
            (Escape::Started, _) | (Escape::Sequence, 0x40..=0x7e) => {
                escape = Escape::None;
                continue;
            }
            (Escape::Sequence, _) => continue,
            (Escape::None, _) => {}
        }
        let key = match b {
            // Ctrl-C and Ctrl-D quit rather than kill the session.
            0x03 | 0x04 => Some(Key::Quit),
            b'\r' | b'\n' | b' ' => continue,
            _ => Key::from_char(char::from(b)),
        };
        let note = match key {
            None => format!("unknown key {:?}: press ? for help", char::from(b)),
            Some(key) => match session.apply(key)? {
                Step::Finished => return Ok(()),
                Step::Continue(note) => note,
            },
        };
        write!(out, "\n{}", session.render(&note, color))?;
        out.flush()?;
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Escape {
    None,
    Started,
    Sequence,
}

#[cfg(unix)]
mod raw {
    //! Terminal raw mode through termios: no line buffering, no echo, no
    //! signals from Ctrl-C (read as a key instead), output processing kept.

    use rustix::termios::{self, LocalModes, OptionalActions, SpecialCodeIndex, Termios};

    /// Restores the terminal's settings when dropped.
    pub struct RawMode {
        saved: Termios,
    }

    impl RawMode {
        pub fn enter() -> std::io::Result<RawMode> {
            let stdin = std::io::stdin();
            let saved = termios::tcgetattr(&stdin)?;
            let mut raw = saved.clone();
            raw.local_modes.remove(LocalModes::ICANON | LocalModes::ECHO | LocalModes::ISIG);
            raw.special_codes[SpecialCodeIndex::VMIN] = 1;
            raw.special_codes[SpecialCodeIndex::VTIME] = 0;
            termios::tcsetattr(&stdin, OptionalActions::Now, &raw)?;
            Ok(RawMode { saved })
        }
    }

    impl Drop for RawMode {
        fn drop(&mut self) {
            let _ = termios::tcsetattr(std::io::stdin(), OptionalActions::Now, &self.saved);
        }
    }
}

#[cfg(not(unix))]
mod raw {
    //! No raw mode here: keys are read as typed lines would be, one byte at a
    //! time after Enter.

    pub struct RawMode;

    impl RawMode {
        pub fn enter() -> std::io::Result<RawMode> {
            Ok(RawMode)
        }
    }
}
