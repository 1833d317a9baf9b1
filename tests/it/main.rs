//! Integration tests: run the built `postassay` binary as a user would and
//! check its outputs, messages and exit codes. One module per command.

mod architecture;
mod cache;
mod chains;
mod ci_recipe;
mod errors;
mod explain;
mod faults;
mod fetch;
mod gate;
mod hostile;
mod html;
mod input_errors;
mod judge;
mod kills;
mod pool;
mod properties;
mod routing;
mod run;
mod run_vet;
mod score;
#[path = "../../src/test_skips.rs"]
mod test_skips;
mod tokens;
mod util;
mod vet;
