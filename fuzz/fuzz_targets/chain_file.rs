//! Fuzz the chain-file parser (TOML, then validation against the
//! built-in chains), and build every chain it accepts.
#![no_main]
use libfuzzer_sys::fuzz_target;
use postassay::analysis::{AnalysisContext, Analyzer};
use postassay_fuzz::{check_error, input_file};

fuzz_target!(|data: &[u8]| {
    let path = input_file("chains.toml", b"", data);
    let file = postassay::analysis::read_chain_file(&path);
    check_error(&file);
    if let Ok(file) = file {
        for chain in &file.chains {
            check_error(&Analyzer::build(chain, &AnalysisContext::default()));
        }
    }
});
