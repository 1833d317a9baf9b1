//! postassay: a bench that tells a search engineer which text-analysis chain
//! to give a field of short multilingual posts.
//!
//! Data flow (each module depends only on the ones before it):
//! `input` → `analysis` → `index` → `search` → `eval` → `stats` → `report`,
//! with `bench` orchestrating a whole run and the binary's `cli` on top.
#![deny(missing_docs)]

pub mod error;
pub mod ids;
pub mod input;
pub mod plural;

pub use error::{Error, ErrorKind, Result};
pub mod analysis;
pub mod bench;
pub mod diagnose;
pub mod eval;
pub mod gate;
pub mod index;
pub mod judge;
pub mod pause;
pub mod pool;
pub mod report;
pub mod search;
pub mod stats;
#[cfg(test)]
mod test_skips;
