//! postassay: a bench that tells a search engineer which text-analysis chain
//! to give a field of short multilingual posts.
//!
//! Data flow (each module depends only on the ones before it):
//! `input` → `analysis` → `index` → `search` → `eval` → `stats` → `report`,
//! with `bench` orchestrating a whole run, `diagnose`, `gate`, `pool` and
//! `judge` beside it, and the binary's `cli` on top. `bench`, `diagnose` and
//! `gate` fill the report model (`report::model`); `report` renders what it
//! is handed and imports none of them; `output` writes the files.
//! `fetch` sits beside `input`: it makes runs from a live search endpoint,
//! standing in for `analysis` … `search`.
#![deny(missing_docs)]

pub mod error;
pub mod fetch;
pub mod ids;
pub mod input;
pub mod plural;
pub mod progress;

pub use error::{Error, ErrorKind, Result};
pub mod analysis;
pub mod bench;
pub mod diagnose;
pub mod eval;
pub mod gate;
pub mod index;
pub mod judge;
pub mod output;
mod parallel;
pub mod pause;
pub mod pool;
pub mod report;
pub mod search;
pub mod stats;
#[cfg(test)]
mod test_skips;
