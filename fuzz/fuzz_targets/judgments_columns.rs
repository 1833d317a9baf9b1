//! Fuzz the judgment reader in its four-column layout (a valid first line
//! `q 0 d 1` selects it; the fuzzer writes the lines after it).
#![no_main]
use libfuzzer_sys::fuzz_target;
use postassay_fuzz::{check_error, input_file};

fuzz_target!(|data: &[u8]| {
    let path = input_file("qrels.txt", b"q 0 d 1\n", data);
    check_error(&postassay::input::read_judgments(&path));
});
