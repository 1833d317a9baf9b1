//! Fuzz the judgment reader in its CSV layout (a header naming
//! `query_id` is put first unless the input starts with `#`, which then
//! brings its own first line).
#![no_main]
use libfuzzer_sys::fuzz_target;
use postassay_fuzz::{check_error, input_file};

fuzz_target!(|data: &[u8]| {
    let (prefix, rest): (&[u8], &[u8]) = match data.split_first() {
        Some((b'#', rest)) => (b"query_id", rest),
        _ => (b"query_id,doc_id,grade\n", data),
    };
    let path = input_file("qrels.csv", prefix, rest);
    check_error(&postassay::input::read_judgments(&path));
});
