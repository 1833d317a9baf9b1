//! Fuzz the query reader.
#![no_main]
use libfuzzer_sys::fuzz_target;
use postassay_fuzz::{check_error, input_file};

fuzz_target!(|data: &[u8]| {
    let path = input_file("queries.csv", b"", data);
    check_error(&postassay::input::read_queries(&path));
});
