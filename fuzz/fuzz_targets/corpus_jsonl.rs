//! Fuzz the corpus reader in its JSON Lines layout (the input is made to
//! start with `{`, which selects it).
#![no_main]
use libfuzzer_sys::fuzz_target;
use postassay_fuzz::{check_error, input_file};

fuzz_target!(|data: &[u8]| {
    let path = input_file("posts.jsonl", b"{", data);
    check_error(&postassay::input::read_corpus(&path));
});
