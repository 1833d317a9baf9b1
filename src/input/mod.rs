//! Reading and validating the bench's input files: the corpus of posts, the
//! queries, the graded judgments and ranked runs (layouts in the spec's
//! formats.md). First stage of the data flow: everything downstream works on
//! the validated values defined here and never sees a file.
//!
//! Every reader validates the whole file, lists every bad line (capped, see
//! [`crate::error::Problems`]) and returns one error naming the file and lines.

mod corpus;
mod judgments;
mod lang_code;
mod queries;
mod runs;
mod text;

pub use corpus::{read_corpus, Post};
pub use judgments::{read_judgments, Judgments};
pub use lang_code::LangCode;
pub use queries::{read_queries, Query};
pub use runs::{format_shortest, read_run, write_run, RankedDoc, Run};
